// The cases a suite expands to (problem × scaling × optimizer), in a fixed order, with an
// upper bound of the work each one can take.
#pragma once
#include <string>
#include <vector>

#include "stepgate/suite/suite.hpp"

namespace stepgate {

struct PlannedCase {
  std::string id;                  ///< "problem/scaling/optimizer"
  std::size_t problem = 0;         ///< index into Suite::problems
  std::string scaling;             ///< key into Suite::scalings
  std::string optimizer;           ///< key into Suite::optimizers
  double pinned = kMissing;        ///< the pinned rate for this optimizer, NaN = none
  int max_runs = 0;                ///< upper bound of runs (all seeds)
  double max_iterations = 0;       ///< upper bound of iterations (max_runs × budget)
};

struct Plan {
  std::vector<PlannedCase> cases;
  int max_runs() const;
  double max_iterations() const;
};

/// Expands the suite. Order: problems as listed, then their scalings, then optimizers.
Plan make_plan(const Suite& suite);

/// Keeps the cases of shard k of n (1-based k): the i-th case (0-based) goes to shard i mod n + 1.
Plan shard_of(const Plan& plan, int k, int n);

}  // namespace stepgate
