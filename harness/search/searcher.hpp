// The searcher of one case, shared by the search (search/case_search.cpp) and the check of a
// baseline's boundaries (search/verify.cpp): each seed's runs by rate, batches run or recalled
// through the case's store, and every run held to its seed's best level. Internal to search/.
#pragma once
#include <cstdint>
#include <map>
#include <optional>
#include <vector>

#include "stepgate/analysis/seed_level.hpp"
#include "stepgate/core/lanes.hpp"
#include "stepgate/search/bracket.hpp"
#include "stepgate/search/case_search.hpp"
#include "stepgate/search/verify.hpp"

namespace stepgate::detail {

/// `in` when its settings are valid; std::invalid_argument naming the case otherwise (a library
/// caller's settings get the checks a suite's get).
const CaseSearchInput& checked(const CaseSearchInput& in);

inline bool converged(Outcome o) { return o == Outcome::converged; }
inline bool diverged(Outcome o) { return o == Outcome::diverged; }

// The runs of one seed, found by rate (indices into the searcher's list of runs).
struct SeedRuns {
  std::uint64_t number = 0;
  BatchSeed seed;
  std::map<double, std::size_t> by_rate;
  SeedSummary summary;
  // The best level of the seed's grid and fixed runs (analysis/seed_level), once they are in;
  // every noisy run judged by `settled` is held to it, those and every later one.
  std::optional<BestLevel> best_level;
};

class Searcher {
 public:
  Searcher(const RunBatchFn& runner, const Problem* problem, const CaseSearchInput& in, const BatchDone& done)
      : runner_(runner), problem_(problem), in_(in), done_(done) {
    long index = 0;
    for (std::uint64_t n : in.seeds) {
      SeedRuns s;
      s.number = n;
      s.seed = {run_seed(in.case_id, n), index++, n};
      s.summary.seed = n;
      seeds_.push_back(std::move(s));
    }
  }

  CaseSearchOutput search();                        // search/case_search.cpp
  VerifyOutput verify(const VerifyTargets& targets);  // search/verify.cpp

 private:
  // The kick direction of the probes (once per case), before any run.
  void prepare();
  // Theory, the optimum and the reference comparison (on the first seed's run at
  // `reference_rate`; NaN: none), and the runs, into `out`.
  void finish(CaseSearchOutput& out, double reference_rate);
  const RunRecord* at(const SeedRuns& s, double rate) const {
    auto it = s.by_rate.find(rate);
    return it == s.by_rate.end() ? nullptr : &order_[it->second].record;
  }
  Outcome outcome(std::size_t index) const { return order_[index].record.outcome; }
  // Runs the rates not yet run for this seed as one batch; answers the outcome of each rate.
  std::vector<Outcome> run(SeedRuns& s, const std::vector<double>& rates, RunRole role);
  /// InputError naming the store when a recalled batch is not the batch asked for.
  void check_kept(const std::vector<RunRecord>& kept, const std::vector<double>& todo, const BatchSeed& seed) const;
  Bracket narrow(SeedRuns& s, double lo, double hi, RunRole role, bool (*lower)(Outcome));
  void locate_seed(SeedRuns& s, std::optional<std::size_t> best_grid);
  std::optional<std::size_t> best_grid_index() const;
  void summarise(CaseSearchOutput& out) const;
  void compare_reference(CaseSearchOutput& out, double rate) const;
  void set_best_level(SeedRuns& s);

  const RunBatchFn& runner_;
  const Problem* problem_;  // nullptr: runs come from elsewhere (a command); no theory
  const CaseSearchInput& in_;
  const BatchDone& done_;
  std::vector<SeedRuns> seeds_;
  std::vector<double> grid_;
  std::vector<StoredRun> order_;  // every run in the order made
  // The probes' kick direction: the top eigenvector of the Hessian at the optimum, once per
  // case (where converged runs end); without an optimum each batch finds its own.
  std::optional<Vec> probe_direction_;
};

}  // namespace stepgate::detail
