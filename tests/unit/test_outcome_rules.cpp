// Outcome classification on hand-built traces: one test per outcome and per criterion, with the
// definitions of docs/design.md ("Runs and outcomes") as the specification.
#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include "stepgate/analysis/outcome_rules.hpp"

using namespace stepgate;

namespace {

// A trace whose gap (and cost, J* = 0) follows `values`, one evaluation per iteration.
std::vector<TracePoint> gap_trace(const std::vector<double>& values) {
  std::vector<TracePoint> t;
  for (std::size_t k = 0; k < values.size(); ++k)
    t.push_back({static_cast<long>(k), values[k], values[k], std::sqrt(std::abs(values[k]))});
  return t;
}

std::vector<double> geometric(double start, double ratio, int n) {
  std::vector<double> v;
  for (int k = 0; k < n; ++k) v.push_back(start * std::pow(ratio, k));
  return v;
}

}  // namespace

// Settings that test a criterion alone: confirmation has tests of its own below.
static OutcomeSettings criterion_alone() {
  OutcomeSettings s;
  s.confirm_min = 0;
  s.confirm_factor = 0.0;
  return s;
}

TEST_CASE("gap criterion: converged at the first iteration of the holding stretch", "[outcome]") {
  OutcomeSettings s = criterion_alone();
  s.tol = 1e-3;
  s.hold = 2;
  // gap_k = 0.5^k: 0.5^10 = 9.77e-4 is the first value <= 1e-3.
  const auto c = classify(gap_trace(geometric(1.0, 0.5, 40)), s, true);
  CHECK(c.outcome == Outcome::converged);
  REQUIRE(c.iterations.has_value());
  CHECK(*c.iterations == 10);
  CHECK(c.overshoot == 0.0);
}

TEST_CASE("gap criterion: a single dip below tol that does not hold is not convergence", "[outcome]") {
  OutcomeSettings s;
  s.tol = 1e-2;
  s.hold = 3;
  s.overshoot_limit = 100.0;  // isolate the hold rule from the overshoot rule
  std::vector<double> v = {1.0, 0.5, 0.005, 0.5, 0.4, 0.3, 0.2};
  const auto c = classify(gap_trace(v), s, true);
  CHECK(c.outcome == Outcome::slow);
  CHECK_FALSE(c.iterations.has_value());
}

TEST_CASE("diverged: non-finite cost stops at once", "[outcome]") {
  OutcomeSettings s;
  OutcomeMonitor m(s, true);
  CHECK_FALSE(m.observe({0, 1.0, 1.0, 1.0}));
  CHECK(m.observe({1, NAN, NAN, NAN}));
  CHECK(m.result().outcome == Outcome::diverged);
  CHECK(m.observe({2, 0.1, 0.1, 0.1}));  // still decided after more points
  CHECK(m.result().outcome == Outcome::diverged);
}

TEST_CASE("diverged: gap above blowup_factor times gap0", "[outcome]") {
  OutcomeSettings s;
  s.blowup_factor = 100.0;
  // 2^k passes 100 at k = 7 (128).
  const auto t = gap_trace(geometric(1.0, 2.0, 20));
  OutcomeMonitor m(s, true);
  long stopped = -1;
  for (const auto& p : t)
    if (m.observe(p)) { stopped = p.iter; break; }
  CHECK(stopped == 7);
  CHECK(m.result().outcome == Outcome::diverged);
}

TEST_CASE("diverged without J*: cost above blowup_factor times J0", "[outcome]") {
  OutcomeSettings s;
  s.blowup_factor = 10.0;
  std::vector<TracePoint> t;
  for (int k = 0; k < 10; ++k) t.push_back({k, 3.0 * std::pow(2.0, k), kMissing, 1.0});
  const auto c = classify(t, s, false);
  CHECK(c.outcome == Outcome::diverged);  // 3*16 = 48 > 30 at k = 4
}

TEST_CASE("oscillating: cost rose by more than overshoot_limit of its total fall", "[outcome]") {
  OutcomeSettings s;
  s.tol = 1e-9;  // never met
  s.overshoot_limit = 0.5;
  // 10 -> 2 -> 8 -> 1 -> 6 -> 1: rises 6 + 5 = 11, fall J0 - min = 9, overshoot 11/9.
  const auto c = classify(gap_trace({10, 2, 8, 1, 6, 1}), s, true);
  CHECK(c.outcome == Outcome::oscillating);
  CHECK(c.overshoot == Approx(11.0 / 9.0));
}

TEST_CASE("oscillating even when the criterion is met, if overshoot is above the limit", "[outcome]") {
  OutcomeSettings s;
  s.tol = 1e-2;
  s.hold = 1;
  s.overshoot_limit = 0.5;
  // rises 6 (2->8), fall 10 - 0.001: overshoot 0.6 > 0.5; criterion met at k = 3, 4.
  const auto c = classify(gap_trace({10, 2, 8, 0.05, 0.01, 0.001}), s, true);
  CHECK(c.outcome == Outcome::oscillating);
}

