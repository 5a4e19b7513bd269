// Gate rules' threshold arithmetic, tested directly on hand-built results (README, "Gate rules").
#include <catch2/catch.hpp>
#include <cmath>

#include "stepgate/gate/baseline.hpp"
#include "stepgate/gate/findings.hpp"

using namespace stepgate;

namespace {

CaseResult theory_case(double edge, double predicted, double blowup) {
  CaseResult c;
  c.id = "p/none/gd";
  c.theory.predicted_blowup = predicted;
  c.theory.rule = "2/L";
  c.summary.edge = c.summary.edge_lo = edge;
  c.summary.floor = edge / 100;
  c.summary.blowup = blowup;
  c.summary.precision = 0.01;
  return c;
}

const Finding* rule_of(const GateReport& g, Rule rule) {
  for (const Finding& f : g.findings)
    if (f.rule == rule) return &f;
  return nullptr;
}

Baseline baseline_of(const CaseResult& c) {
  Results r;
  r.cases.push_back(c);
  return baseline_from_results(r, "t");
}

GateReport gate_one(const CaseResult& c, const Baseline* b = nullptr) {
  Results r;
  r.cases.push_back(c);
  return apply_gate(r, b);
}

}  // namespace

TEST_CASE("theory rule: an edge above predicted x (1 + precision + slack) fails", "[gate]") {
  // Predicted 2.0; precision 0.01 and slack 0.01: the limit is 2.04.
  for (const auto& [edge, expect] : std::vector<std::pair<double, Severity>>{
           {2.0, Severity::pass}, {2.039, Severity::pass}, {2.041, Severity::fail}, {2.2, Severity::fail}}) {
    INFO("edge " << edge);
    const GateReport g = gate_one(theory_case(edge, 2.0, 2.0 * 1.005));
    const Finding* f = rule_of(g, Rule::theory);
    REQUIRE(f);
    CHECK(f->severity == expect);
    if (expect == Severity::fail) CHECK(f->message.find("stability limit") != std::string::npos);
  }
  // The one-sided rule catches an edge 10% high even though the blow-up is far off and
  // theory_factor (1.25) would have passed it; this was the logistic demo case before.
  const GateReport g = gate_one(theory_case(17.68, 16.07, kMissing));
  CHECK(rule_of(g, Rule::theory)->severity == Severity::fail);
  // theory_slack is a tolerance of its own.
  CaseResult loose = theory_case(2.2, 2.0, 2.01);
  loose.gate.theory_slack = 0.2;
  CHECK(rule_of(gate_one(loose), Rule::theory)->severity == Severity::pass);
  // A blow-up far above the prediction still fails as before.
  CHECK(rule_of(gate_one(theory_case(1.9, 2.0, 3.0)), Rule::theory)->severity == Severity::fail);
}

TEST_CASE("edge_moved: plain relative move against precision and seed spreads", "[gate]") {
  const Baseline b = baseline_of(theory_case(1.0, kMissing, kMissing));
  // Allowed: 0.05 + 0.01 precision = 6%.
  CHECK(rule_of(gate_one(theory_case(1.059, kMissing, kMissing), &b), Rule::edge_moved)->severity == Severity::pass);
  CHECK(rule_of(gate_one(theory_case(1.061, kMissing, kMissing), &b), Rule::edge_moved)->severity == Severity::fail);
  CHECK(rule_of(gate_one(theory_case(0.939, kMissing, kMissing), &b), Rule::edge_moved)->severity == Severity::fail);
  CaseResult spread = theory_case(1.1, kMissing, kMissing);
  spread.summary.edge_spread = 1.05;  // +5% more allowed
  CHECK(rule_of(gate_one(spread, &b), Rule::edge_moved)->severity == Severity::pass);
}

TEST_CASE("edge_moved: ragged zones that overlap do not count as a move", "[gate]") {
  CHECK(ragged_move(1.0, 1.0, 1.2, 1.2) == Approx(0.2));
  CHECK(ragged_move(1.0, 1.0, 0.8, 0.8) == Approx(0.2));
  CHECK(ragged_move(1.0, 1.3, 1.2, 1.2) == 0.0);
  CHECK(ragged_move(1.2, 1.5, 1.0, 1.3) == 0.0);
  CHECK(ragged_move(1.0, 1.3, 1.43, 1.5) == Approx(0.1));
  // Heavy ball on a quadratic (measured): edge 0.2533 while 0.2579 and 0.3162 converge. A
  // re-run where the alternation falls differently must not flap.
  CaseResult base = theory_case(0.2533, kMissing, kMissing);
  base.summary.ragged_top = 0.3162;
  const Baseline b = baseline_of(base);
  CaseResult now = theory_case(0.3162, kMissing, kMissing);  // edge +25%, inside the old zone
  const GateReport report = gate_one(now, &b);  // the finding lives in the report: keep it
  const Finding* f = rule_of(report, Rule::edge_moved);
  REQUIRE(f);
  CHECK(f->severity == Severity::pass);
  CHECK(f->message.find("ragged zones") != std::string::npos);
  // Beyond the zone, the move counts from the zone's end: 0.3162 -> 0.36 is +13.9%.
  now.summary.edge = 0.36;
  CHECK(rule_of(gate_one(now, &b), Rule::edge_moved)->severity == Severity::fail);
}
