// The proven early `slow` verdict (docs/design.md, "A proven early slow verdict"): gd at a
// constant rate on a convex quadratic stops a run as soon as `slow` is certain. Tested here:
//   - the premise: along a real gd run the gap ratio per evaluation never falls;
//   - the monitor on exact series Σ aᵢrᵢᵗ: the verdict with the proof always equals the verdict
//     at the end of the budget, over thousands of random spectra, starts, rates and budgets;
//   - run_batch on a quadratic and on least squares: the same outcomes and convergence
//     iterations with and without the proof, fewer iterations with it; no proof for momentum, a
//     schedule, mini-batches or a rate at or above 2/λ_max.
#include <catch2/catch.hpp>
#include <cmath>
#include <random>
#include <vector>

#include "stepgate/analysis/outcome_rules.hpp"
#include "stepgate/data/generate.hpp"
#include "stepgate/problems/linear_models.hpp"
#include "stepgate/problems/quadratic.hpp"
#include "stepgate/run/batch.hpp"

using namespace stepgate;

namespace {

// The gap of gd on a quadratic in its eigenbasis, evaluated in long double:
// gap_t = Σᵢ aᵢ rᵢᵗ, rᵢ = (1 − αλᵢ)², ‖∇J_t‖ = √(Σᵢ bᵢ rᵢᵗ) with bᵢ = 2λᵢaᵢ.
struct Modes {
  std::vector<long double> a, b, r;
  TracePoint at(long t) const {
    long double gap = 0, g2 = 0;
    for (std::size_t i = 0; i < a.size(); ++i) {
      const long double rt = std::pow(r[i], static_cast<long double>(t));
      gap += a[i] * rt;
      g2 += b[i] * rt;
    }
    return {t, static_cast<double>(gap), static_cast<double>(gap), static_cast<double>(std::sqrt(g2))};
  }
};

Modes random_modes(std::mt19937_64& rng, double rate) {
  std::uniform_int_distribution<int> count(1, 6);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  Modes m;
  const int n = count(rng);
  for (int i = 0; i < n; ++i) {
    const double lambda = std::pow(10.0, -4.0 + 4.0 * u(rng));  // in [1e-4, 1]; λ_max ≤ 1
    const double e = std::pow(10.0, -3.0 + 3.0 * u(rng));
    const long double a = 0.5L * lambda * e * e;
    m.a.push_back(a);
    m.b.push_back(2.0L * lambda * a);
    m.r.push_back(std::pow(1.0L - static_cast<long double>(rate * lambda), 2.0L));
  }
  return m;
}

struct Verdict {
  Classification c;
  long stopped = -1;  // the evaluation that decided it; -1 = the budget ran out
};

Verdict watch(const Modes& m, const OutcomeSettings& s, long budget, long every, bool proof) {
  OutcomeMonitor monitor(s, true, budget);
  if (proof) monitor.allow_slow_proof(every);
  Verdict v;
  for (long t = 0;; t += every) {
    if (t > budget) t = budget;
    if (monitor.observe(m.at(t))) {
      v.stopped = t;
      break;
    }
    if (t == budget) break;
  }
  v.c = monitor.result();
  return v;
}

OptimizerSpec kind(OptimizerKind k) {
  OptimizerSpec s;
  s.kind = k;
  return s;
}

std::unique_ptr<Problem> quadratic_1e3(Index dim) {
  QuadraticOptions q;
  q.dim = dim;
  q.condition = 1e3;
  q.L = 1.0;
  return make_quadratic(q);
}

long total_steps(const std::vector<RunRecord>& runs) {
  long n = 0;
  for (const RunRecord& r : runs) n += r.steps;
  return n;
}

}  // namespace

