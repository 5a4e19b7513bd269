// edge_moved, floor_moved and best_moved measure moves as factors, the same size both ways
// (docs/design.md, "Gate"): drops and rises of 2x, 6.5x and 56x are caught at the default
// tolerances whatever the seed spreads, and an unchanged re-run passes.
#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "stepgate/gate/baseline.hpp"
#include "stepgate/gate/findings.hpp"

using namespace stepgate;

namespace {

// A case with every located rate at 1 (edge), 0.01 (floor), 0.3 (best), precision 0.01, the
// default tolerances, and the given seed spread.
CaseResult located(double edge, double floor, double best, double spread) {
  CaseResult c;
  c.id = "p/none/gd";
  c.summary.edge = c.summary.edge_lo = edge;
  c.summary.floor = floor;
  c.summary.best_rate = best;
  c.summary.precision = 0.01;
  c.summary.edge_spread = spread;
  return c;
}

Baseline baseline_of(const CaseResult& c) {
  Results r;
  r.cases.push_back(c);
  return baseline_from_results(r, "t");
}

Finding finding_of(const CaseResult& now, const Baseline& b, Rule rule) {
  Results r;
  r.cases.push_back(now);
  const GateReport g = apply_gate(r, &b);
  for (const Finding& f : g.findings)
    if (f.rule == rule) return f;
  FAIL("no finding of " << to_string(rule));
  return {};
}

const std::vector<double> kSpreads = {1.0, 1.7, 2.5};
const std::vector<double> kFactors = {2.0, 6.5, 56.0};

}  // namespace

TEST_CASE("moves: 2x, 6.5x and 56x drops and rises are caught with seed spreads 1 to 2.5", "[gate]") {
  int checked = 0;
  for (double base_spread : kSpreads)
    for (double now_spread : kSpreads)
      for (double factor : kFactors)
        for (double direction : {-1.0, 1.0}) {
          const double f = std::pow(factor, direction);  // 1/56 ... 56
          INFO("factor " << f << ", spreads " << base_spread << " and " << now_spread);
          const Baseline b = baseline_of(located(1.0, 0.01, 0.3, base_spread));
          const CaseResult edge = located(1.0 * f, 0.01, 0.3, now_spread);
          const Finding e = finding_of(edge, b, Rule::edge_moved);
          INFO(e.message);
          CHECK(e.severity == Severity::fail);
          const CaseResult floor = located(1.0, 0.01 * f, 0.3, now_spread);
          CHECK(finding_of(floor, b, Rule::floor_moved).severity == Severity::warn);
          const CaseResult best = located(1.0, 0.01, 0.3 * f, now_spread);
          CHECK(finding_of(best, b, Rule::best_moved).severity == Severity::warn);
          ++checked;
        }
  CHECK(checked == 54);
}

TEST_CASE("moves: an unchanged re-run passes every rule whatever the spreads", "[gate]") {
  for (double base_spread : kSpreads)
    for (double now_spread : kSpreads) {
      INFO("spreads " << base_spread << " and " << now_spread);
      const Baseline b = baseline_of(located(0.1155, 0.002, 0.05, base_spread));
      const CaseResult now = located(0.1155, 0.002, 0.05, now_spread);
      for (Rule rule : {Rule::edge_moved, Rule::floor_moved, Rule::best_moved})
        CHECK(finding_of(now, b, rule).severity == Severity::pass);
    }
}

TEST_CASE("moves: just inside the allowance passes, just outside does not, the same both ways", "[gate]") {
  const Baseline b = baseline_of(located(1.0, 0.01, 0.3, 2.5));
  struct Limit {
    Rule rule;
    double inside, outside;  // factors: allowed (1.05)(1.01) = 1.0605, (1.25)(1.01) = 1.2625, best below 2
    Severity beyond;
  };
  for (const Limit& l : std::vector<Limit>{{Rule::edge_moved, 1.0604, 1.0606, Severity::fail},
                                           {Rule::floor_moved, 1.2624, 1.2626, Severity::warn},
                                           {Rule::best_moved, 1.999, 2.0, Severity::warn}})
    for (double direction : {-1.0, 1.0}) {
      INFO(to_string(l.rule) << " direction " << direction);
      auto moved = [&](double factor) {
        const double f = std::pow(factor, direction);
        return located(l.rule == Rule::edge_moved ? f : 1.0, l.rule == Rule::floor_moved ? 0.01 * f : 0.01,
                       l.rule == Rule::best_moved ? 0.3 * f : 0.3, 2.5);
      };
      CHECK(finding_of(moved(l.inside), b, l.rule).severity == Severity::pass);
      CHECK(finding_of(moved(l.outside), b, l.rule).severity == l.beyond);
    }
}