TEST_CASE("converged with small overshoot under the limit", "[outcome]") {
  OutcomeSettings s = criterion_alone();
  s.tol = 1e-2;
  s.hold = 1;
  s.overshoot_limit = 0.5;
  // Met at k = 3 (0.09), held at k = 4: the run stops there, so the overshoot is over the trace
  // up to k = 4: rise 1 (2 -> 3), fall 10 - 0.05.
  const auto c = classify(gap_trace({10, 2, 3, 0.09, 0.05, 0.01}), s, true);
  CHECK(c.outcome == Outcome::converged);
  CHECK(*c.iterations == 3);
  CHECK(c.overshoot == Approx(1.0 / 9.95));
}

TEST_CASE("slow: steady decrease that never reaches tol within the budget", "[outcome]") {
  OutcomeSettings s;  // gap tol 1e-6 by default
  const auto c = classify(gap_trace(geometric(1.0, 0.99, 100)), s, true);
  CHECK(c.outcome == Outcome::slow);
  CHECK(c.overshoot == 0.0);
}

TEST_CASE("grad criterion: gradient norm relative to its start", "[outcome]") {
  OutcomeSettings s = criterion_alone();
  s.criterion = Criterion::grad;
  s.tol = 1.5e-2;
  s.hold = 0;
  std::vector<TracePoint> t;
  for (int k = 0; k < 10; ++k) t.push_back({k, 1.0 / (k + 1), kMissing, std::pow(0.1, k)});
  const auto c = classify(t, s, false);
  CHECK(c.outcome == Outcome::converged);
  CHECK(*c.iterations == 2);  // 0.1^1 > 1.5e-2 >= 0.1^2
}

TEST_CASE("cost criterion: first cost at or below the target", "[outcome]") {
  OutcomeSettings s;
  s.criterion = Criterion::cost;
  s.target = 0.25;
  s.hold = 1;
  std::vector<TracePoint> t;
  for (int k = 0; k < 10; ++k) t.push_back({10L * k, 1.0 / (k + 1), kMissing, 1.0});
  const auto c = classify(t, s, false);
  CHECK(c.outcome == Outcome::converged);
  CHECK(*c.iterations == 30);  // 1/4 at evaluation 3, which is iteration 30
}

TEST_CASE("plateau criterion: relative improvement over the window below tol", "[outcome]") {
  OutcomeSettings s = criterion_alone();
  s.criterion = Criterion::plateau;
  s.tol = 1e-3;
  s.plateau_window = 2;
  s.hold = 0;
  // Costs 5, 4, 3, 2.0, 2.0005... relative improvement over two evaluations.
  std::vector<double> v = {5, 4, 3, 2, 1.9995, 1.999, 1.9989};
  std::vector<TracePoint> t;
  for (std::size_t k = 0; k < v.size(); ++k) t.push_back({static_cast<long>(k), v[k], kMissing, 1.0});
  const auto c = classify(t, s, false);
  CHECK(c.outcome == Outcome::converged);
  // k=5: (2 - 1.999)/2 = 5e-4 < 1e-3; k=4: (3 - 1.9995)/3 > 1e-3.
  CHECK(*c.iterations == 5);
}

TEST_CASE("automatic criterion resolves to gap with J*, plateau without", "[outcome]") {
  OutcomeSettings s;
  CHECK(OutcomeMonitor(s, true).criterion() == Criterion::gap);
  CHECK(OutcomeMonitor(s, false).criterion() == Criterion::plateau);
  CHECK(s.tolerance(Criterion::gap) == 1e-6);
  CHECK(s.tolerance(Criterion::grad) == 1e-3);
  CHECK(s.tolerance(Criterion::plateau) == 1e-8);
  CHECK(criterion_from_string("grad") == Criterion::grad);
  CHECK_FALSE(criterion_from_string("gradient").has_value());
}

TEST_CASE("outcome names round-trip", "[outcome]") {
  for (Outcome o : {Outcome::converged, Outcome::slow, Outcome::oscillating, Outcome::diverged,
                    Outcome::failed})
    CHECK(outcome_from_string(to_string(o)) == o);
  CHECK_FALSE(outcome_from_string("exploded").has_value());
}

