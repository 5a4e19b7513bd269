#include "stepgate/sweep/run_suite.hpp"

#include <filesystem>

#include <fmt/format.h>

#include "stepgate/core/error.hpp"
#include "stepgate/core/input_file.hpp"
#include "stepgate/core/interrupt.hpp"
#include "stepgate/core/output_files.hpp"
#include "stepgate/report/reporter.hpp"
#include "stepgate/sweep/journal.hpp"
#include "stepgate/sweep/plan.hpp"

namespace stepgate {

int SuiteRun::verdict_exit_code() const {
  if (failed_cases > 0) return kExitToolFailure;
  return gate.pass ? kExitPass : kExitFail;
}

SuiteRun run_suite(const std::string& suite_path, const RunSuiteOptions& options) {
  if (options.jobs < 0 || options.jobs > kMaxJobs)
    throw InputError("--jobs", fmt::format("expected a number of threads from 0 (all cores) to {}, found {}", kMaxJobs,
                                           options.jobs));
  const CommandInputs inputs;  // no output of this run is written onto a file it reads
  SuiteRun run;
  run.suite = load_suite(suite_path);
  if (!options.baseline.empty()) {
    run.baseline = read_baseline(options.baseline);
    if (run.baseline->suite.name != run.suite.name)  // found now, not after the sweep
      throw InputError(options.baseline + "#/suite/name",
                       fmt::format("is the baseline of the suite '{}', not of '{}'; expected the baseline accepted "
                                   "for this suite", run.baseline->suite.name, run.suite.name));
  }
  Plan plan = make_plan(run.suite);
  check_plan_memory(run.suite, plan, options.jobs);
  SweepOptions sweep;
  sweep.jobs = options.jobs;
  std::vector<std::string> plan_cases;  // a shard records the whole plan's order for merge
  if (options.shard) {
    const auto [k, n] = *options.shard;
    if (n < 1 || k < 1 || k > n)
      throw InputError("--shard", fmt::format("expected K/N with 1 <= K <= N, found {}/{}", k, n));
    std::vector<std::string> all_cases;
    for (const PlannedCase& c : plan.cases) all_cases.push_back(c.id);
    plan = shard_of(plan, k, n);
    plan_cases = std::move(all_cases);
    sweep.shard = fmt::format("{}/{}", k, n);
  }
  // The data sets are read later, in the sweep; remembered now, so that an output linked onto
  // one is refused before any run (output_target), not after the sweep.
  for (const auto& [name, d] : run.suite.datasets) {
    remember_input(d.path);
    remember_input(d.labels_path);
  }
  // The output folder is checked and locked before any work: an unusable --out, or another
  // run writing there, is found now rather than after the sweep.
  const bool default_out = options.out_dir.empty();
  const std::string out_dir = default_out ? "reports/out/" + run.suite.name : options.out_dir;
  const OutputFolder folder(out_dir, default_out ? "the output folder (from the suite name; choose one with --out)"
                                                 : "--out");
  output_target((std::filesystem::path(out_dir) / "results.json").string());  // a folder or fifo there: now
  for (const auto& reporter : all_reporters()) output_target((std::filesystem::path(out_dir) / reporter->file_name()).string());
  const std::string journal_path = (std::filesystem::path(out_dir) / kJournalFile).string();
  Journal journal(journal_path, options.resume);
  if (options.note && options.resume) {
    if (journal.resumed())
      options.note(fmt::format("resuming: {} finished runs in {}", journal.runs_available(), journal_path));
    else
      options.note(fmt::format("nothing to resume: no {} yet; starting from the beginning", journal_path));
  }
  sweep.journal = &journal;
  if (run.baseline && !options.full) sweep.verify_against = &*run.baseline;

  try {
    run.results = run_sweep(run.suite, plan, sweep, options.progress);
  } catch (const Interrupted&) {
    throw SuiteInterrupted{out_dir, journal_path, journal.runs_written() + journal.runs_available()};
  }
  // A registered kind is recorded by its own name (run_sweep writes the enum's word).
  for (std::size_t i = 0; i < run.results.cases.size() && i < plan.cases.size(); ++i)
    run.results.cases[i].problem_kind = problem_kind_name(run.suite.problems[plan.cases[i].problem]);
  run.results.plan_cases = std::move(plan_cases);
  thin_traces(run.results);  // what results.json holds, whether resumed or not

  for (const CaseResult& c : run.results.cases) {
    run.failed_cases += c.error.empty() ? 0 : 1;
    run.runs += static_cast<int>(c.runs.size());
    if (c.verification && !c.verification->verified) run.runs += c.verification->runs;  // probes, then the search
  }
  const Baseline* baseline = run.baseline ? &*run.baseline : nullptr;
  run.gate = apply_gate(run.results, baseline);
  // results.json and the reports as one unit: a full disk or a kill leaves the earlier set.
  run.results_path = (std::filesystem::path(out_dir) / "results.json").string();
  OutputSet outputs(out_dir);
  outputs.stage(run.results_path, json_file_text(to_json(run.results)));
  run.reports = stage_reports(outputs, out_dir, ReportInput{run.results, baseline, run.gate}, all_reporters());
  outputs.commit();
  return run;
}

SuiteRun run_suite(const std::string& suite_path, const std::string& out_dir, int jobs) {
  RunSuiteOptions options;
  options.out_dir = out_dir;
  options.jobs = jobs;
  return run_suite(suite_path, options);
}

}  // namespace stepgate
