// Writes DIR/report.html for the browser check: two cases whose names, reasons and sources
// carry markup that would run script if any of it reached the page unescaped.
#include <cmath>
#include <fstream>
#include <iostream>
#include <string>

#include "stepgate/gate/baseline.hpp"
#include "stepgate/gate/findings.hpp"
#include "stepgate/report/reporter.hpp"
#include "support/sample_runs.hpp"

using namespace stepgate;

namespace {

const std::string kImg = "<img src=x onerror=\"document.title='pwned'\">";
const std::string kScript = "<script>document.title='pwned'</script>";

// A run whose gap shrinks (or grows, when diverged) geometrically, evaluated every 10 steps.
StoredRun make_run(double rate, long seed_index, Outcome outcome, RunRole role) {
  StoredRun s = test::sample_run({.rate = rate,
                                  .rng_seed = 7 + static_cast<std::uint64_t>(seed_index),
                                  .seed_index = seed_index,
                                  .outcome = outcome,
                                  .role = role,
                                  .reason = "reason " + kScript,
                                  .optimum = 1.0,
                                  .gap = 4.0,
                                  .per_step = outcome == Outcome::diverged ? 1.3 : 1.0 - std::min(0.2, rate * 0.4),
                                  .every = 10,
                                  .last = 400,
                                  .gap_limit = outcome == Outcome::diverged ? 1e6 : HUGE_VAL});
  s.record.steps = s.record.trace.back().iter;
  if (outcome == Outcome::converged) s.record.iterations = s.record.steps / 2;
  return s;
}

CaseResult make_case(const std::string& id, double edge) {
  CaseResult c;
  c.id = id;
  c.problem = kScript;
  c.problem_kind = "quadratic";
  c.scaling = "none";
  c.dataset = kImg;
  c.optimum_cost = 1.0;
  c.theory.L = 1.0;
  c.theory.predicted_blowup = 2.0;
  c.theory.rule = "2/L";
  c.theory.method = kImg;
  c.summary.floor = 0.01;
  c.summary.edge = edge;
  c.summary.blowup = edge * 1.05;
  c.summary.best_rate = edge / 2;
  c.summary.pinned = 0.1;
  c.summary.headroom = edge / 0.1;
  c.summary.precision = 0.01;
  c.summary.reference = ReferenceSummary{};
  c.summary.reference->min_lre = 9.0;
  c.summary.reference->source = kScript;
  for (long seed = 0; seed < 3; ++seed) {
    c.summary.seeds.push_back({static_cast<std::uint64_t>(seed + 1)});
    for (int i = 0; i < 10; ++i) {
      const double rate = 0.001 * std::pow(10.0, i / 3.0);
      const Outcome o = rate < 0.009 ? Outcome::slow : rate <= edge ? Outcome::converged : Outcome::diverged;
      c.runs.push_back(make_run(rate, seed, o, RunRole::grid));
    }
  }
  c.summary.runs = static_cast<int>(c.runs.size());
  return c;
}

}  // namespace

int main(int argc, char** argv) {
  if (argc != 2) {
    std::cerr << "usage: make_sample_report DIR\n";
    return 2;
  }
  Results results;
  results.suite = {"browser-sample", "suites/" + kImg + ".json", "0123456789abcdef"};
  results.tool = {"0.1.0", kScript, "Release"};
  results.cases.push_back(make_case(kImg + "/none/gd", 1.0));
  results.cases.push_back(make_case(kScript + "/none/gd", 0.5));
  Baseline baseline;
  baseline.suite = results.suite;
  baseline.accepted = kScript;
  for (const CaseResult& c : results.cases) {
    BaselineCase b;
    b.id = c.id;
    b.data_sha256 = c.data_sha256;
    b.floor = 0.01;
    b.edge = 1.0;  // the second case lost half its range: a failing finding
    b.best_rate = 0.5;
    b.pinned = 0.1;
    b.headroom = 10.0;
    b.precision = 0.01;
    baseline.cases.push_back(b);
  }
  const GateReport gate = apply_gate(results, &baseline);
  const auto reporter = make_html_reporter();
  const std::string path = std::string(argv[1]) + "/" + reporter->file_name();
  std::ofstream out(path, std::ios::binary);
  out << reporter->render({results, &baseline, gate});
  if (!out) {
    std::cerr << "cannot write " << path << "\n";
    return 3;
  }
  std::cout << path << "\n";
  return 0;
}
