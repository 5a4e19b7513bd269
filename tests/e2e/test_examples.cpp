// The examples under examples/ gate the teams' own trainers (scenarios of our own): each
// shipped suite passes against its accepted baseline, and its planted change (behind a flag of
// the trainer) fails the gate on edge_moved. Needs Debian's python3 with numpy, scikit-learn and
// PyTorch (scripts/setup --tests installs them).
#include <catch2/catch.hpp>
#include <cmath>
#include <fmt/format.h>

#include "e2e_fixtures.hpp"

using namespace stepgate;
using namespace stepgate::e2e;

namespace {

fs::path example(const std::string& name) { return source_dir() / "examples" / name; }

// The example's suite with its trainer's planted flag added, written to `dir` with absolute
// paths (so the copy runs from anywhere). Nothing else changes: same cases, same seeds.
fs::path planted_suite(const std::string& name, const std::string& flag, const fs::path& dir) {
  json s = read_json(example(name) / "suite.json");
  for (json& p : s["problems"])
    if (p["kind"] == "command") {
      p["command"]["cwd"] = example(name).string();
      p["command"]["argv"].push_back(flag);
    }
  if (s.contains("datasets"))
    for (auto& [key, d] : s["datasets"].items())
      if (d.contains("csv")) d["csv"] = (example(name) / d["csv"].get<std::string>()).lexically_normal().string();
  const fs::path out = dir / (name + "-planted.json");
  write_json(out, s);
  return out;
}

void gate_example(const std::string& name, const std::string& flag, const std::string& command_case) {
  TempDir dir("example-" + name);
  const std::string suite = quoted((example(name) / "suite.json").string());
  const std::string baseline = quoted((example(name) / "baseline.json").string());
  const CliResult same = e2e::stepgate("run " + suite + " --baseline " + baseline + " --out same --jobs 2 --quiet", dir.path());
  INFO(same.out << same.err);
  report_time("example " + name + ": unchanged", same.seconds);
  CHECK(same.exit_code == 0);
  const fs::path planted = planted_suite(name, flag, dir.path());
  const CliResult changed =
      e2e::stepgate("run " + quoted(planted.string()) + " --baseline " + baseline + " --out changed --jobs 2 --quiet", dir.path());
  INFO(changed.out << changed.err);
  report_time("example " + name + ": planted " + flag, changed.seconds);
  CHECK(changed.exit_code == 1);
  const std::string md = read_text(dir / "changed" / "report.md");
  CHECK(md.find("#### fail: " + command_case) != std::string::npos);
  CHECK(md.find("**fail** `edge_moved`") != std::string::npos);
  const json before = read_json(dir / "same" / "results.json"), after = read_json(dir / "changed" / "results.json");
  fmt::print("example {}: edge {} unchanged, {} with {}\n", name, case_of(before, command_case)["summary"]["edge"].dump(),
             case_of(after, command_case)["summary"]["edge"].dump(), flag);
}

}  // namespace

TEST_CASE("examples: the numpy trainer gates, and matches the built-in logistic problem", "[examples]") {
  gate_example("numpy", "--sum-loss", "screening-numpy/none/gd");
  // Same data, objective and start through the protocol and as the built-in problem: the same
  // edge within the search precision (1%). The built-in edge itself lies within 1% below the
  // stability limit 2/λ_max = 14.298 (tests/reference/test_stability_limit.cpp).
  TempDir dir("example-numpy-compare");
  REQUIRE(e2e::stepgate("run " + quoted((example("numpy") / "suite.json").string()) + " --out r --jobs 2 --quiet",
                        dir.path()).exit_code == 0);
  const json r = read_json(dir / "r" / "results.json");
  const double trainer = case_of(r, "screening-numpy/none/gd")["summary"]["edge"];
  const double builtin = case_of(r, "screening-builtin/std/gd")["summary"]["edge"];
  const double precision = case_of(r, "screening-builtin/std/gd")["summary"]["precision"];
  fmt::print("numpy trainer edge {:.6g}, built-in logistic edge {:.6g} ({:+.2f}%)\n", trainer, builtin,
             100 * (trainer / builtin - 1));
  CHECK(std::abs(trainer / builtin - 1.0) <= precision);
}

TEST_CASE("examples: the scikit-learn SGDRegressor trainer gates", "[examples]") {
  gate_example("sklearn", "--raw-features", "progression-sgd/none/sgd-epochs");
}

TEST_CASE("examples: the PyTorch trainer gates, and serving and per-run mode agree", "[examples]") {
  gate_example("torch", "--sum-loss", "tiers-mlp/none/hb-0.9");
  // A few fixed rates in both modes: the same outcomes, iterations and traces.
  TempDir dir("example-torch-modes");
  json s = read_json(example("torch") / "suite.json");
  s["defaults"]["seeds"] = 1;
  s["defaults"]["rates"] = {{"grid", nullptr}, {"fixed", {0.05, 0.5, 1.5, 5.0}}};
  json& p = s["problems"][0];
  p["command"]["cwd"] = example("torch").string();
  write_json(dir / "serving.json", s);
  p["command"]["serve"] = false;
  p["command"]["argv"] = {"/usr/bin/python3", "train_mlp.py", "--lr", "{rate}", "--seed", "{seed}", "--steps", "{budget}",
                          "--beta", "{optimizer.beta}"};
  write_json(dir / "per-run.json", s);
  const CliResult a = e2e::stepgate("run serving.json --out s --jobs 2 --quiet", dir.path());
  const CliResult b = e2e::stepgate("run per-run.json --out p --jobs 2 --quiet", dir.path());
  INFO(a.out << a.err << b.out << b.err);
  // Fixed rates only: no edge is located, so the baseline-free headroom rule may fail (exit 1)
  // but must fail alike in both modes; anything else (2: bad input, 3: tool error) is a defect.
  REQUIRE(a.exit_code <= 1);
  REQUIRE(a.exit_code == b.exit_code);
  const json rs = read_json(dir / "s" / "results.json"), rp = read_json(dir / "p" / "results.json");
  const json& x = rs["cases"][0]["runs"];
  const json& y = rp["cases"][0]["runs"];
  REQUIRE(x.size() == 5);  // the four fixed rates and the pinned one
  REQUIRE(y.size() == 5);
  for (std::size_t i = 0; i < 5; ++i) {
    INFO("rate " << x[i]["rate"]);
    CHECK(x[i]["outcome"] == y[i]["outcome"]);
    CHECK(x[i]["converged_at"] == y[i]["converged_at"]);
    CHECK(x[i]["trace"] == y[i]["trace"]);
  }
}