TEST_CASE("slow proof premise: along gd on a quadratic the gap ratio per evaluation never falls", "[slow_proof]") {
  const auto problem = quadratic_1e3(30);
  RunSettings s;
  s.budget = 3000;
  s.prove_slow = false;
  for (double rate : {0.01, 0.3, 1.0, 1.9}) {
    const RunRecord r = run_single(*problem, kind(OptimizerKind::gd), s, rate, {5, 0});
    INFO("rate " << rate);
    REQUIRE(r.trace.size() > 10);
    int falls = 0;
    double prev_ratio = 0.0;
    for (std::size_t k = 1; k < r.trace.size(); ++k) {
      // Above 1e-10 of the start: below, rounding of w (1e-16·‖w‖) is no longer small.
      if (r.trace[k].gap < 1e-10 * r.trace.front().gap) break;
      const double ratio = r.trace[k].gap / r.trace[k - 1].gap;
      if (ratio < prev_ratio * (1.0 - 1e-9)) ++falls;
      prev_ratio = ratio;
    }
    CHECK(falls == 0);
  }
}

TEST_CASE("slow proof on exact series: the verdict equals the one at the end of the budget", "[slow_proof]") {
  std::mt19937_64 rng(20261202);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  std::uniform_int_distribution<long> budgets(60, 4000), spacing(1, 7);
  int proven = 0, slow = 0, converged = 0;
  long saved = 0;
  for (int trial = 0; trial < 3000; ++trial) {
    const double rate = 1.99 * std::pow(10.0, -2.0 * u(rng));  // 0.0199 .. 1.99 (λ_max ≤ 1: below 2/λ_max)
    const Modes m = random_modes(rng, rate);
    OutcomeSettings s;
    s.criterion = trial % 3 == 0 ? Criterion::grad : Criterion::gap;
    s.tol = trial % 2 ? 1e-6 : 1e-3;
    const long budget = budgets(rng), every = spacing(rng);
    const Verdict full = watch(m, s, budget, every, false);
    const Verdict early = watch(m, s, budget, every, true);
    INFO("trial " << trial << " rate " << rate << " budget " << budget << " every " << every << ": "
                  << early.c.reason);
    REQUIRE(early.c.outcome == full.c.outcome);
    REQUIRE(early.c.iterations == full.c.iterations);
    if (full.c.outcome == Outcome::slow) ++slow;
    if (full.c.outcome == Outcome::converged) ++converged;
    if (early.c.reason.rfind("proven slow", 0) == 0) {
      ++proven;
      REQUIRE(early.stopped >= 0);
      saved += budget - early.stopped;
    }
  }
  // The draw covers both outcomes, and the proof decides most slow runs before their budget.
  CHECK(converged > 300);
  CHECK(slow > 300);
  CHECK(proven > slow / 2);
  CHECK(saved > 0);
}

TEST_CASE("slow proof: a run that converges just inside the budget is not called slow", "[slow_proof]") {
  // One mode, r = 0.99 per iteration: gap_t = 0.99^t reaches 1e-6 at t = ⌈ln 1e-6 / ln 0.99⌉ = 1375.
  Modes m;
  m.a = {1.0L};
  m.b = {1.0L};
  m.r = {0.99L};
  OutcomeSettings s;
  s.criterion = Criterion::gap;
  s.tol = 1e-6;
  const long t1 = 1375;
  REQUIRE(m.at(t1).gap <= 1e-6);
  REQUIRE(m.at(t1 - 1).gap > 1e-6);
  for (long extra : {-1L, 0L, 1L}) {
    // Converged needs t1 + confirm_min ≤ budget (the stretch is capped at the budget, then
    // must still be confirm_min = 50 iterations long).
    const long budget = t1 + 50 + extra;
    const Verdict v = watch(m, s, budget, 1, true);
    INFO("budget " << budget << ": " << v.c.reason);
    CHECK(v.c.outcome == (extra < 0 ? Outcome::slow : Outcome::converged));
    CHECK(v.c.reason.find("proven") == std::string::npos);  // within the factor 2 of the edge
  }
  // Far too small a budget is proven slow at once: 0.99^950 = 7.2e-5 at the last iteration that
  // could start a confirmed stretch (950 = 1000 − confirm_min).
  const Verdict v = watch(m, s, 1000, 1, true);
  CHECK(v.c.outcome == Outcome::slow);
  CHECK(v.stopped == 1);
  CHECK(v.c.reason.find("proven slow at iteration 1") == 0);
}

