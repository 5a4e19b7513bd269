// A whole suite the way `stepgate run` does it, for a program that links the library: load and
// check the suite, plan (one shard of it), run every case on a task pool, write
// OUT/results.json, apply the gate (with or without a baseline) and write report.md,
// report.html and junit.xml beside it. The CLI's `run` is this call plus its printing.
//
//   stepgate::register_problem_kind("huber", {"delta"}, true, make_huber);
//   const stepgate::SuiteRun run = stepgate::run_suite("huber.json", "out/huber");
//   std::cout << stepgate::summary_table(run.results, run.gate);
//   return run.verdict_exit_code();
#pragma once
#include <functional>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "stepgate/core/results.hpp"
#include "stepgate/gate/baseline.hpp"
#include "stepgate/gate/findings.hpp"
#include "stepgate/suite/suite.hpp"
#include "stepgate/sweep/sweep.hpp"

namespace stepgate {

struct RunSuiteOptions {
  std::string out_dir;                        ///< "" = reports/out/SUITE-NAME (from the working directory)
  int jobs = 0;                               ///< worker threads; 0 = all cores; results do not depend on it
  std::string baseline;                       ///< an accepted baseline file; "" = none
  /// With a baseline: search every case in full instead of verifying the baseline's boundaries
  /// first (verify mode, search/verify.hpp). Results of a full search can be accepted.
  bool full = false;
  std::optional<std::pair<int, int>> shard;   ///< (K, N): only shard K of N of the cases
  ProgressFn progress;                        ///< called after each batch of runs (any thread, serialised)
  /// Continue from OUT/journal.jsonl: its finished runs are not run again (sweep/journal.hpp).
  /// Without it a journal left in OUT is replaced.
  bool resume = false;
  /// Called with one-line notes before the sweep starts (what resume found); may be empty.
  std::function<void(const std::string&)> note;
};

/// Thrown by run_suite when a stop was requested (Ctrl-C, SIGTERM; core/interrupt.hpp): the
/// journal keeps every finished run and nothing else in the output folder changed. Not a
/// std::exception, like Interrupted.
struct SuiteInterrupted {
  std::string out_dir;       ///< the output folder (resume with --out this --resume)
  std::string journal;       ///< OUT/journal.jsonl
  long runs_kept = 0;        ///< finished runs in the journal
};

struct SuiteRun {
  Suite suite;
  Results results;
  std::optional<Baseline> baseline;  ///< read before any run, so a bad path fails at once
  GateReport gate;                   ///< apply_gate(results, baseline); without one, the baseline-free rules
  std::string results_path;          ///< OUT/results.json
  std::vector<std::string> reports;  ///< the report files written
  int failed_cases = 0;              ///< cases that could not be run (CaseResult::error)
  int runs = 0;                      ///< runs recorded, all cases

  /// 3 when a case could not be run; otherwise 0 when the verdict passes and 1 when it fails.
  /// Without a baseline the verdict has only the rules that need none (pinned headroom,
  /// reference digits, theory); `stepgate run` exits with this code with or without a baseline.
  int verdict_exit_code() const;
};

/// Runs the suite file at `suite_path`. Throws InputError (exit 2) for a bad suite, baseline,
/// shard, data or output folder (all before any run starts; the folder is locked for the whole
/// run), ToolError (exit 3) when an output cannot be written, SuiteInterrupted on a stop.
/// results.json and the reports are committed together (core/output_files.hpp).
/// A failure inside one case is recorded in that case's `error` and counted in failed_cases.
/// Problems of registered kinds (sweep/registry.hpp) are recorded under their own kind name.
SuiteRun run_suite(const std::string& suite_path, const RunSuiteOptions& options = {});

/// The same with an output folder and a number of jobs.
SuiteRun run_suite(const std::string& suite_path, const std::string& out_dir, int jobs = 0);

}  // namespace stepgate
