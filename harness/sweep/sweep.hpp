// Executes a whole suite: loads and scales the data once per (dataset, scaling), builds each
// (problem, scaling) once and shares it between its optimizers, runs the cases on a task pool,
// and assembles the Results in plan order. The results do not depend on the number of jobs.
#pragma once
#include <functional>

#include "stepgate/core/results.hpp"
#include "stepgate/suite/suite.hpp"
#include "stepgate/sweep/plan.hpp"

namespace stepgate {

class Journal;
struct Baseline;

/// Most worker threads accepted (--jobs): far beyond any machine this runs on, and below the
/// task pool's own limits.
inline constexpr int kMaxJobs = 1024;

struct SweepOptions {
  int jobs = 0;  ///< worker threads; 0 = all cores (std::thread::hardware_concurrency)
  std::string shard;  ///< "K/N" recorded in the results when the plan is a shard
  /// Where finished runs are kept and recalled (sweep/journal.hpp); nullptr = no journal.
  /// run_sweep starts it once the data are read (their hashes are part of its identity).
  Journal* journal = nullptr;
  /// Verify mode (search/verify.hpp): each case this baseline holds, with `rates.verify` on, is
  /// first checked with a few probe runs and searched only when a probe (or a gate rule on what
  /// the probes show) disagrees. nullptr: every case is searched.
  const Baseline* verify_against = nullptr;
};

/// Progress after each batch of runs: runs done so far, and cases finished so far.
struct SweepProgress {
  long long runs_done = 0;
  long long max_runs = 0;  ///< the plan's upper bound
  int cases_done = 0;
  int cases = 0;
};
using ProgressFn = std::function<void(const SweepProgress&)>;

/// Runs the plan. Bad input found while loading data (InputError) is thrown before any run
/// starts; a failure inside one case is recorded in that case's `error`. A stop request
/// (core/interrupt.hpp) ends it with Interrupted, the journal holding every finished batch.
Results run_sweep(const Suite& suite, const Plan& plan, const SweepOptions& options = {},
                  const ProgressFn& progress = {});

}  // namespace stepgate
