// stepgate run SUITE [--out DIR] [--jobs N] [--baseline FILE [--full]] [--shard K/N|slurm] [--resume] [--quiet]
#include <signal.h>
#include <unistd.h>

#include <cstdlib>
#include <iostream>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "stepgate/cli/commands.hpp"
#include "stepgate/cli/gate_output.hpp"
#include "stepgate/cli/options.hpp"
#include "stepgate/cli/progress_line.hpp"
#include "stepgate/core/error.hpp"
#include "stepgate/core/interrupt.hpp"
#include "stepgate/core/quote_text.hpp"
#include "stepgate/report/summary_table.hpp"
#include "stepgate/sweep/plan.hpp"
#include "stepgate/sweep/run_suite.hpp"

namespace stepgate::cli {

namespace {

// The first Ctrl-C (or SIGTERM) asks the sweep to stop between batches; a second one ends the
// process at once (the journal is whole either way: it is appended batch by batch).
void on_stop_signal(int sig) {
  if (stop_requested()) {
    ::signal(sig, SIG_DFL);
    ::raise(sig);
    return;
  }
  request_stop();
}

void catch_stop_signals() {
  struct sigaction sa {};
  sa.sa_handler = on_stop_signal;
  sigemptyset(&sa.sa_mask);
  ::sigaction(SIGINT, &sa, nullptr);
  ::sigaction(SIGTERM, &sa, nullptr);
}

std::pair<int, int> shard_from_slurm() {
  const char* id = std::getenv("SLURM_ARRAY_TASK_ID");
  const char* count = std::getenv("SLURM_ARRAY_TASK_COUNT");
  const char* min = std::getenv("SLURM_ARRAY_TASK_MIN");
  if (id == nullptr || count == nullptr)
    throw InputError("--shard slurm", "expected SLURM_ARRAY_TASK_ID and SLURM_ARRAY_TASK_COUNT in the environment "
                                      "(set by sbatch --array); outside a job array give --shard K/N");
  // Whole decimal numbers only: "abc" is not task 0, nor "1x" task 1.
  const auto whole = [](const char* name, const char* v) {
    const std::string s = v;
    if (s.empty() || s.size() > 9 || s.find_first_not_of("0123456789") != std::string::npos)
      throw InputError("--shard slurm", fmt::format("found {}={}; expected a whole number (as sbatch --array sets it)",
                                                    name, quote_text(s, 40)));
    return std::stol(s);
  };
  const long task = whole("SLURM_ARRAY_TASK_ID", id), first = min ? whole("SLURM_ARRAY_TASK_MIN", min) : 0;
  whole("SLURM_ARRAY_TASK_COUNT", count);
  const std::string text = fmt::format("{}/{}", task - first + 1, count);
  const auto kn = stepgate::parse_shard(text);
  if (!kn)
    throw InputError("--shard slurm", fmt::format("the job array gives shard {} (task {} from {} of {}); expected "
                                                  "K/N with 1 <= K <= N <= {}: use --array=0-(N-1)",
                                                  text, id, min ? min : "0", count, kMaxShards));
  return *kn;
}

}  // namespace

std::pair<int, int> parse_shard(const std::string& text) {
  if (text == "slurm") return shard_from_slurm();
  const auto kn = stepgate::parse_shard(text);
  if (!kn)
    throw InputError("--shard", fmt::format("expected K/N with 1 <= K <= N <= {} (or 'slurm'), found '{}'", kMaxShards, text));
  return *kn;
}

int run_command(const Args& args) {
  po::options_description opt("run options");
  opt.add_options()
      ("suite", po::value<std::string>()->required(), "suite file")
      ("out", po::value<std::string>(), "output folder (default reports/out/SUITE-NAME)")
      ("jobs", po::value<int>()->default_value(0), "worker threads (default: all cores); results do not depend on it")
      ("baseline", po::value<std::string>(), "accepted baseline to compare with (without one only the rules that need none apply); exit 0 pass / 1 fail")
      ("shard", po::value<std::string>(),
       "run only shard K of N of the cases (K/N), or 'slurm': K and N from the job array's environment")
      ("full", po::bool_switch(),
       "with --baseline: search every case in full instead of first verifying the baseline's boundaries with a few runs")
      ("resume", po::bool_switch(), "continue from OUT/journal.jsonl: finished runs are not run again")
      ("quiet,q", po::bool_switch(), "no progress line, no summary table and no scope note (why runs failed is still shown)");
  po::positional_options_description pos;
  pos.add("suite", 1);
  const Parsed p = parse_options(
      args, opt, pos, "stepgate run SUITE [--out DIR] [--jobs N] [--baseline FILE [--full]] [--shard K/N|slurm] [--resume] [--quiet]");
  if (p.help) return kExitPass;
  const int jobs = p.vm["jobs"].as<int>();
  if (jobs < 0 || jobs > kMaxJobs)
    throw InputError("--jobs", fmt::format("expected a number of threads from 0 (all cores) to {}, found {}", kMaxJobs, jobs));
  const bool quiet = p.vm["quiet"].as<bool>();
  const std::string suite_path = p.vm["suite"].as<std::string>();

  RunSuiteOptions options;
  options.jobs = jobs;
  if (p.vm.count("out")) {
    options.out_dir = p.vm["out"].as<std::string>();
    if (options.out_dir.empty()) throw InputError("--out", "expected a folder name, found an empty one");
  }
  if (p.vm.count("baseline")) options.baseline = p.vm["baseline"].as<std::string>();
  if (p.vm.count("shard")) options.shard = parse_shard(p.vm["shard"].as<std::string>());
  options.resume = p.vm["resume"].as<bool>();
  options.full = p.vm["full"].as<bool>();
  if (options.full && options.baseline.empty())
    throw InputError("--full", "is only meaningful with --baseline (without one every case is searched in full)");
  options.note = [&](const std::string& text) {
    if (!quiet) std::cerr << "stepgate: " << text << "\n";
  };
  ProgressLine line(!quiet && isatty(STDERR_FILENO));
  options.progress = [&](const SweepProgress& s) { line.update(s); };
  catch_stop_signals();
  SuiteRun run;
  try {
    run = run_suite(suite_path, options);
  } catch (const SuiteInterrupted& stop) {
    line.finish();
    std::cerr << fmt::format("stepgate: stopped: {} finished runs are kept in {}; nothing else was written.\n",
                             stop.runs_kept, visible_line(stop.journal));
    // The hint is pasted into a shell: every word quoted for it.
    const auto suite_word = shell_word(suite_path), out_word = shell_word(stop.out_dir);
    const auto shard_word = options.shard ? shell_word(p.vm["shard"].as<std::string>()) : std::optional<std::string>("");
    if (suite_word && out_word && shard_word)
      std::cerr << fmt::format("  continue with: stepgate run {} --out {} --resume{}\n", *suite_word, *out_word,
                               options.shard ? " --shard " + *shard_word : "");
    else
      std::cerr << "  continue with `stepgate run` on the same suite, --out and --shard, adding --resume (a path "
                   "holds control characters, so no line to paste is shown)\n";
    return kExitInterrupted;
  }
  line.finish();
  if (!quiet) {
    std::cout << summary_table(run.results, run.gate);
    std::cout << fmt::format("\n{} cases, {} runs; results: {}\nreports: {}\n", run.results.cases.size(), run.runs,
                             run.results_path, fmt::join(run.reports, ", "));
    std::cout << scope_warning(run.results) << "\n";
  }
  // Why runs failed, also under --quiet: a trainer that cannot start must be seen at once.
  print_run_failures(run.results);
  // With or without a baseline, the verdict is the gate's: without one, the baseline-free
  // rules decide (exit 1 when one fails), as `check` would.
  if (!quiet || run.baseline || !run.gate.pass) print_findings(run.gate, run.results);
  if (run.failed_cases > 0) {
    std::cerr << fmt::format("stepgate: failure: {} case(s) could not be run (see the table above)\n", run.failed_cases);
    return kExitToolFailure;
  }
  return run.gate.pass ? kExitPass : kExitFail;
}

}  // namespace stepgate::cli