TEST_CASE("slow proof: any rise in the series switches it off", "[slow_proof]") {
  OutcomeSettings s;
  s.criterion = Criterion::gap;
  s.tol = 1e-6;
  OutcomeMonitor monitor(s, true, 1000);
  monitor.allow_slow_proof(1);
  // A fall too steep for a proof (1e-3 per iteration), then a rise: not the series the proof is
  // about (rounding, or a wrong premise), so a flat series after it is not proven slow either.
  REQUIRE_FALSE(monitor.observe({0, 1.0, 1.0, 1.0}));
  REQUIRE_FALSE(monitor.observe({1, 1e-3, 1e-3, 1.0}));
  REQUIRE_FALSE(monitor.observe({2, 2e-3, 2e-3, 1.0}));
  for (long t = 3; t < 1000; ++t) REQUIRE_FALSE(monitor.observe({t, 1.5e-3, 1.5e-3, 1.0}));
  CHECK(monitor.result().outcome == Outcome::slow);
  CHECK(monitor.result().reason.find("proven") == std::string::npos);
}

TEST_CASE("slow proof in run_batch: same outcomes, fewer iterations, only where it holds", "[slow_proof]") {
  const auto quadratic = quadratic_1e3(40);
  GeneratedSpec g;  // y = X·w + 1 + 0.1·noise, features on scales 1..6
  g.rows = 300;
  g.features = 6;
  g.seed = 7;
  g.intercept = 1.0;
  g.feature_scales = {1, 2, 3, 4, 5, 6};
  const Dataset ds = generate(g, "generated").data;
  LinearModelOptions lo;
  lo.intercept = true;
  const auto lsq = make_least_squares(ds, lo);
  REQUIRE(std::isfinite(quadratic->quadratic_curvature_bound()));
  REQUIRE(quadratic->quadratic_curvature_bound() >= 1.0);
  REQUIRE(lsq->quadratic_curvature_bound() >= lsq->smoothness_bound());

  for (const Problem* problem : {quadratic.get(), lsq.get()}) {
    const double L = problem->smoothness_bound();
    std::vector<double> rates;
    for (int k = 0; k < 24; ++k) rates.push_back(std::pow(10.0, -4.0 + 4.4 * k / 23.0) / L);  // up to 2.5/L
    RunSettings on, off;
    on.budget = off.budget = 2000;
    off.prove_slow = false;
    INFO("problem " << problem->kind());
    const auto a = run_batch(*problem, kind(OptimizerKind::gd), on, rates, {3, 0});
    const auto b = run_batch(*problem, kind(OptimizerKind::gd), off, rates, {3, 0});
    int proven = 0;
    for (std::size_t j = 0; j < rates.size(); ++j) {
      INFO("rate " << rates[j] << " x L " << rates[j] * L << ": " << a[j].reason);
      REQUIRE(a[j].outcome == b[j].outcome);
      REQUIRE(a[j].iterations == b[j].iterations);
      if (a[j].reason.rfind("proven slow", 0) == 0) {
        ++proven;
        CHECK(a[j].rate * L < 2.0);
        CHECK(a[j].steps < on.budget);
      } else {
        CHECK(a[j].steps == b[j].steps);
      }
    }
    CHECK(proven >= 5);
    CHECK(total_steps(a) < total_steps(b));

    // Where the premise fails, every slow run uses its budget.
    OptimizerSpec hb = kind(OptimizerKind::momentum);
    OptimizerSpec decayed = kind(OptimizerKind::gd);
    decayed.schedule.kind = ScheduleKind::inverse_time;
    for (const OptimizerSpec& spec : {hb, decayed})
      for (const RunRecord& r : run_batch(*problem, spec, on, rates, {3, 0}))
        if (r.outcome == Outcome::slow) CHECK(r.steps == on.budget);
  }
}
