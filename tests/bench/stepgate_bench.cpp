// stepgate-bench: the sweep engine's speed against the loops practitioners write, on the same
// data in the same invocation, and against the machine's own limit (docs/design.md, "Speed";
// README, "Performance"). Not a test: it prints figures, and targets are judged by reading them.
//
//   stepgate-bench [--json FILE] [--only NAME]... [--quick] [--python PATH]
//
// Workloads (fixed seeds): small (least squares, standardized diabetes data, gd, 30 rates x 5
// seeds, budget 2000), medium (logistic, generated 200,000 x 50, gd and heavy ball, 16 rates,
// 200 iterations), large (softmax on Fashion-MNIST, 60,000 x 784, 10 classes, gd, 8 rates, 50
// iterations), search (suites/reference.json and suites/demo.json as `stepgate run` executes
// them, --jobs 1 and 2), growth (medium at 50k..400k rows, small at 10..300 rates) and gemm
// (dense 2000 x 2000 products on all cores: Eigen as built, and OpenBLAS through numpy).
//
// Whole-process time is the headline: each workload is also written as a suite and run by
// `stepgate run` in its own process (start, suite check, reading or generating and scaling the
// data, the reference optimum, theory, runs, reports), and each peer is timed as its own
// process too (Python's start, imports, loading the data, the loop). The parts are printed
// beside it: stepgate's set-up and runs as measured in this process, the rest by difference.
//
// How the peers are compared: stepgate runs each workload with its real stopping rules
// (confirmed convergence, divergence, budget); each peer then runs the same runs one at a time
// for exactly the iterations stepgate took, computing cost and gradient at every step, and
// reports its final costs. A ratio is printed only when every final cost agrees (relative
// 1e-9, or 1e-6 for diverged runs, whose growth magnifies the rounding of either side).
// For medium and large the peers time a few runs and are scaled by iterations (stated).
#include <fcntl.h>
#include <spawn.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cerrno>
#include <cstdlib>
#include <cstring>
#include <iterator>
#include <filesystem>
#include <fstream>
#include <functional>
#include <iostream>
#include <map>
#include <optional>
#include <set>
#include <string>
#include <thread>
#include <vector>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "stepgate/core/results.hpp"
#include "stepgate/data/csv.hpp"
#include "stepgate/data/generate.hpp"
#include "stepgate/data/idx.hpp"
#include "stepgate/data/scaling.hpp"
#include "stepgate/problems/linear_models.hpp"
#include "stepgate/run/batch.hpp"
#include "stepgate/sweep/run_suite.hpp"

extern char** environ;

using namespace stepgate;
using nlohmann::json;
namespace fs = std::filesystem;

