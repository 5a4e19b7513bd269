// The theory rule by kind of threshold (docs/design.md, "Gate"): a quadratic's limit bounds the
// edge and is the blow-up; a local one (a nonlinear loss linearised at its optimum) bounds the
// edge only; a mean-square limit is a lower bound on the blow-up.
#include <catch2/catch.hpp>
#include <string>

#include "stepgate/gate/findings.hpp"
#include "stepgate/gate/theory_rule.hpp"

using namespace stepgate;

namespace {

CaseResult case_of(const std::string& threshold, double edge, double predicted, double blowup,
                   OptimizerKind kind = OptimizerKind::gd) {
  CaseResult c;
  c.id = "p/std/opt";
  c.optimizer.kind = kind;
  c.theory.predicted_blowup = predicted;
  c.theory.rule = kind == OptimizerKind::gd ? "2/L" : "2(1+beta)/L";
  c.theory.threshold = threshold;
  c.summary.edge = c.summary.edge_lo = edge;
  c.summary.blowup = blowup;
  c.summary.precision = 0.01;
  return c;
}

Finding theory_of(const CaseResult& c) {
  Results r;
  r.cases.push_back(c);
  const GateReport g = apply_gate(r, nullptr);
  for (const Finding& f : g.findings)
    if (f.rule == Rule::theory) return f;
  FAIL("no theory finding");
  return {};
}

}  // namespace

TEST_CASE("theory: a local threshold bounds the edge and leaves the blow-up alone", "[gate][theory]") {
  // Logistic with l2 = 0.5 (the demo's renewals case at that penalty): edge 2.682 against
  // 2/L* = 2.689, first divergence at 3.948 = 2/l2. It failed before ("factor 1.468").
  const Finding f = theory_of(case_of("local", 2.682, 2.689, 3.948));
  INFO(f.message);
  CHECK(f.severity == Severity::pass);
  CHECK(f.message.find("edge 2.682 vs threshold 2.689 by 2/L (factor 1.003") != std::string::npos);
  CHECK(f.message.find("blow-up 3.948 not compared") != std::string::npos);
  CHECK(f.current == 2.682);
  // The same numbers on a quadratic are a real disagreement: there the limit is the blow-up.
  const Finding q = theory_of(case_of("quadratic", 2.682, 2.689, 3.948));
  INFO(q.message);
  CHECK(q.severity == Severity::fail);
  CHECK(q.current == 3.948);
  // The edge is compared either way on a local threshold too.
  CHECK(theory_of(case_of("local", 2.689 / 1.3, 2.689, kMissing)).severity == Severity::fail);
  CHECK(theory_of(case_of("local", 2.689 / 1.2, 2.689, kMissing)).severity == Severity::pass);
  // And the one-sided part stays: an edge above the limit by more than precision + slack.
  CHECK(theory_of(case_of("local", 2.689 * 1.03, 2.689, kMissing)).severity == Severity::fail);
  CHECK(theory_of(case_of("local", 2.689 * 1.019, 2.689, kMissing)).severity == Severity::pass);
  // No safe rate: nothing to compare on a local threshold (softmax orbits above it rather than
  // blowing up; before, this failed as "predicts blow-up ... but no run diverged").
  CaseResult none = case_of("local", kMissing, 4e-4, kMissing);
  for (double rate : {0.01, 0.1, 1.0}) {
    none.runs.push_back({});
    none.runs.back().record.rate = rate;
  }
  const Finding n = theory_of(none);
  CHECK(n.severity == Severity::pass);
  CHECK(n.message.find("the lowest rate run, 0.01, lies above the threshold 0.0004") != std::string::npos);
  CHECK(theory_of(case_of("local", kMissing, 2.689, 3.948)).severity == Severity::pass);
}