// Confirmed convergence (docs/design.md, "Confirmed convergence"). The traces are modelled on
// gd at a rate just above 2/λ_max(∇²J(w*)) on a logistic loss: the gap falls fast along the
// other modes, and the unstable top mode, started tiny, grows by |1 − αλ| per iteration.
TEST_CASE("confirmation: a trace that meets the criterion and then grows is not converged", "[outcome]") {
  OutcomeSettings s;
  s.tol = 1e-6;
  std::vector<double> v;
  for (int k = 0; k <= 400; ++k) {
    const double fast = std::pow(0.3, k);              // the stable modes
    const double top = 1e-9 * std::pow(1.1 * 1.1, k);   // the unstable mode's gap, growing
    v.push_back(fast + std::min(top, 3.5e-2));          // it saturates in a period-2 orbit
  }
  const auto c = classify(gap_trace(v), s, true);
  CHECK(c.outcome != Outcome::converged);
  CHECK_FALSE(c.confirmation.has_value());
  CHECK(c.reason.find("lost at") != std::string::npos);
  // The same trace with the old rule (no stretch) was taken as converged at iteration 12.
  s.confirm_min = 0;
  s.confirm_factor = 0.0;
  const auto early = classify(gap_trace(v), s, true);
  CHECK(early.outcome == Outcome::converged);
  CHECK(*early.iterations == 12);
}

TEST_CASE("confirmation: a trace that holds is converged, iterations at the stretch's start", "[outcome]") {
  OutcomeSettings s;
  s.tol = 1e-6;
  s.confirm_min = 50;
  s.confirm_factor = 0.5;
  // gap_k = 0.7^k: first ≤ 1e-6 at k = 39 (0.7^39 = 9.1e-7); confirmation to 39 + 50 = 89.
  const auto trace = gap_trace(geometric(1.0, 0.7, 200));
  OutcomeMonitor m(s, true, 199);
  long decided_at = -1;
  for (const TracePoint& p : trace)
    if (m.observe(p)) { decided_at = p.iter; break; }
  CHECK(decided_at == 89);
  const auto c = m.result();
  CHECK(c.outcome == Outcome::converged);
  CHECK(*c.iterations == 39);
  REQUIRE(c.confirmation.has_value());
  CHECK(c.confirmation->method == "stretch");
  CHECK(c.confirmation->until == 89);
  CHECK(std::isnan(c.confirmation->probe_growth));
}

TEST_CASE("confirmation: the stretch is a multiple of the time first taken", "[outcome]") {
  OutcomeSettings s;
  s.tol = 1e-6;
  s.confirm_min = 10;
  s.confirm_factor = 0.5;
  // gap_k = 0.99^k: first ≤ 1e-6 at k = 1375; stretch max(10, ceil(687.5)) = 688.
  const auto c = classify(gap_trace(geometric(1.0, 0.99, 3000)), s, true);
  REQUIRE(c.outcome == Outcome::converged);
  CHECK(*c.iterations == 1375);
  CHECK(c.confirmation->until == 1375 + 688);
}

TEST_CASE("confirmation: a probe that grew makes the run oscillating, one that decayed confirms it",
          "[outcome]") {
  OutcomeSettings s;
  s.tol = 1e-6;
  s.confirm_min = 50;
  const auto trace = gap_trace(geometric(1.0, 0.7, 200));
  for (double growth : {1.6, 0.4}) {
    OutcomeMonitor m(s, true, 199);
    for (const TracePoint& p : trace) {
      if (m.confirming()) m.set_probe_growth(growth);
      if (m.observe(p)) break;
    }
    const auto c = m.result();
    if (growth > 1) {
      CHECK(c.outcome == Outcome::oscillating);
      CHECK(c.reason.find("repels") != std::string::npos);
    } else {
      CHECK(c.outcome == Outcome::converged);
      CHECK(c.confirmation->method == "stretch+probe");
      CHECK(c.confirmation->probe_growth == 0.4);
    }
  }
}

TEST_CASE("confirmation: capped by the budget, and too late to confirm is slow", "[outcome]") {
  OutcomeSettings s;
  s.tol = 1e-6;
  s.confirm_min = 50;
  // Met at 39: a budget of 120 caps the stretch at 120 (>= 50 after 39): converged.
  {
    const auto c = classify(gap_trace(geometric(1.0, 0.7, 121)), s, true);
    CHECK(c.outcome == Outcome::converged);
    CHECK(c.confirmation->until == 89);
  }
  {
    OutcomeSettings t = s;
    t.confirm_factor = 10.0;  // stretch 390 > budget 120: capped at 120, 81 iterations: enough
    const auto c = classify(gap_trace(geometric(1.0, 0.7, 121)), t, true);
    CHECK(c.outcome == Outcome::converged);
    CHECK(c.confirmation->until == 120);
  }
  // Budget 70: only 31 iterations after 39 — confirms nothing: slow, and says why.
  const auto c = classify(gap_trace(geometric(1.0, 0.7, 71)), s, true);
  CHECK(c.outcome == Outcome::slow);
  CHECK(c.reason.find("too late to confirm") != std::string::npos);
}