namespace {

using Clock = std::chrono::steady_clock;

double since(Clock::time_point t0) { return std::chrono::duration<double>(Clock::now() - t0).count(); }

struct Options {
  std::string json_path;
  std::set<std::string> only;
  bool quick = false;
  bool peers = true;  // --no-peers: stepgate's own figures only (no numpy or PyTorch loop)
  std::string python = "/usr/bin/python3";
  fs::path program = STEPGATE_PROGRAM;  // the stepgate program timed as a whole process
  fs::path source = STEPGATE_SOURCE_DIR;
  bool wants(const std::string& name) const { return only.empty() || only.count(name) > 0; }
};

// ---- one workload: a problem, an optimizer, rates and seeds, run as the sweep runs them ------

struct Workload {
  std::string name, problem_kind, optimizer_label;
  const Problem* problem = nullptr;
  Mat Xaug;  // the features with the ones column, as the peers get them
  Vec y;
  Index classes = 1;
  OptimizerSpec optimizer;
  std::vector<double> rates;
  int seeds = 1;
  RunSettings settings;
  double flops_per_lane_eval = 0;  // matrix-product flops of one cost-and-gradient evaluation
  // The same workload as a suite for `stepgate run`: its data set and its problem's own keys.
  json dataset, problem_keys = json::object(), scalings = json::object();
};

// Set-up measured in this process, the parts beside the whole-process figure.
struct Setup {
  double data = 0, model = 0, optimum = 0;  // reading or generating and scaling; building the model; J*
  double total() const { return data + model + optimum; }
};

// ---- a child process, timed whole -------------------------------------------------------

struct Timed {
  double seconds = NAN;   // wall time from spawn to exit
  long peak_kib = 0;      // the child's peak resident memory (wait4)
  int exit_code = -1;     // -1: killed by a signal, or not started
  std::string output;     // its standard output
  std::string error;      // why it did not run, or its standard error's tail
};

Timed timed_child(const std::vector<std::string>& argv, const fs::path& scratch, const std::string& tag) {
  Timed t;
  const fs::path out = scratch / (tag + ".stdout"), err = scratch / (tag + ".stderr");
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_addopen(&actions, 1, out.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
  posix_spawn_file_actions_addopen(&actions, 2, err.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
  std::vector<char*> args;
  for (const std::string& a : argv) args.push_back(const_cast<char*>(a.c_str()));
  args.push_back(nullptr);
  pid_t pid = 0;
  const auto t0 = Clock::now();
  const int spawned = posix_spawn(&pid, args[0], &actions, nullptr, args.data(), environ);
  posix_spawn_file_actions_destroy(&actions);
  if (spawned != 0) {
    t.error = fmt::format("cannot start {}: {}", argv[0], std::strerror(spawned));
    return t;
  }
  // Peak memory: the child's own high-water mark (VmHWM), read every 2 ms until it exits. Not
  // wait4's ru_maxrss: a child spawned from this process starts with this process's mark.
  const std::string status_file = fmt::format("/proc/{}/status", pid);
  int status = 0;
  for (;;) {
    {
      std::ifstream in(status_file);
      std::string line;
      while (std::getline(in, line))
        if (line.rfind("VmHWM:", 0) == 0) t.peak_kib = std::max(t.peak_kib, std::atol(line.c_str() + 6));
    }
    const pid_t done = ::waitpid(pid, &status, WNOHANG);
    if (done == pid || (done < 0 && errno != EINTR)) break;
    ::usleep(2000);
  }
  t.seconds = since(t0);
  t.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  std::ifstream o(out), e(err);
  t.output.assign(std::istreambuf_iterator<char>(o), {});
  std::string tail((std::istreambuf_iterator<char>(e)), {});
  if (tail.size() > 400) tail = tail.substr(tail.size() - 400);
  if (t.exit_code < 0 || (t.exit_code != 0 && t.exit_code != 1)) t.error = fmt::format("exit {}: {}", t.exit_code, tail);
  return t;
}

// `stepgate run` on the workload written as a suite: the figure a user's CI job pays.
struct Whole {
  Timed timed;  // peak_kib: stepgate's own (the last reading before exit, within 2 ms of the end)
  long runs = 0, iterations = 0;
  double sweep_seconds = NAN;  // results.json wall_seconds: preparation and cases, without start and reports
};

Whole run_whole(const Options& opt, const Workload& w, const std::string& tag, const fs::path& scratch) {
  const bool momentum = w.optimizer.kind == OptimizerKind::momentum;
  const std::string optimizer = momentum ? "hb" : "gd";
  json problem = w.problem_keys;
  problem["name"] = "workload";
  problem["kind"] = w.problem_kind;
  problem["dataset"] = "data";
  problem["optimizers"] = {optimizer};
  problem["pinned"] = w.rates.front();  // one of the fixed rates: no extra run
  json suite = {{"format", "stepgate.suite/1"},
                {"name", "bench-" + tag},
                {"datasets", {{"data", w.dataset}}},
                {"defaults", {{"seeds", w.seeds},
                              {"budget", w.settings.budget},
                              {"rates", {{"grid", nullptr}, {"fixed", w.rates}, {"locate_edge", false},
                                         {"locate_floor", false}, {"locate_blowup", false},
                                         {"lanes", std::min<std::size_t>(16, w.rates.size())}}}}},
                {"problems", {problem}}};
  if (!w.scalings.empty()) suite["scalings"] = w.scalings;
  if (momentum) suite["optimizers"] = {{"hb", {{"kind", "momentum"}, {"beta", w.optimizer.beta}}}};
  const fs::path suite_path = scratch / ("suite-" + tag + ".json"), out = scratch / ("out-" + tag);
  std::ofstream(suite_path) << suite.dump(1);
  Whole r;
  r.timed = timed_child({opt.program.string(), "run", suite_path.string(), "--out", out.string(), "--quiet"}, scratch, tag);
  if (!r.timed.error.empty()) return r;
  try {
    std::ifstream in(out / "results.json");
    const json results = json::parse(in);
    r.sweep_seconds = results.at("wall_seconds").get<double>();
    for (const json& c : results.at("cases"))
      for (const json& run : c.at("runs")) r.runs += 1, r.iterations += run.at("steps").get<long>();
  } catch (const std::exception& e) {
    r.timed.error = std::string("results.json unreadable: ") + e.what();
  }
  return r;
}

struct Measured {
  double seconds = 0;
  long runs = 0, lane_iterations = 0;
  std::vector<double> rates, final_costs;
  std::vector<long> steps;
  std::vector<bool> diverged;
  std::vector<bool> proven_slow;  // stopped before the budget by the proven slow verdict
  long budget = 0;
  std::vector<Vec> starts;
};

Measured run_workload(const Workload& w) {
  Measured m;
  m.budget = w.settings.budget;
  const auto t0 = Clock::now();
  std::vector<std::vector<RunRecord>> all;
  for (int s = 1; s <= w.seeds; ++s)
    all.push_back(run_batch(*w.problem, w.optimizer, w.settings, w.rates, BatchSeed{std::uint64_t(s), s - 1, std::uint64_t(s)}));
  m.seconds = since(t0);
  for (int s = 1; s <= w.seeds; ++s) {
    const Vec start = w.problem->start(std::uint64_t(s));
    for (const RunRecord& r : all[std::size_t(s - 1)]) {
      m.runs += 1;
      m.lane_iterations += r.steps;
      m.rates.push_back(r.rate);
      m.steps.push_back(r.steps);
      m.final_costs.push_back(r.trace.empty() ? NAN : r.trace.back().cost);
      m.diverged.push_back(r.outcome == Outcome::diverged);
      m.proven_slow.push_back(r.outcome == Outcome::slow && r.steps < w.settings.budget);
      m.starts.push_back(start);
    }
  }
  return m;
}

// ---- peers ---------------------------------------------------------------------------------

struct PeerResult {
  std::string name, note;
  double seconds = NAN;        // the loop, scaled to all runs
  double whole_seconds = NAN;  // the whole process: its start, imports and data loading, and the scaled loop
  bool agreed = false;
  double worst_relative = 0;
  // The peer runs to the budget where stepgate proved a run slow and stopped it (a loop without
  // that proof cannot stop early); the same work per iteration is then also shown.
  long peer_iterations = 0, our_iterations = 0;
  int proven_slow = 0;
};

void write_doubles(const fs::path& path, const double* data, std::size_t n) {
  std::ofstream out(path, std::ios::binary);
  out.write(reinterpret_cast<const char*>(data), static_cast<std::streamsize>(n * sizeof(double)));
  if (!out) throw std::runtime_error("cannot write " + path.string());
}

// A Python script as its own process: its last line of output as JSON, and its wall time.
std::optional<json> run_python(const Options& opt, const std::vector<std::string>& args, std::string& error,
                               const fs::path& scratch, double* wall = nullptr) {
  std::vector<std::string> argv = {opt.python};
  argv.insert(argv.end(), args.begin(), args.end());
  const Timed t = timed_child(argv, scratch, "python");
  if (t.exit_code != 0) {
    error = t.error.empty() ? fmt::format("exit {}", t.exit_code) : t.error;
    return std::nullopt;
  }
  const std::size_t end = t.output.find_last_not_of('\n');
  if (end == std::string::npos) {
    error = "no output";
    return std::nullopt;
  }
  const std::size_t begin = t.output.rfind('\n', end);
  try {
    if (wall) *wall = t.seconds;
    return json::parse(t.output.substr(begin == std::string::npos ? 0 : begin + 1, end + 1 - (begin == std::string::npos ? 0 : begin + 1)));
  } catch (const std::exception& e) {
    error = e.what();
    return std::nullopt;
  }
}

// `subset`: how many runs the peer times (0 = all); spread over the rates.
std::vector<PeerResult> run_peers(const Options& opt, const Workload& w, const Measured& m, std::size_t subset,
                                  const fs::path& scratch) {
  if (!opt.peers) return {};
  std::vector<std::size_t> chosen;
  if (subset == 0 || subset >= m.final_costs.size()) {
    for (std::size_t i = 0; i < m.final_costs.size(); ++i) chosen.push_back(i);
  } else {
    // Spread over the lower half of the runs (rates ascending): near and above the edge, runs
    // that oscillate without diverging amplify rounding chaotically, so two correct loops part
    // there after enough steps and their final costs say nothing about speed.
    const std::size_t half = std::max<std::size_t>(subset, m.final_costs.size() / 2);
    for (std::size_t k = 0; k < subset; ++k) chosen.push_back(k * (half - 1) / (subset - 1));
  }
  // Row-major for numpy: write the transpose of the column-major matrix.
  const Mat Xt = w.Xaug.transpose();
  write_doubles(scratch / "X.f8", Xt.data(), std::size_t(Xt.size()));
  write_doubles(scratch / "y.f8", w.y.data(), std::size_t(w.y.size()));
  json job = {{"problem", w.problem_kind}, {"rows", w.Xaug.rows()}, {"cols", w.Xaug.cols()}, {"classes", w.classes},
              {"X", (scratch / "X.f8").string()}, {"y", (scratch / "y.f8").string()},
              {"optimizer", {{"kind", w.optimizer.kind == OptimizerKind::momentum ? "momentum" : "gd"},
                             {"beta", w.optimizer.beta}}}};
  long chosen_steps = 0, chosen_ours = 0;
  int proven = 0;
  for (std::size_t i : chosen) {
    const Vec& s = m.starts[i];
    json start = s.isZero(0) ? json(nullptr) : json(std::vector<double>(s.data(), s.data() + s.size()));
    const long steps = m.proven_slow[i] ? m.budget : m.steps[i];
    proven += m.proven_slow[i];
    job["runs"].push_back({{"rate", m.rates[i]}, {"start", start}, {"steps", steps}});
    chosen_steps += steps + 1;
    chosen_ours += m.steps[i] + 1;
  }
  std::ofstream(scratch / "job.json") << job.dump();
  // Scaled to all runs by stepgate's iterations (the subset's share of them).
  long all_ours = 0;
  for (long s : m.steps) all_ours += s + 1;
  const double scale = double(all_ours) / double(std::max(1L, chosen_ours));

  std::vector<PeerResult> out;
  for (const std::string peer : {"numpy_loop.py", "torch_loop.py"}) {
    PeerResult r;
    r.name = peer == std::string("numpy_loop.py") ? "numpy" : "torch";
    std::string error;
    double wall = NAN;
    const auto res = run_python(opt, {(opt.source / "tests/bench/peers" / peer).string(), (scratch / "job.json").string()}, error,
                                scratch, &wall);
    if (!res) {
      r.note = "not run: " + error.substr(0, 200);
      out.push_back(r);
      continue;
    }
    r.name = res->at("peer").get<std::string>();
    const double loop = res->at("seconds").get<double>();
    r.seconds = loop * scale;
    r.whole_seconds = wall + loop * (scale - 1.0);  // the process as timed, with the loop scaled to all runs
    r.peer_iterations = chosen_steps;
    r.our_iterations = chosen_ours;
    r.proven_slow = proven;
    const json& finals = res->at("final_costs");
    r.agreed = true;
    for (std::size_t k = 0; k < chosen.size(); ++k) {
      if (m.proven_slow[chosen[k]]) continue;  // the peer ran on to the budget: another final cost
      const double ours = m.final_costs[chosen[k]];
      const double theirs = finals[k].is_null() ? INFINITY : finals[k].get<double>();
      if (!std::isfinite(ours) && !std::isfinite(theirs)) continue;
      const double rel = std::abs(ours - theirs) / std::max(std::abs(ours), 1e-300);
      r.worst_relative = std::max(r.worst_relative, rel);
      if (!(rel <= (m.diverged[chosen[k]] ? 1e-6 : 1e-9))) r.agreed = false;
    }
    if (chosen.size() < m.final_costs.size())
      r.note = fmt::format("timed on {} of {} runs, scaled by iterations ({:.1f}x)", chosen.size(), m.final_costs.size(), scale);
    out.push_back(r);
  }
  return out;
}

// ---- the table -----------------------------------------------------------------------------

// Prints a workload's figures: the whole process first (stepgate run, and each peer as a
// process), its parts beside it, then the runs alone against the loops alone.
json report(const std::string& name, const Workload& w, const Measured& m, const std::vector<PeerResult>& peers,
            const Setup& setup, const Whole& whole) {
  const double whole_s = whole.timed.seconds;
  json j = {{"workload", name},
            {"setup", {{"data_seconds", setup.data}, {"model_seconds", setup.model}, {"optimum_seconds", setup.optimum}}},
            {"seconds", m.seconds},
            {"runs", m.runs},
            {"lane_iterations", m.lane_iterations},
            {"runs_per_second", m.runs / m.seconds},
            {"lane_iterations_per_second", double(m.lane_iterations) / m.seconds}};
  if (w.flops_per_lane_eval > 0)
    j["gflops"] = w.flops_per_lane_eval * double(m.lane_iterations + m.runs) / m.seconds / 1e9;
  std::printf("\n%s: %s, %s, %zu rates x %d seeds, budget %ld\n", name.c_str(), w.name.c_str(),
              w.optimizer_label.c_str(), w.rates.size(), w.seeds, w.settings.budget);
  if (!whole.timed.error.empty()) {
    std::printf("  stepgate run, whole process: not measured: %s\n", whole.timed.error.c_str());
  } else {
    const double rest = whole_s - setup.total() - m.seconds;
    std::printf("  stepgate run, whole process: %.3f s (%ld runs, %ld iterations; peak memory %.0f MiB)\n", whole_s,
                whole.runs, whole.iterations, double(whole.timed.peak_kib) / 1024.0);
    std::printf("    parts: data %.3f s, model %.3f s, reference optimum %.3f s, runs %.3f s (timed in this process); "
                "start, suite check and reports %.3f s (stepgate run outside its sweep); the rest %.3f s by difference\n",
                setup.data, setup.model, setup.optimum, m.seconds, whole_s - whole.sweep_seconds, rest);
    j["outside_sweep_seconds"] = whole_s - whole.sweep_seconds;
    j["whole_seconds"] = whole_s;
    j["whole_runs"] = whole.runs;
    j["whole_iterations"] = whole.iterations;
    j["whole_peak_mib"] = double(whole.timed.peak_kib) / 1024.0;
    j["sweep_seconds"] = whole.sweep_seconds;
    j["rest_seconds"] = rest;
  }
  std::printf("    runs alone: %ld runs, %ld lane-iterations in %.3f s (%.0f runs/s, %.3g lane-iterations/s", m.runs,
              m.lane_iterations, m.seconds, m.runs / m.seconds, double(m.lane_iterations) / m.seconds);
  if (j.contains("gflops")) std::printf(", %.1f GFLOP/s in matrix products", j["gflops"].get<double>());
  std::printf(")\n");
  for (const PeerResult& p : peers) {
    json pj = {{"peer", p.name}, {"note", p.note}, {"final_costs_agree", p.agreed}, {"worst_relative_difference", p.worst_relative}};
    if (std::isnan(p.seconds)) {
      std::printf("  %-34s %s\n", p.name.c_str(), p.note.c_str());
    } else if (!p.agreed) {
      std::printf("  %-34s whole process %.3f s, NO RATIO: final costs differ (worst relative %.2e)\n", p.name.c_str(),
                  p.whole_seconds, p.worst_relative);
      pj["whole_seconds"] = p.whole_seconds;
    } else {
      pj["whole_seconds"] = p.whole_seconds;
      pj["seconds"] = p.seconds;
      pj["loop_ratio"] = p.seconds / m.seconds;
      std::printf("  %-34s whole process %.3f s (start and loading %.3f s, loop %.3f s)", p.name.c_str(), p.whole_seconds,
                  p.whole_seconds - p.seconds, p.seconds);
      if (whole.timed.error.empty()) {
        pj["ratio"] = p.whole_seconds / whole_s;
        std::printf(" -> stepgate %.1fx faster", p.whole_seconds / whole_s);
      }
      std::printf("; loop alone against runs alone %.1fx (final costs agree to %.1e)%s%s\n", p.seconds / m.seconds,
                  p.worst_relative, p.note.empty() ? "" : "; ", p.note.c_str());
      if (p.proven_slow > 0) {
        // The same runs at the same number of iterations: what the loop itself is worth.
        const double same_work = p.seconds * double(p.our_iterations) / double(p.peer_iterations);
        std::printf("  %-34s   %d runs proven slow were stopped by stepgate and run to the budget (%ld) by the peer, "
                    "as a loop without the proof must; per iteration the runs are %.1fx faster than the loop\n",
                    "", p.proven_slow, m.budget, same_work / m.seconds);
        pj["proven_slow_runs"] = p.proven_slow;
        pj["ratio_per_iteration"] = same_work / m.seconds;
      }
    }
    j["peers"].push_back(pj);
  }
  return j;
}

std::vector<double> log_rates(double from, double to, int count) {
  std::vector<double> r;
  for (int i = 0; i < count; ++i) r.push_back(from * std::pow(to / from, count == 1 ? 0.0 : double(i) / (count - 1)));
  return r;
}

Mat with_ones(const Mat& X) {
  Mat out(X.rows(), X.cols() + 1);
  out.leftCols(X.cols()) = X;
  out.col(X.cols()).setOnes();
  return out;
}

double fitted_exponent(const std::vector<double>& x, const std::vector<double>& t) {
  double mx = 0, my = 0;
  for (std::size_t i = 0; i < x.size(); ++i) mx += std::log(x[i]), my += std::log(t[i]);
  mx /= double(x.size());
  my /= double(x.size());
  double sxy = 0, sxx = 0;
  for (std::size_t i = 0; i < x.size(); ++i) {
    sxy += (std::log(x[i]) - mx) * (std::log(t[i]) - my);
    sxx += (std::log(x[i]) - mx) * (std::log(x[i]) - mx);
  }
  return sxy / sxx;
}

// ---- workloads -----------------------------------------------------------------------------

Dataset diabetes(const Options& opt) {
  Dataset d = load_csv_dataset((opt.source / "suites/data/diabetes.csv").string(), {}, "progression", {}, "diabetes");
  ScalingSpec standardize;
  standardize.kind = ScalingSpec::standardize;
  apply_scaling(d, standardize);
  return d;
}

Workload small_workload(const Options& opt, const Problem& p, const Dataset& d, int rates) {
  Workload w;
  w.name = "least squares, diabetes (442 x 10) standardized";
  w.problem_kind = "least_squares";
  w.optimizer_label = "gd";
  w.problem = &p;
  w.Xaug = with_ones(d.X);
  w.y = d.y;
  w.rates = log_rates(1e-3, 3.0, rates);
  w.seeds = 5;
  w.dataset = {{"csv", (opt.source / "suites/data/diabetes.csv").string()}, {"target", "progression"}};
  w.scalings = {{"std", {{"kind", "standardize"}}}};
  w.problem_keys = {{"init_scale", 0.1}, {"scalings", {"std"}}};
  w.settings.budget = 2000;
  w.settings.keep_final_params = false;
  return w;
}

Dataset generated_logistic(long rows) {
  GeneratedSpec g;
  g.kind = GeneratedSpec::logistic;
  g.rows = rows;
  g.features = 50;
  g.seed = 2026;
  g.intercept = -0.3;
  return generate_dataset(g, "generated-logistic");
}

Workload medium_workload(const Problem& p, const Dataset& d, bool momentum) {
  Workload w;
  w.name = fmt::format("logistic, generated {} x {}", d.rows(), d.cols());
  w.problem_kind = "logistic";
  w.problem = &p;
  w.Xaug = with_ones(d.X);
  w.y = d.y;
  w.rates = log_rates(1e-2, 30.0, 16);
  w.settings.budget = 200;
  w.dataset = {{"generate", {{"kind", "logistic"}, {"rows", d.rows()}, {"features", 50}, {"seed", 2026}, {"intercept", -0.3}}}};
  w.settings.keep_final_params = false;
  if (momentum) {
    w.optimizer.kind = OptimizerKind::momentum;
    w.optimizer.beta = 0.9;
  }
  w.optimizer_label = momentum ? "heavy ball 0.9" : "gd";
  w.flops_per_lane_eval = 4.0 * double(w.Xaug.rows()) * double(w.Xaug.cols());
  return w;
}

}  // namespace

int main(int argc, char** argv) {
  Options opt;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    auto value = [&]() -> std::string {
      if (i + 1 >= argc) {
        std::fprintf(stderr, "stepgate-bench: %s needs a value\n", a.c_str());
        std::exit(2);
      }
      return argv[++i];
    };
    if (a == "--json") opt.json_path = value();
    else if (a == "--only") opt.only.insert(value());
    else if (a == "--quick") opt.quick = true;
    else if (a == "--no-peers") opt.peers = false;
    else if (a == "--python") opt.python = value();
    else if (a == "--source") opt.source = value();
    else if (a == "--program") opt.program = value();
    else if (a == "-h" || a == "--help") {
      std::printf("stepgate-bench [--json FILE] [--only small|medium|large|search|growth|gemm]... [--quick] "
                  "[--no-peers] [--python PATH] [--source DIR] [--program PATH]\n");
      return 0;
    } else {
      std::fprintf(stderr, "stepgate-bench: unknown argument '%s'\n", a.c_str());
      return 2;
    }
  }
  const HostInfo host = this_host();
  const ToolInfo tool = this_tool();
  json out = {{"host", {{"os", host.os}, {"machine", host.machine}, {"cores", host.cores}}},
              {"tool", {{"version", tool.version}, {"compiler", tool.compiler}, {"build", tool.build}}},
              {"workloads", json::array()}};
  std::printf("stepgate-bench on %s, %u cores, %s, %s%s\n", host.machine.c_str(), host.cores, tool.compiler.c_str(),
              tool.build.c_str(),
              opt.quick ? " (--quick: smaller sizes, figures not comparable with the targets)" : "");
  const fs::path scratch = fs::temp_directory_path() / fmt::format("stepgate-bench-{}", ::getpid());
  fs::create_directories(scratch);

  // large first, so that the process's peak memory is its own.
  const std::string images = "/usr/share/datasets/fashion-mnist/train-images-idx3-ubyte.gz";
  const std::string labels = "/usr/share/datasets/fashion-mnist/train-labels-idx1-ubyte.gz";
  if (opt.wants("large")) {
    if (!fs::exists(images)) {
      std::printf("\nlarge: skipped, %s is missing (scripts/setup --fashion installs it)\n", images.c_str());
    } else {
      Workload w;
      Setup setup;
      std::unique_ptr<Problem> p;
      {
        auto t0 = Clock::now();
        Dataset d = load_idx_dataset(images, labels, "fashion-mnist", 1.0 / 255.0, opt.quick ? 10000 : 0);
        setup.data = since(t0);
        w.Xaug = with_ones(d.X);  // the peers' copy, written for them below
        w.y = d.y;
        t0 = Clock::now();
        p = make_softmax(std::move(d), {}, 10);
        setup.model = since(t0);
      }
      w.name = fmt::format("softmax, Fashion-MNIST {} x {}, 10 classes", w.Xaug.rows(), w.Xaug.cols() - 1);
      w.problem_kind = "softmax";
      w.optimizer_label = "gd";
      w.classes = 10;
      w.problem = p.get();
      w.rates = log_rates(1e-2, 5.0, 8);
      w.settings.budget = 50;
      w.settings.keep_final_params = false;
      w.settings.outcome.criterion = Criterion::cost;  // a training script's stop: no J* needed
      w.settings.outcome.target = 0.0;
      w.settings.skip_optimum = true;
      w.flops_per_lane_eval = 4.0 * double(w.Xaug.rows()) * double(w.Xaug.cols()) * 10.0;
      w.dataset = {{"idx", {{"images", images}, {"labels", labels}}}, {"pixel_scale", 1.0 / 255.0}};
      if (opt.quick) w.dataset["max_rows"] = 10000;
      w.problem_keys = {{"classes", 10}, {"optimum", "skip"}, {"outcome", {{"criterion", "cost"}, {"target", 0.0}}}};
      const Whole whole = run_whole(opt, w, "large", scratch);
      const Measured m = run_workload(w);
      const double data_mib = double(w.Xaug.rows()) * double(w.Xaug.cols() - 1) * 8.0 / 1048576.0;
      json j = report("large", w, m, run_peers(opt, w, m, 2, scratch), setup, whole);
      j["data_mib"] = data_mib;
      std::printf("  peak memory of stepgate run %.0f MiB, the data %.0f MiB in double precision: %.2fx\n",
                  double(whole.timed.peak_kib) / 1024.0, data_mib, double(whole.timed.peak_kib) / 1024.0 / data_mib);
      out["workloads"].push_back(j);
    }
  }

  if (opt.wants("gemm")) {
    const Index n = opt.quick ? 1000 : 2000;
    const unsigned threads = std::max(1u, std::thread::hardware_concurrency());
    std::vector<Mat> A(threads), B(threads), C(threads);
    for (unsigned t = 0; t < threads; ++t) A[t] = Mat::Random(n, n), B[t] = Mat::Random(n, n), C[t] = Mat(n, n);
    double best = INFINITY;
    for (int rep = 0; rep < 3; ++rep) {
      const auto t0 = Clock::now();
      std::vector<std::thread> pool;
      for (unsigned t = 0; t < threads; ++t) pool.emplace_back([&, t] { C[t].noalias() = A[t] * B[t]; });
      for (auto& th : pool) th.join();
      best = std::min(best, since(t0));
    }
    const double eigen_gflops = 2.0 * double(n) * double(n) * double(n) * threads / best / 1e9;
    std::string error;
    const auto numpy = run_python(opt, {(opt.source / "tests/bench/peers/gemm_limit.py").string()}, error, scratch);
    std::printf("\ngemm: dense %ld x %ld float64 on %u cores: Eigen %.1f GFLOP/s", long(n), long(n), threads, eigen_gflops);
    json j = {{"workload", "gemm"}, {"eigen_gflops", eigen_gflops}};
    if (numpy) {
      std::printf(", %s %.1f GFLOP/s", numpy->at("peer").get<std::string>().c_str(), numpy->at("gflops").get<double>());
      j["openblas_gflops"] = numpy->at("gflops");
    } else {
      std::printf(", numpy not run: %s", error.c_str());
    }
    std::printf("\n");
    out["gemm"] = j;
  }

  if (opt.wants("small")) {
    Setup setup;
    auto t0 = Clock::now();
    const Dataset d = diabetes(opt);
    setup.data = since(t0);
    LinearModelOptions lo;
    lo.init_scale = 0.1;  // seeds start apart, so five seeds are five different runs
    t0 = Clock::now();
    const auto p = make_least_squares(d, lo);
    setup.model = since(t0);
    t0 = Clock::now();
    (void)p->optimum();  // J* for the gap criterion (closed form)
    setup.optimum = since(t0);
    Workload w = small_workload(opt, *p, d, 30);
    const Whole whole = run_whole(opt, w, "small", scratch);
    const Measured m = run_workload(w);
    out["workloads"].push_back(report("small", w, m, run_peers(opt, w, m, 0, scratch), setup, whole));
  }

  if (opt.wants("medium")) {
    Setup setup;
    auto t0 = Clock::now();
    const Dataset d = generated_logistic(opt.quick ? 20000 : 200000);
    setup.data = since(t0);
    t0 = Clock::now();
    const auto p = make_logistic(d, {});
    setup.model = since(t0);
    t0 = Clock::now();
    (void)p->optimum();  // J* for the gap criterion: computed once per case by the sweep too
    setup.optimum = since(t0);
    for (bool momentum : {false, true}) {
      Workload w = medium_workload(*p, d, momentum);
      const std::string tag = momentum ? "medium (heavy ball)" : "medium (gd)";
      const Whole whole = run_whole(opt, w, momentum ? "medium-hb" : "medium-gd", scratch);
      const Measured m = run_workload(w);
      json j = report(tag, w, m, run_peers(opt, w, m, 2, scratch), setup, whole);
      if (whole.timed.error.empty())
        std::printf("  set-up (data, model, reference optimum) %.3f s: %.1f%% of the whole process\n", setup.total(),
                    100.0 * setup.total() / whole.timed.seconds);
      out["workloads"].push_back(j);
    }
  }

  if (opt.wants("growth")) {
    std::printf("\ngrowth: medium (gd) against rows\n  %10s %10s %14s\n", "rows", "seconds", "lane-iter/s");
    std::vector<double> xs, ts;
    for (long rows : opt.quick ? std::vector<long>{5000, 10000, 20000, 40000} : std::vector<long>{50000, 100000, 200000, 400000}) {
      const Dataset d = generated_logistic(rows);
      const auto p = make_logistic(d, {});
      (void)p->optimum();
      const Measured m = run_workload(medium_workload(*p, d, false));
      std::printf("  %10ld %10.3f %14.3g\n", rows, m.seconds, double(m.lane_iterations) / m.seconds);
      xs.push_back(double(rows));
      ts.push_back(m.seconds / double(m.lane_iterations));
    }
    const double rows_exponent = fitted_exponent(xs, ts);
    std::printf("  time per lane-iteration grows as rows^%.2f\n", rows_exponent);
    std::printf("growth: small against rates\n  %10s %10s %14s\n", "rates", "seconds", "runs/s");
    const Dataset d = diabetes(opt);
    LinearModelOptions lo;
    lo.init_scale = 0.1;
    const auto p = make_least_squares(d, lo);
    std::vector<double> rs, rt;
    for (int rates : {10, 30, 100, 300}) {
      const Measured m = run_workload(small_workload(opt, *p, d, rates));
      std::printf("  %10d %10.3f %14.0f\n", rates, m.seconds, m.runs / m.seconds);
      rs.push_back(rates);
      rt.push_back(m.seconds);
    }
    const double rates_exponent = fitted_exponent(rs, rt);
    std::printf("  time grows as rates^%.2f\n", rates_exponent);
    out["growth"] = {{"medium_rows", xs}, {"medium_seconds_per_lane_iteration", ts}, {"rows_exponent", rows_exponent},
                     {"small_rates", rs}, {"small_seconds", rt}, {"rates_exponent", rates_exponent}};
  }

  if (opt.wants("search")) {
    for (const char* suite : {"suites/reference.json", "suites/demo.json"}) {
      json j = {{"workload", std::string("search ") + suite}};
      std::printf("\nsearch: %s as `stepgate run` executes it\n", suite);
      double t1 = NAN;
      for (int jobs : {1, 2}) {
        RunSuiteOptions ro;
        ro.out_dir = (scratch / fmt::format("out-{}", jobs)).string();
        ro.jobs = jobs;
        const auto t0 = Clock::now();
        const SuiteRun run = run_suite((opt.source / suite).string(), ro);
        const double s = since(t0);
        long runs = 0;
        for (const CaseResult& c : run.results.cases) runs += long(c.runs.size());
        std::printf("  --jobs %d: %.2f s, %ld runs%s\n", jobs, s, runs,
                    jobs == 2 ? fmt::format(" ({:.2f}x --jobs 1)", t1 / s).c_str() : "");
        j[fmt::format("jobs{}_seconds", jobs)] = s;
        if (jobs == 1) t1 = s;
      }
      j["jobs2_speedup"] = t1 / j["jobs2_seconds"].get<double>();
      out["workloads"].push_back(j);
    }
  }

  fs::remove_all(scratch);
  if (!opt.json_path.empty()) std::ofstream(opt.json_path) << out.dump(1) << "\n";
  return 0;
}