TEST_CASE("moves: the messages show the user's own numbers", "[gate]") {
  // The drop that passed before: 0.1155 -> 0.01778 with both spreads 1.07.
  const Baseline b = baseline_of(located(0.1155, 0.002, 0.05, 1.07));
  const Finding e = finding_of(located(0.01778, 0.002, 0.05, 1.07), b, Rule::edge_moved);
  INFO(e.message);
  CHECK(e.severity == Severity::fail);
  CHECK(e.message.find("edge 0.1155 -> 0.01778 (÷6.496;") != std::string::npos);
  CHECK(e.message.find("allowed ×/÷1.06 = edge_moved 0.05 with precision 0.01") != std::string::npos);
  CHECK(e.message.find("seed spread ×1.07") != std::string::npos);
  CHECK(e.message.find('%') == std::string::npos);  // no percentage stands in for the tolerance
  const Finding f = finding_of(located(0.1155, 0.004, 0.05, 1.07), b, Rule::floor_moved);
  CHECK(f.message == "floor 0.002 -> 0.004 (×2; allowed ×/÷1.262 = floor_moved 0.25 with precision 0.01)");
  const Finding g = finding_of(located(0.1155, 0.002, 0.025, 1.07), b, Rule::best_moved);
  CHECK(g.message == "best rate 0.05 -> 0.025 (÷2; allowed less than ×/÷2 = best_moved 2)");
}

TEST_CASE("moves: precision is the wider of the two searches', and a suite's own tolerance counts", "[gate]") {
  CaseResult base = located(1.0, 0.01, 0.3, 1.0);
  base.summary.precision = 0.05;
  const Baseline b = baseline_of(base);
  // (1.05)(1.05) = 1.1025 allowed: the baseline's bracket was 5% wide.
  CHECK(finding_of(located(1.10, 0.01, 0.3, 1.0), b, Rule::edge_moved).severity == Severity::pass);
  CHECK(finding_of(located(1.0 / 1.105, 0.01, 0.3, 1.0), b, Rule::edge_moved).severity == Severity::fail);
  CaseResult loose = located(1.0 / 1.5, 0.01, 0.3, 1.0);
  loose.gate.edge_moved = 0.5;  // (1.5)(1.05) = 1.575
  const Finding f = finding_of(loose, b, Rule::edge_moved);
  CHECK(f.severity == Severity::pass);
  CHECK(f.message.find("allowed ×/÷1.575 = edge_moved 0.5 with precision 0.05") != std::string::npos);
}

TEST_CASE("moves: ragged zones are compared by their log-distance", "[gate]") {
  CaseResult base = located(1.0, 0.01, 0.3, 1.0);
  base.summary.ragged_top = 1.3;
  const Baseline b = baseline_of(base);
  // Inside the old zone: no move. Above it by 1.06: inside the allowance. Far below: caught.
  CHECK(finding_of(located(1.25, 0.01, 0.3, 1.0), b, Rule::edge_moved).severity == Severity::pass);
  CHECK(finding_of(located(1.3 * 1.06, 0.01, 0.3, 1.0), b, Rule::edge_moved).severity == Severity::pass);
  CaseResult far = located(1.0 / 6.5, 0.01, 0.3, 1.0);
  far.summary.ragged_top = 1.0 / 6.0;
  const Finding f = finding_of(far, b, Rule::edge_moved);
  INFO(f.message);
  CHECK(f.severity == Severity::fail);
  CHECK(f.message.find("a factor 6 apart") != std::string::npos);
}
