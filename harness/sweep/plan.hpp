// The cases a suite expands to (problem × scaling × optimizer), in a fixed order, with an
// upper bound of the work each one can take.
#pragma once
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "stepgate/suite/suite.hpp"

namespace stepgate {

struct PlannedCase {
  std::string id;                  ///< "problem/scaling/optimizer"
  std::size_t problem = 0;         ///< index into Suite::problems
  std::string scaling;             ///< key into Suite::scalings
  std::string optimizer;           ///< key into Suite::optimizers
  double pinned = kMissing;        ///< the pinned rate for this optimizer, NaN = none
  long long max_runs = 0;          ///< upper bound of runs (all seeds)
  double max_iterations = 0;       ///< upper bound of iterations (max_runs × budget)
  double step_cost = 1;            ///< estimated work of one iteration (rows × features, or dim)
};

struct Plan {
  std::vector<PlannedCase> cases;
  long long max_runs() const;
  double max_iterations() const;
};

/// Expands the suite. Order: problems as listed, then their scalings, then optimizers.
Plan make_plan(const Suite& suite);

/// Bytes the runs of one case may hold at once at most: every iteration of every run of the
/// case kept as a trace point until the case ends (max_iterations × 32 bytes).
double max_trace_bytes(const PlannedCase& c);

/// Refuses a plan whose runs could not be held in memory (InputError at the problem's JSON
/// pointer, with the estimate): the `jobs` cases with the largest max_trace_bytes run at once
/// (jobs 0: every core), and their sum must stay within 80% of the smaller of physical memory
/// and the process's address-space limit. A suite of 20,000 fixed rates is found here, at
/// validation, not as an allocation failure in the sweep.
void check_plan_memory(const Suite& suite, const Plan& plan, int jobs);

/// Most shards a suite is split into (--shard K/N, and what merge accepts).
inline constexpr int kMaxShards = 10000;

/// "K/N" with 1 <= K <= N <= kMaxShards, digits only; nullopt for anything else.
std::optional<std::pair<int, int>> parse_shard(std::string_view text);

/// The shard (1..n) of each planned case, in plan order. Deterministic and independent of the
/// order the suite lists things in: cases are taken by estimated cost (max_iterations × the
/// size of a step, largest first; ties by case id) and each goes to the least loaded shard
/// (ties: the lowest number), the longest-processing-time rule. Adding a case moves few others.
std::vector<int> shard_assignment(const Plan& plan, int n);

/// Keeps the cases of shard k of n (1-based k), as shard_assignment says, in plan order.
Plan shard_of(const Plan& plan, int k, int n);

}  // namespace stepgate
