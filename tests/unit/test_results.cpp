// The Results model and results.json: round trip, the contract's field names (docs/design.md,
// "results.json"), null for values that do not exist, trace thinning, strict reading with JSON
// pointers, atomic writing, and the tool/host facts.
#include <catch2/catch.hpp>
#include <algorithm>
#include <tuple>
#include <sys/stat.h>
#include <unistd.h>

#include <cmath>
#include <cstdint>
#include <cstring>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <functional>
#include <limits>
#include <regex>
#include <set>
#include <thread>

#include "stepgate/core/error.hpp"
#include "stepgate/core/json_node.hpp"
#include "stepgate/core/optimizer_spec_json.hpp"
#include "stepgate/core/results.hpp"

using namespace stepgate;
using nlohmann::json;
namespace fs = std::filesystem;

namespace {

constexpr std::uint64_t kBigSeed = std::numeric_limits<std::uint64_t>::max();

// A trace with one evaluation per iteration 0..n-1, cost 1/(k+1), gap = cost − 0.25.
std::vector<TracePoint> long_trace(long n) {
  std::vector<TracePoint> t(static_cast<std::size_t>(n));
  for (long k = 0; k < n; ++k) {
    const double cost = 1.0 / static_cast<double>(k + 1);
    t[static_cast<std::size_t>(k)] = {k, cost, cost - 0.25, 2.0 * cost};
  }
  return t;
}

StoredRun run(double rate, Outcome outcome, RunRole role, std::vector<TracePoint> trace) {
  StoredRun s;
  s.role = role;
  s.record.rate = rate;
  s.record.seed = kBigSeed - 7;
  s.record.seed_index = 1;
  s.record.outcome = outcome;
  s.record.reason = "why \"quoted\" ≤ 1e-06";
  s.record.steps = trace.empty() ? 0 : trace.back().iter;
  s.record.overshoot = 0.125;
  s.record.trace = std::move(trace);
  s.record.wall_seconds = 0.5;
  return s;
}

// Two cases: a full one (reference, seeds, a 1e5-point trace, NaN and ±inf fields) and one
// that could not be run (error, no runs, no reference).
Results sample_results(long trace_length = 100000) {
  Results r;
  r.suite = {"demo", "suites/demo.json", std::string(64, 'a')};
  r.tool = {"0.1.0", "GCC 12.2.0", "Release, Eigen 3.4.0"};
  r.host = {"Linux 6.1", "x86_64", "box", 8, 2};
  r.started = "2026-01-02T03:04:05Z";
  r.finished = "2026-01-02T03:04:06Z";
  r.shard = "1/2";

  CaseResult a;
  a.id = "longley/standardize/hb-0.9";
  a.problem = "longley";
  a.scaling = "standardize";
  a.problem_kind = "least_squares";
  a.optimizer.kind = OptimizerKind::adam;
  a.optimizer.label = "adam-warm";
  a.optimizer.beta1 = 0.85;
  a.optimizer.eps = 1e-7;
  a.optimizer.batch_size = 32;
  a.optimizer.schedule = {ScheduleKind::cosine, 0.5, 100, 2e-3, 0.01, 50};
  a.dataset = "longley";
  a.data_sha256 = std::string(64, 'b');
  a.optimum_cost = 0.1 + 0.2;  // not exactly 0.3: checks round-trip precision
  a.theory.L = 1.0 / 3.0;
  a.theory.mu = 5e-324;        // smallest subnormal
  a.theory.lambda_max_start = 1.7976931348623157e308;
  a.theory.predicted_blowup = kMissing;
  a.theory.rule = "2/L";
  a.theory.method = "lanczos";
  a.summary.floor = 1e-4;
  a.summary.edge = std::nextafter(1.0, 2.0);
  a.summary.edge_lo = 0.99;
  a.summary.edge_hi = 1.01;
  a.summary.blowup = kInf;     // written as null
  a.summary.best_rate = 0.5;
  a.summary.best_iterations = 812.5;
  a.summary.pinned = 0.25;
  a.summary.pinned_iterations = 1200;
  a.summary.pinned_outcome = Outcome::converged;
  a.summary.headroom = 4.0;
  a.summary.edge_spread = 1.02;
  a.summary.precision = 0.01;
  a.summary.runs = 3;
  a.summary.reference = ReferenceSummary{2.5, "NIST StRD Longley", {"b0", "b1"}, {9.5, kMissing},
                                         {-3482258.63459582, 15.0618722713733}};
  // seed, floor, edge, blowup, edge_lo, edge_hi, best_rate, runs
  a.summary.seeds = {{kBigSeed, 1e-4, 1.0, 2.0, 0.99, 1.01, 0.5, 2},
                     {3, kMissing, 1.1, kInf, 1.0, 1.2, 0.5, 1}};
  StoredRun converged = run(0.5, Outcome::converged, RunRole::refine, long_trace(trace_length));
  converged.record.iterations = std::min(812L, converged.record.steps);  // a converged run has converged_at <= steps
  a.runs.push_back(std::move(converged));
  StoredRun diverged = run(2.0, Outcome::diverged, RunRole::blowup, long_trace(4));
  diverged.record.trace[2].cost = kMissing;
  diverged.record.trace[3].cost = kInf;
  diverged.record.trace[3].gap = kInf;
  diverged.record.iterations = 3;  // not converged: must be written as null
  diverged.record.overshoot = kMissing;
  a.runs.push_back(std::move(diverged));
  a.runs.push_back(run(1e-3, Outcome::slow, RunRole::fixed, {}));
  a.runs.push_back(run(0.9, Outcome::converged, RunRole::verify, {}));
  a.runs.back().record.iterations = 0;
  // What the seeds' summaries say of their runs is so (results_from_json checks it): each
  // seed's edge is a rate where it converged, the top of its bracket one where it did not.
  for (const auto& [index, edge, hi] : {std::tuple{0L, 1.0, 1.01}, std::tuple{1L, 1.1, 1.2}}) {
    a.runs.push_back(run(edge, Outcome::converged, RunRole::edge, {}));
    a.runs.back().record.seed_index = index;
    a.runs.back().record.iterations = 0;
    a.runs.push_back(run(hi, Outcome::oscillating, RunRole::edge, {}));
    a.runs.back().record.seed_index = index;
  }
  BaselineCheck check;  // a check that disagreed: the case was then searched
  check.disagreement = "the rate just inside the edge 0.9524 was slow for seed 3";
  check.baseline_edge = 1.0;
  check.baseline_floor = kMissing;
  check.edge_inside = 1.0 / 1.05;
  check.edge_outside = 1.05 * 1.01;
  check.runs = 2;
  check.probes = {{ProbeKind::pinned, 0.5, kBigSeed, Outcome::converged, true},
                  {ProbeKind::edge_inside, 1.0 / 1.05, 3, Outcome::slow, false}};
  a.verification = check;
  r.cases.push_back(std::move(a));

  CaseResult b;
  b.id = "broken/none/gd";
  b.problem = "broken";
  b.scaling = "none";
  b.problem_kind = "command";
  b.error = "cannot start the command: No such file or directory";
  r.cases.push_back(std::move(b));
  return r;
}

fs::path scratch_dir(const std::string& name) {
  const fs::path dir = fs::path(STEPGATE_BINARY_DIR) / "test_results_tmp" / name;
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

std::set<std::string> files_in(const fs::path& dir) {
  std::set<std::string> names;
  for (const auto& e : fs::directory_iterator(dir)) names.insert(e.path().filename().string());
  return names;
}

bool same_bits(double a, double b) { return std::memcmp(&a, &b, sizeof a) == 0; }

}  // namespace

TEST_CASE("results: to_json -> dump -> parse -> results_from_json -> to_json is exact", "[results]") {
  const Results r = sample_results();
  const json first = to_json(r);
  const json parsed = json::parse(first.dump(1));
  CHECK(parsed == first);  // nlohmann dumps doubles as shortest round-trip text
  const Results back = results_from_json(parsed, "mem.json");
  CHECK(to_json(back) == first);

  REQUIRE(back.cases.size() == 2);
  const CaseResult& a = back.cases[0];
  // Round-trip precision, bit for bit, at awkward doubles.
  CHECK(same_bits(a.optimum_cost, 0.1 + 0.2));
  CHECK(same_bits(a.theory.L, 1.0 / 3.0));
  CHECK(same_bits(a.theory.mu, 5e-324));
  CHECK(same_bits(a.theory.lambda_max_start, 1.7976931348623157e308));
  CHECK(same_bits(a.summary.edge, std::nextafter(1.0, 2.0)));
  CHECK(a.summary.seeds[0].seed == kBigSeed);
  CHECK(a.runs[0].record.seed == kBigSeed - 7);
  CHECK(a.optimizer.kind == OptimizerKind::adam);
  CHECK(a.optimizer.schedule.warmup == 50);
  CHECK(a.runs[0].role == RunRole::refine);
  CHECK(a.runs[0].record.iterations == std::optional<long>(812));
  CHECK_FALSE(a.runs[1].record.iterations.has_value());
  CHECK(a.runs[1].record.trace.size() == 4);
  // The thinned trace comes back; only the last point keeps its gap.
  const auto& trace = a.runs[0].record.trace;
  CHECK(trace.size() == thinned_indices(long_trace(100000)).size());
  CHECK(trace.back().iter == 99999);
  CHECK(trace.back().gap == Approx(1.0 / 100000 - 0.25));
  CHECK(std::isnan(trace.front().gap));
  CHECK(std::isnan(trace.front().grad_norm));
  // ±inf comes back as NaN (JSON has no infinity).
  CHECK(std::isnan(a.summary.blowup));
  CHECK_FALSE(back.cases[1].summary.reference.has_value());
  CHECK_FALSE(back.cases[1].summary.pinned_outcome.has_value());
  CHECK(back.cases[1].error == r.cases[1].error);
  CHECK(back.shard == "1/2");
  // The baseline check comes back field by field; a case without one has null.
  REQUIRE(a.verification.has_value());
  CHECK_FALSE(a.verification->verified);
  CHECK(a.verification->disagreement == r.cases[0].verification->disagreement);
  CHECK(same_bits(a.verification->edge_inside, 1.0 / 1.05));
  CHECK(std::isnan(a.verification->floor_inside));
  REQUIRE(a.verification->probes.size() == 2);
  CHECK(a.verification->probes[0].seed == kBigSeed);
  CHECK(a.verification->probes[1].kind == ProbeKind::edge_inside);
  CHECK(a.verification->probes[1].outcome == Outcome::slow);
  CHECK_FALSE(a.verification->probes[1].as_expected);
  CHECK(a.runs[3].role == RunRole::verify);
  CHECK(first["cases"][1]["verification"].is_null());
  CHECK(first["cases"][0]["verification"]["proves"].get<std::string>().find("searched: the baseline check disagreed") == 0);
}

TEST_CASE("results: every field of the docs/design.md contract is present by name", "[results]") {
  const json j = to_json(sample_results(50));
  // docs/design.md, "results.json" (fields that other tools read), plus the fields of the brief.
  const std::vector<std::string> pointers = {
      "/format", "/suite/name", "/suite/path", "/suite/sha256", "/tool/version", "/tool/compiler",
      "/tool/build", "/host/os", "/host/machine", "/host/hostname", "/host/cores", "/host/jobs",
      "/started", "/finished", "/shard", "/cases/0/id", "/cases/0/problem", "/cases/0/scaling",
      "/cases/0/problem_kind", "/cases/0/dataset", "/cases/0/data_sha256", "/cases/0/optimum_cost",
      "/cases/0/error", "/cases/0/optimizer/label", "/cases/0/optimizer/kind",
      "/cases/0/optimizer/beta1", "/cases/0/optimizer/beta2",
      "/cases/0/optimizer/eps", "/cases/0/optimizer/batch_size",
      "/cases/0/optimizer/schedule/kind",
      "/cases/0/optimizer/schedule/floor", "/cases/0/optimizer/schedule/warmup",
      "/cases/0/theory/L", "/cases/0/theory/mu", "/cases/0/theory/predicted_blowup",
      "/cases/0/theory/rule", "/cases/0/theory/method", "/cases/0/theory/lambda_max_start",
      "/cases/0/theory/lambda_min_start", "/cases/0/theory/lambda_max_optimum",
      "/cases/0/theory/lambda_min_optimum", "/cases/0/summary/floor", "/cases/0/summary/edge",
      "/cases/0/summary/edge_bracket/0", "/cases/0/summary/edge_bracket/1",
      "/cases/0/summary/blowup", "/cases/0/summary/best_rate", "/cases/0/summary/best_iterations",
      "/cases/0/summary/pinned", "/cases/0/summary/pinned_iterations",
      "/cases/0/summary/pinned_outcome", "/cases/0/summary/headroom",
      "/cases/0/summary/edge_spread", "/cases/0/summary/precision", "/cases/0/summary/runs",
      "/cases/0/summary/reference/min_lre", "/cases/0/summary/reference/source",
      "/cases/0/summary/reference/names/1", "/cases/0/summary/reference/lre/1",
      "/cases/0/summary/reference/estimate/1", "/cases/0/summary/seeds/1/seed",
      "/cases/0/summary/seeds/1/floor", "/cases/0/summary/seeds/1/edge",
      "/cases/0/summary/seeds/1/edge_bracket/1", "/cases/0/summary/seeds/1/blowup",
      "/cases/0/summary/seeds/1/best_rate", "/cases/0/summary/seeds/1/runs",
      "/cases/0/runs/0/rate", "/cases/0/runs/0/rng_seed", "/cases/0/runs/0/seed_index",
      "/cases/0/runs/0/role", "/cases/0/runs/0/outcome", "/cases/0/runs/0/reason",
      "/cases/0/runs/0/converged_at", "/cases/0/runs/0/steps", "/cases/0/runs/0/final_cost",
      "/cases/0/runs/0/gap", "/cases/0/runs/0/overshoot", "/cases/0/runs/0/wall_seconds",
      "/cases/0/runs/0/trace/0/0", "/cases/0/runs/0/trace/0/1", "/cases/1/summary/reference",
      "/cases/1/runs"};
  for (const std::string& p : pointers) {
    INFO(p);
    CHECK(j.contains(json::json_pointer(p)));
  }
  CHECK(j["format"] == "stepgate.results/2");
  CHECK(j["cases"][0]["runs"][0]["role"] == "refine");
  CHECK(j["cases"][0]["runs"][0]["rng_seed"].is_number_unsigned());
  CHECK(j["cases"][0]["summary"]["seeds"][0]["seed"].get<std::uint64_t>() == kBigSeed);
  CHECK(j["cases"][0]["summary"]["pinned_outcome"] == "converged");
  // final_cost and gap are those of the last trace point.
  CHECK(j["cases"][0]["runs"][0]["final_cost"].get<double>() == 1.0 / 50);
  CHECK(j["cases"][0]["runs"][0]["gap"].get<double>() == 1.0 / 50 - 0.25);
}

TEST_CASE("results: NaN, nullopt and +-infinity are written as null", "[results]") {
  CHECK(finite_or_null(kMissing).is_null());
  CHECK(finite_or_null(kInf).is_null());
  CHECK(finite_or_null(-kInf).is_null());
  CHECK(finite_or_null(-0.0).is_number_float());
  const json j = to_json(sample_results(50));
  const json& a = j["cases"][0];
  CHECK(a["theory"]["predicted_blowup"].is_null());        // NaN
  CHECK(a["theory"]["lambda_min_optimum"].is_null());      // default: missing
  CHECK(a["summary"]["blowup"].is_null());                 // +inf
  CHECK(a["summary"]["reference"]["lre"][1].is_null());    // NaN inside an array
  CHECK(a["summary"]["seeds"][1]["floor"].is_null());
  CHECK(a["summary"]["seeds"][1]["blowup"].is_null());     // +inf
  const json& diverged = a["runs"][1];
  CHECK(diverged["converged_at"].is_null());  // set in memory but the run did not converge
  CHECK(diverged["overshoot"].is_null());
  CHECK(diverged["final_cost"].is_null());  // last cost +inf
  CHECK(diverged["gap"].is_null());
  CHECK(diverged["trace"][2][1].is_null());  // NaN cost
  CHECK(diverged["trace"][3][1].is_null());  // +inf cost
  CHECK(diverged["trace"][1][1].get<double>() == 0.5);
  const json& empty = a["runs"][2];  // no trace at all
  CHECK(empty["trace"].empty());
  CHECK(empty["final_cost"].is_null());
  CHECK(empty["gap"].is_null());
  const json& broken = j["cases"][1];
  CHECK(broken["summary"]["reference"].is_null());
  CHECK(broken["summary"]["pinned_outcome"].is_null());
  CHECK(broken["optimum_cost"].is_null());
  CHECK(broken["theory"]["L"].is_null());
}

TEST_CASE("results: trace thinning keeps 0, the tail and the first point after each log target",
          "[results]") {
  SECTION("1e5 iterations: at most 150 points, exactly the expected ones") {
    const auto trace = long_trace(100001);  // iterations 0..100000
    const TraceThinning t;                  // 20 per decade, tail 10
    const auto keep = thinned_indices(trace, t);
    CHECK(keep.size() <= 150);
    // Expected set built another way: iteration == index here, so the first point at or after
    // the target 10^(m/20) is ceil(target).
    std::set<std::size_t> expected = {0};
    for (int m = 0;; ++m) {
      const double target = std::pow(10.0, m / 20.0);
      if (target > 100000.0) break;
      expected.insert(static_cast<std::size_t>(std::ceil(target)));
    }
    for (std::size_t i = 100001 - 10; i < 100001; ++i) expected.insert(i);
    CHECK(std::vector<std::size_t>(expected.begin(), expected.end()) == keep);
  }
  SECTION("increasing, no duplicates, first and last kept") {
    const auto keep = thinned_indices(long_trace(5000));
    REQUIRE(!keep.empty());
    CHECK(keep.front() == 0);
    CHECK(keep.back() == 4999);
    for (std::size_t i = 1; i < keep.size(); ++i) CHECK(keep[i - 1] < keep[i]);
  }
  SECTION("short traces are kept whole; empty stays empty") {
    CHECK(thinned_indices(long_trace(7)) == std::vector<std::size_t>{0, 1, 2, 3, 4, 5, 6});
    CHECK(thinned_indices({}).empty());
  }
  SECTION("sparse evaluations: targets between two points map to the later one, once") {
    std::vector<TracePoint> trace;
    for (long k = 0; k <= 1000; k += 100) trace.push_back({k, 1.0, 0.0, 0.0});
    const auto keep = thinned_indices(trace, {20, 1});
    // Targets 1..100 all map to iteration 100 (index 1); 112..200 to index 2, and so on.
    CHECK(keep == std::vector<std::size_t>{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10});
    const auto coarse = thinned_indices(trace, {1, 1});  // targets 1, 10, 100, 1000
    CHECK(coarse == std::vector<std::size_t>{0, 1, 10});
  }
  SECTION("no log points and no tail: still the first and the last point") {
    CHECK(thinned_indices(long_trace(1000), {0, 0}) == std::vector<std::size_t>{0, 999});
    CHECK(thinned_indices(long_trace(1000), {0, 3}) == std::vector<std::size_t>{0, 997, 998, 999});
  }
}

TEST_CASE("results: malformed documents name the JSON pointer of the bad field", "[results]") {
  const json good = to_json(sample_results(30));
  REQUIRE_NOTHROW(results_from_json(good, "bad.json"));

  struct Bad {
    std::string pointer;                   // expected in InputError::where()
    std::string says;                      // expected in InputError::message()
    std::function<void(json&)> break_it;
  };
  const std::vector<Bad> table = {
      {"/format", "stepgate.results/2", [](json& j) { j.erase("format"); }},
      {"/format", "expected format \"stepgate.results/2\", found \"stepgate.results/3\"",
       [](json& j) { j["format"] = "stepgate.results/3"; }},
      {"/format", "written by stepgate 0.1: run the suite again", [](json& j) { j["format"] = "stepgate.results/1"; }},
      {"/cases/0/error", "expected a string or null, found 3", [](json& j) { j["cases"][0]["error"] = 3; }},
      {"", "expected an object, found an array", [](json& j) { j = json::array({1}); }},
      {"/suite/name", "expected a string, found 5", [](json& j) { j["suite"]["name"] = 5; }},
      {"/host/cores", "found -2", [](json& j) { j["host"]["cores"] = -2; }},
      {"/cases", "expected an array, found an empty object", [](json& j) { j["cases"] = json::object(); }},
      {"/cases/0/summary/edge", "found nothing (no such key)",
       [](json& j) { j["cases"][0]["summary"].erase("edge"); }},
      {"/cases/0/summary/edge_bracket", "a pair",
       [](json& j) { j["cases"][0]["summary"]["edge_bracket"] = {1.0}; }},
      {"/cases/0/summary/pinned_outcome", "expected a string",
       [](json& j) { j["cases"][0]["summary"]["pinned_outcome"] = 3; }},
      {"/cases/1/summary/reference/source", "no such key",
       [](json& j) { j["cases"][1]["summary"]["reference"] = {{"min_lre", 1.0}}; }},
      {"/cases/0/optimizer/kind", "an optimizer kind",
       [](json& j) { j["cases"][0]["optimizer"]["kind"] = "lbfgs"; }},
      {"/cases/0/optimizer/schedule/warmup", "found 1.5",
       [](json& j) { j["cases"][0]["optimizer"]["schedule"]["warmup"] = 1.5; }},
      {"/cases/0/optimizer/schedule/floor", "expected a number or null, found \"low\"",
       [](json& j) { j["cases"][0]["optimizer"]["schedule"]["floor"] = "low"; }},  // cosine's own parameter
      {"/cases/0/optimizer/beta1", "found nothing (no such key)",
       [](json& j) { j["cases"][0]["optimizer"].erase("beta1"); }},  // adam's, so required
      {"/cases/0/runs/0/rng_seed", "found -1", [](json& j) { j["cases"][0]["runs"][0]["rng_seed"] = -1; }},
      {"/cases/0/runs/0/outcome", "found \"exploded\"",
       [](json& j) { j["cases"][0]["runs"][0]["outcome"] = "exploded"; }},
      {"/cases/0/runs/1/role", "a run role",
       [](json& j) { j["cases"][0]["runs"][1]["role"] = "warmup"; }},
      {"/cases/0/runs/0/trace/3", "a pair [iteration, cost]",
       [](json& j) { j["cases"][0]["runs"][0]["trace"][3] = {3}; }},
      {"/cases/0/runs/0/trace/2/1", "expected a number or null, found \"x\"",
       [](json& j) { j["cases"][0]["runs"][0]["trace"][2][1] = "x"; }},
      {"/cases/0/verification/probes/1/kind", "a probe kind",
       [](json& j) { j["cases"][0]["verification"]["probes"][1]["kind"] = "middle"; }},
      {"/cases/0/verification/verified", "expected true or false",
       [](json& j) { j["cases"][0]["verification"]["verified"] = "yes"; }},
      {"/cases/0/verification/edge_probes", "a pair",
       [](json& j) { j["cases"][0]["verification"]["edge_probes"] = {1.0}; }},
      {"/cases/0/verification/probes/0/outcome", "found \"fine\"",
       [](json& j) { j["cases"][0]["verification"]["probes"][0]["outcome"] = "fine"; }},
      {"/cases/0/runs/0/converged_at", "found true",
       [](json& j) { j["cases"][0]["runs"][0]["converged_at"] = true; }},
  };
  for (const Bad& bad : table) {
    INFO(bad.pointer);
    json j = good;
    bad.break_it(j);
    try {
      results_from_json(j, "bad.json");
      FAIL("no InputError");
    } catch (const InputError& e) {
      CHECK(e.where() == "bad.json#" + bad.pointer);
      CHECK_THAT(e.message(), Catch::Contains(bad.says));
    }
  }
}

TEST_CASE("results: unknown fields are ignored (forward compatible)", "[results]") {
  json j = to_json(sample_results(30));
  j["comment"] = "added by a newer writer";
  j["cases"][0]["summary"]["new_measure"] = {1, 2, 3};
  j["cases"][0]["runs"][0]["grad_norms"] = json::array();
  const Results r = results_from_json(j, "new.json");
  CHECK(to_json(r) == to_json(sample_results(30)));
}

TEST_CASE("results: files are written atomically and read back", "[results]") {
  const fs::path dir = scratch_dir("atomic");
  const std::string path = (dir / "nested" / "deeper" / "results.json").string();
  const Results first = sample_results(2000);
  write_json_atomically(path, to_json(first));
  CHECK(files_in(dir / "nested" / "deeper") == std::set<std::string>{"results.json"});
  CHECK(to_json(read_results(path)) == to_json(first));

  Results second = sample_results(10);
  second.cases.pop_back();
  write_json_atomically(path, to_json(second));  // overwrite
  CHECK(files_in(dir / "nested" / "deeper") == std::set<std::string>{"results.json"});
  const Results again = read_results(path);
  CHECK(again.cases.size() == 1);
  CHECK(to_json(again) == to_json(second));

  std::ifstream in(path, std::ios::binary);
  const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  CHECK(text.substr(0, 3) == "{\n ");  // dump(1)
  CHECK(text.back() == '\n');
}

TEST_CASE("results: writing where no file can be made is an error naming the file", "[results]") {
  const fs::path dir = scratch_dir("unwritable");
  std::ofstream(dir / "plain-file") << "x";
  // The parent "directory" is a regular file: the path given cannot be an output (bad input).
  CHECK_THROWS_AS(write_json_atomically((dir / "plain-file" / "r.json").string(), json::object()),
                  InputError);
  // /proc admits no new files, even for root.
  CHECK_THROWS_AS(write_json_atomically("/proc/stepgate-test.json", json::object()), ToolError);
  if (::geteuid() != 0) {  // permission bits do not stop root
    const fs::path locked = dir / "locked";
    fs::create_directories(locked);
    ::chmod(locked.c_str(), 0500);
    CHECK_THROWS_AS(write_json_atomically((locked / "r.json").string(), json::object()), ToolError);
    ::chmod(locked.c_str(), 0700);
    CHECK(files_in(locked).empty());
  }
  try {
    write_json_atomically("/proc/stepgate-test.json", json::object());
  } catch (const ToolError& e) {
    CHECK_THAT(std::string(e.what()), Catch::Contains("/proc/stepgate-test.json"));
  }
}

TEST_CASE("results: read_results reports unreadable files and syntax errors by place", "[results]") {
  const fs::path dir = scratch_dir("read");
  const std::string missing = (dir / "missing.json").string();
  try {
    read_results(missing);
    FAIL("no InputError");
  } catch (const InputError& e) {
    CHECK(e.where() == missing);
    CHECK_THAT(e.message(), Catch::StartsWith("cannot read"));
  }
  const std::string broken = (dir / "broken.json").string();
  std::ofstream(broken) << "{\n  \"format\": @\n}\n";  // '@' at line 2, column 13
  try {
    read_results(broken);
    FAIL("no InputError");
  } catch (const InputError& e) {
    CHECK(e.where() == broken + ":2:13");
    CHECK_THAT(e.message(), !Catch::Contains("json.exception"));
  }
  const std::string other = (dir / "other.json").string();
  std::ofstream(other) << R"({"format": "someone.else/3"})";
  try {
    read_results(other);
    FAIL("no InputError");
  } catch (const InputError& e) {
    CHECK(e.where() == other + "#/format");
    CHECK_THAT(e.message(), Catch::Contains("stepgate.results/2"));
  }
}

TEST_CASE("results: run roles and optimizer specs round-trip by name", "[results]") {
  for (RunRole r : {RunRole::grid, RunRole::fixed, RunRole::edge, RunRole::floor, RunRole::blowup,
                    RunRole::refine})
    CHECK(run_role_from_string(to_string(r)) == r);
  CHECK(to_string(RunRole::blowup) == "blowup");
  CHECK_FALSE(run_role_from_string("Grid").has_value());

  OptimizerSpec spec;
  spec.kind = OptimizerKind::nesterov;
  spec.label = "nag";
  spec.beta = 0.95;
  spec.rho = 0.8;
  spec.batch_size = 64;
  spec.schedule = {ScheduleKind::step, 0.25, 300, 0.0, 0.0, 10};
  const OptimizerSpec back =
      optimizer_spec_from_json(json::parse(to_json(spec).dump()), "spec.json");
  CHECK(back.kind == spec.kind);
  CHECK(back.label == spec.label);
  CHECK(back.beta == spec.beta);
  CHECK(back.beta1 == spec.beta1);
  CHECK(back.beta2 == spec.beta2);
  CHECK(back.eps == spec.eps);
  // An entry lists only what its kind uses: nesterov has no rho, a step schedule no decay.
  const json written = to_json(spec);
  CHECK(written.contains("beta"));
  for (const char* key : {"rho", "beta1", "beta2", "eps"}) CHECK_FALSE(written.contains(key));
  for (const char* key : {"decay", "floor"}) CHECK_FALSE(written["schedule"].contains(key));
  CHECK(back.rho == OptimizerSpec{}.rho);  // what it was not given stays at the default
  CHECK(back.batch_size == spec.batch_size);
  CHECK(back.schedule.kind == spec.schedule.kind);
  CHECK(back.schedule.factor == spec.schedule.factor);
  CHECK(back.schedule.every == spec.schedule.every);
  CHECK(back.schedule.warmup == spec.schedule.warmup);

  // The batch sampling: written with a batch size only; absent (results of earlier versions) it
  // reads as epochs, what those versions drew; a word that is not a sampling is refused at its key.
  CHECK(written.at("sampling") == "epochs");
  spec.sampling = BatchSampling::replacement;
  CHECK(optimizer_spec_from_json(json::parse(to_json(spec).dump()), "spec.json").sampling == BatchSampling::replacement);
  json older = to_json(spec);
  older.erase("sampling");
  CHECK(optimizer_spec_from_json(older, "spec.json").sampling == BatchSampling::epochs);
  json bad = to_json(spec);
  bad["sampling"] = "shuffled";
  try {
    optimizer_spec_from_json(bad, "r.json", "/cases/0/optimizer");
    FAIL("no error");
  } catch (const InputError& e) {
    CHECK(e.where() == "r.json#/cases/0/optimizer/sampling");
    CHECK_THAT(e.message(), Catch::Contains("expected a batch sampling (epochs, independent, replacement)"));
  }
  OptimizerSpec full_batch;
  CHECK_FALSE(to_json(full_batch).contains("sampling"));
}

TEST_CASE("results: tool, host and time facts", "[results]") {
  const ToolInfo tool = this_tool();
  CHECK(tool.version == STEPGATE_VERSION);
  CHECK(std::regex_match(tool.compiler, std::regex(R"((GCC|Clang) \d+\.\d+\.\d+)")));
  CHECK(std::regex_search(tool.build, std::regex(R"(^(Release|Debug), Eigen 3\.4\.\d+$)")));
  const HostInfo host = this_host();
  CHECK_FALSE(host.os.empty());
  CHECK_FALSE(host.machine.empty());
  CHECK(host.cores == std::thread::hardware_concurrency());

  const std::time_t before = std::time(nullptr);
  const std::string now = utc_now();
  REQUIRE(std::regex_match(now, std::regex(R"(\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ)")));
  std::tm tm{};
  ::strptime(now.c_str(), "%Y-%m-%dT%H:%M:%SZ", &tm);
  const std::time_t parsed = ::timegm(&tm);
  CHECK(parsed >= before);
  CHECK(parsed <= std::time(nullptr));
}
