// stepgate run SUITE [--out DIR] [--jobs N] [--shard K/N] [--quiet]
#include <unistd.h>

#include <filesystem>
#include <iostream>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "cli/commands.hpp"
#include "cli/gate_output.hpp"
#include "cli/options.hpp"
#include "cli/progress_line.hpp"
#include "core/error.hpp"
#include "report/summary_table.hpp"
#include "suite/suite.hpp"
#include "sweep/sweep.hpp"

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

  const Suite suite = load_suite(p.vm["suite"].as<std::string>());
  // Read the baseline before any run, so that a bad path fails at once, not after the sweep.
  std::optional<Baseline> baseline;
  if (p.vm.count("baseline")) baseline = read_baseline(p.vm["baseline"].as<std::string>());
  Plan plan = make_plan(suite);
  SweepOptions options;
  options.jobs = jobs;
  if (p.vm.count("shard")) {
    const auto [k, n] = parse_shard(p.vm["shard"].as<std::string>());
    plan = shard_of(plan, k, n);
    options.shard = fmt::format("{}/{}", k, n);
  }
  const std::string out_dir = p.vm.count("out") ? p.vm["out"].as<std::string>() : "reports/out/" + suite.name;

  ProgressLine line(!quiet && isatty(STDERR_FILENO));
  const Results results = run_sweep(suite, plan, options, [&](const SweepProgress& s) { line.update(s); });
  line.finish();
  const std::string path = (std::filesystem::path(out_dir) / "results.json").string();
  write_json_atomically(path, to_json(results));
  int failed_cases = 0, runs = 0;
  for (const CaseResult& c : results.cases) failed_cases += c.error.empty() ? 0 : 1, runs += static_cast<int>(c.runs.size());
  const GateReport gate = apply_gate(results, baseline ? &*baseline : nullptr);
  const std::vector<std::string> reports = write_reports(out_dir, results, baseline ? &*baseline : nullptr, gate);
  if (!quiet) {
    std::cout << summary_table(results);
    std::cout << fmt::format("\n{} cases, {} runs; results: {}\nreports: {}\n", results.cases.size(), runs, path,
                             fmt::join(reports, ", "));
    std::cout << scope_warning(results) << "\n";
  }
  if (baseline) print_findings(gate, results);
  if (failed_cases > 0) {
    std::cerr << fmt::format("stepgate: failure: {} case(s) could not be run (see the table above)\n", failed_cases);
    return kExitToolFailure;
  }
  if (baseline) return gate.pass ? kExitPass : kExitFail;
  return kExitPass;
}

}  // namespace stepgate::cli
