#include "stepgate/sweep/run_suite.hpp"

#include <filesystem>

#include <fmt/format.h>

#include "stepgate/core/error.hpp"
#include "stepgate/report/reporter.hpp"
#include "stepgate/sweep/plan.hpp"

namespace stepgate {

int SuiteRun::verdict_exit_code() const {
  if (failed_cases > 0) return kExitToolFailure;
  return gate.pass ? kExitPass : kExitFail;
}

SuiteRun run_suite(const std::string& suite_path, const RunSuiteOptions& options) {
  if (options.jobs < 0)
    throw InputError("jobs", fmt::format("expected a number of threads >= 0, found {}", options.jobs));
  SuiteRun run;
  run.suite = load_suite(suite_path);
  if (!options.baseline.empty()) run.baseline = read_baseline(options.baseline);
  Plan plan = make_plan(run.suite);
  SweepOptions sweep;
  sweep.jobs = options.jobs;
  if (options.shard) {
    const auto [k, n] = *options.shard;
    if (n < 1 || k < 1 || k > n)
      throw InputError("shard", fmt::format("expected K/N with 1 <= K <= N, found {}/{}", k, n));
    plan = shard_of(plan, k, n);
    sweep.shard = fmt::format("{}/{}", k, n);
  }
  const std::string out_dir = options.out_dir.empty() ? "reports/out/" + run.suite.name : options.out_dir;

  run.results = run_sweep(run.suite, plan, sweep, options.progress);
  // A registered kind is recorded by its own name (run_sweep writes the enum's word).
  for (std::size_t i = 0; i < run.results.cases.size() && i < plan.cases.size(); ++i)
    run.results.cases[i].problem_kind = problem_kind_name(run.suite.problems[plan.cases[i].problem]);

  run.results_path = (std::filesystem::path(out_dir) / "results.json").string();
  write_json_atomically(run.results_path, to_json(run.results));
  for (const CaseResult& c : run.results.cases) {
    run.failed_cases += c.error.empty() ? 0 : 1;
    run.runs += static_cast<int>(c.runs.size());
  }
  const Baseline* baseline = run.baseline ? &*run.baseline : nullptr;
  run.gate = apply_gate(run.results, baseline);
  run.reports = write_reports(out_dir, ReportInput{run.results, baseline, run.gate});
  return run;
}

SuiteRun run_suite(const std::string& suite_path, const std::string& out_dir, int jobs) {
  RunSuiteOptions options;
  options.out_dir = out_dir;
  options.jobs = jobs;
  return run_suite(suite_path, options);
}

}  // namespace stepgate