TEST_CASE("theory: a quadratic's blow-up off by 1.5 either way fails", "[gate][theory]") {
  for (double off : {1.5, 1.0 / 1.5}) {
    INFO("blow-up x " << off);
    const Finding f = theory_of(case_of("quadratic", 1.99, 2.0, 2.0 * off));
    INFO(f.message);
    CHECK(f.severity == Severity::fail);
    CHECK(f.message.find("factor 1.500") != std::string::npos);
  }
  CHECK(theory_of(case_of("quadratic", 1.99, 2.0, 2.01)).severity == Severity::pass);
  // Heavy ball on a quadratic: the edge is where the ringing exceeds overshoot_limit, far below
  // the limit (delivery-ls/std/hb-0.9 in the demo: edge 0.970, limit 3.639, blow-up 3.641), and
  // passes; the blow-up is still compared.
  const Finding hb = theory_of(case_of("quadratic", 0.9705, 3.639, 3.641, OptimizerKind::momentum));
  INFO(hb.message);
  CHECK(hb.severity == Severity::pass);
  CHECK(hb.message.find("overshoot_limit") != std::string::npos);
  CHECK(theory_of(case_of("quadratic", 0.9705, 3.639, 3.639 * 1.5, OptimizerKind::momentum)).severity ==
        Severity::fail);
  CHECK(theory_of(case_of("quadratic", 3.639 * 1.03, 3.639, 3.8, OptimizerKind::momentum)).severity ==
        Severity::fail);
  // With momentum on a local threshold only an edge above the limit can fail.
  CHECK(theory_of(case_of("local", 0.9705, 3.639, 9.0, OptimizerKind::momentum)).severity == Severity::pass);
}

TEST_CASE("theory: a mean-square limit is a lower bound on the blow-up", "[gate][theory]") {
  // Limit 1.0; precision 0.01 + theory_slack 0.01: a blow-up down to 1/1.02 = 0.9804 passes.
  for (const auto& [blowup, expect] : std::vector<std::pair<double, Severity>>{
           {0.5, Severity::fail}, {0.97, Severity::fail}, {0.981, Severity::pass}, {1.0, Severity::pass},
           {1.6, Severity::pass}, {40.0, Severity::pass}}) {
    // The edge of a noisy run may lie far below the limit, or above it: never compared.
    for (double edge : {0.05, 0.9, 1.5}) {
      if (edge >= blowup) continue;
      INFO("blow-up " << blowup << ", edge " << edge);
      const Finding f = theory_of(case_of("mean_square", edge, 1.0, blowup, OptimizerKind::sgd));
      INFO(f.message);
      CHECK(f.severity == expect);
      CHECK(f.current == blowup);
      if (expect == Severity::fail) CHECK(f.message.find("below the mean-square stability limit 1") != std::string::npos);
    }
  }
  CaseResult none = case_of("mean_square", 0.3, 1.0, kMissing, OptimizerKind::sgd);
  none.runs.push_back({});
  none.runs.back().record.rate = 10.0;
  const Finding f = theory_of(none);
  CHECK(f.severity == Severity::pass);
  CHECK(f.message.find("no run diverged up to 10") != std::string::npos);
  CaseResult slack = case_of("mean_square", 0.3, 1.0, 0.9, OptimizerKind::sgd);
  slack.gate.theory_slack = 0.2;  // 1/1.21 = 0.826
  CHECK(theory_of(slack).severity == Severity::pass);
}

TEST_CASE("theory: results written before the threshold kind existed are read as local", "[gate][theory]") {
  CHECK(threshold_kind("") == ThresholdKind::local);
  CHECK(threshold_kind("local") == ThresholdKind::local);
  CHECK(threshold_kind("quadratic") == ThresholdKind::quadratic);
  CHECK(threshold_kind("mean_square") == ThresholdKind::mean_square);
  CHECK(threshold_kind("some later kind") == ThresholdKind::local);
  // So the renewals-like case passes, and a wrong edge still fails.
  CHECK(theory_of(case_of("", 2.682, 2.689, 3.948)).severity == Severity::pass);
  CHECK(theory_of(case_of("", 1.5, 2.689, kMissing)).severity == Severity::fail);
  CHECK(theory_of(case_of("", 2.8, 2.689, kMissing)).severity == Severity::fail);
  // No prediction, no finding.
  CHECK_FALSE(theory_finding(case_of("", 1.0, kMissing, 2.0)).has_value());
}
