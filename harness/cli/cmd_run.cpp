// stepgate run SUITE [--out DIR] [--jobs N] [--shard K/N] [--quiet]
#include <unistd.h>

#include <iostream>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "stepgate/cli/commands.hpp"
#include "stepgate/cli/gate_output.hpp"
#include "stepgate/cli/options.hpp"
#include "stepgate/cli/progress_line.hpp"
#include "stepgate/core/error.hpp"
#include "stepgate/report/summary_table.hpp"
#include "stepgate/sweep/run_suite.hpp"

namespace stepgate::cli {

std::pair<int, int> parse_shard(const std::string& text) {
  int k = 0, n = 0;
  char slash = 0, rest = 0;
  if (std::sscanf(text.c_str(), "%d%c%d%c", &k, &slash, &n, &rest) != 3 || slash != '/' || n < 1 || k < 1 || k > n)
    throw InputError("--shard", fmt::format("expected K/N with 1 <= K <= N, found '{}'", text));
  return {k, n};
}

int run_command(const Args& args) {
  po::options_description opt("run options");
  opt.add_options()
      ("suite", po::value<std::string>()->required(), "suite file")
      ("out", po::value<std::string>(), "output folder (default reports/out/SUITE-NAME)")
      ("jobs", po::value<int>()->default_value(0), "worker threads (default: all cores); results do not depend on it")
      ("baseline", po::value<std::string>(), "accepted baseline: apply the gate, exit 0 pass / 1 fail")
      ("shard", po::value<std::string>(), "run only shard K of N of the cases (K/N)")
      ("quiet,q", po::bool_switch(), "no progress line and no summary table");
  po::positional_options_description pos;
  pos.add("suite", 1);
  const Parsed p = parse_options(args, opt, pos, "stepgate run SUITE [--out DIR] [--jobs N] [--baseline FILE] [--shard K/N] [--quiet]");
  if (p.help) return kExitPass;
  const int jobs = p.vm["jobs"].as<int>();
  if (jobs < 0) throw InputError("--jobs", fmt::format("expected a number of threads >= 0, found {}", jobs));
  const bool quiet = p.vm["quiet"].as<bool>();

  RunSuiteOptions options;
  options.jobs = jobs;
  if (p.vm.count("out")) options.out_dir = p.vm["out"].as<std::string>();
  if (p.vm.count("baseline")) options.baseline = p.vm["baseline"].as<std::string>();
  if (p.vm.count("shard")) options.shard = parse_shard(p.vm["shard"].as<std::string>());
  ProgressLine line(!quiet && isatty(STDERR_FILENO));
  options.progress = [&](const SweepProgress& s) { line.update(s); };
  const SuiteRun run = run_suite(p.vm["suite"].as<std::string>(), options);
  line.finish();
  if (!quiet) {
    std::cout << summary_table(run.results);
    std::cout << fmt::format("\n{} cases, {} runs; results: {}\nreports: {}\n", run.results.cases.size(), run.runs,
                             run.results_path, fmt::join(run.reports, ", "));
    std::cout << scope_warning(run.results) << "\n";
  }
  if (run.baseline) print_findings(run.gate, run.results);
  if (run.failed_cases > 0) {
    std::cerr << fmt::format("stepgate: failure: {} case(s) could not be run (see the table above)\n", run.failed_cases);
    return kExitToolFailure;
  }
  if (run.baseline) return run.gate.pass ? kExitPass : kExitFail;
  return kExitPass;
}

}  // namespace stepgate::cli
