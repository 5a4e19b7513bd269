// Noisy runs (docs/design.md, "Noisy runs"): the noise estimate, the smoothed trace and the
// outcome rules that read it, on synthetic minibatch-like traces with seeded scatter. The shapes
// are those seen in real minibatch training (a fast fall to a level, a slow linear descent at a
// tiny rate, a spike to thousands of times the start that ends at chance level, a loss that
// improves and then loses its gains).
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <functional>
#include <vector>

#include "stepgate/analysis/noise.hpp"
#include "stepgate/analysis/noisy_outcome.hpp"
#include "stepgate/analysis/outcome_rules.hpp"
#include "stepgate/analysis/seed_level.hpp"
#include "stepgate/search/case_search.hpp"

using namespace stepgate;

namespace {

// Standard normal draws from splitmix64 + Box–Muller: the same numbers on every platform
// (std::normal_distribution is implementation-defined).
class Normal {
 public:
  explicit Normal(std::uint64_t seed) : state_(seed) {}
  double operator()() {
    const double u1 = (static_cast<double>(next() >> 11) + 0.5) * 0x1.0p-53;
    const double u2 = (static_cast<double>(next() >> 11) + 0.5) * 0x1.0p-53;
    return std::sqrt(-2.0 * std::log(u1)) * std::cos(6.283185307179586 * u2);
  }

 private:
  std::uint64_t next() {
    std::uint64_t z = (state_ += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
  }
  std::uint64_t state_;
};

// A cost-only trace (no J*): f(k) plus multiplicative-free scatter of sd `sigma`, every `every`
// iterations, n evaluations.
template <class F>
std::vector<TracePoint> noisy_trace(F f, double sigma, int n, std::uint64_t seed, long every = 1) {
  Normal z(seed);
  std::vector<TracePoint> t;
  for (int k = 0; k < n; ++k) {
    const double x = static_cast<double>(k) / (n - 1);
    t.push_back({k * every, f(x) + sigma * z(), kMissing, kMissing});
  }
  return t;
}

Classification noisy(const std::vector<TracePoint>& t, OutcomeSettings s = {}) {
  return classify(t, s, false, true);
}

double fall(double x) { return 0.45 + 1.85 * std::exp(-12.0 * x); }  // 2.3 to about 0.45

}  // namespace

TEST_CASE("running median: monotone stretches pass through - a 2-cycle is not taken for noise", "[noise]") {
  std::vector<double> out;
  const std::vector<double> mono = {9, 7, 6, 4, 3, 3, 2, 1};
  running_median(mono, 2, out);
  CHECK(out == mono);
  // A 2-cycle around a falling trend is a swing, not noise, whatever the window: an odd
  // half-width flattens it but leaves residuals that alternate in sign (noise level 0, read
  // raw); an even one passes it through.
  for (int n : {30, 60, 61}) {
    std::vector<TracePoint> cycle;
    for (int k = 0; k < n; ++k) {
      const double c = 1.0 + 3.0 * std::pow(0.95, k) + (k % 2 ? 2.0 : 0.0);
      cycle.push_back({k, c, kMissing, kMissing});
    }
    const Classification c = classify(cycle, OutcomeSettings{}, false, true);
    INFO(n << " evaluations: " << c.reason);
    CHECK(c.outcome == Outcome::oscillating);
  }
  // Ends shrink symmetrically: the first and last points are their own window.
  const std::vector<double> spike = {3, 3, 100, 3, 3, 3, 3};
  running_median(spike, 1, out);
  CHECK(out == std::vector<double>{3, 3, 3, 3, 3, 3, 3});
  CHECK(noise_level(mono, mono, 2) == 0.0);
  CHECK(smoothing_half_width(12) == 1);
  CHECK(smoothing_half_width(240) == 10);
  CHECK(smoothing_half_width(10000) == 10);
}

TEST_CASE("noise level: 0 for deterministic decay, close to the scatter's sd otherwise", "[noise]") {
  std::vector<double> decay, s;
  for (int k = 0; k < 300; ++k) decay.push_back(2.0 * std::pow(0.98, k) + 0.1);
  CHECK(noise_level_of(decay) == 0.0);
  for (double sigma : {0.02, 0.1, 0.3}) {
    const auto t = noisy_trace(fall, sigma, 400, 7);
    std::vector<double> v;
    for (const auto& p : t) v.push_back(p.cost);
    const double est = noise_level_of(v);
    INFO("sigma " << sigma << " estimate " << est);
    // A running median absorbs part of the scatter of its own centre point, so the estimate
    // runs a little low; within 30% either way is what the rules need (margins of 3 sigma).
    CHECK(est > 0.7 * sigma);
    CHECK(est < 1.3 * sigma);
  }
}

TEST_CASE("gated rises: gate 0 is the sum of rises - rises within the gate count for nothing", "[noise]") {
  const std::vector<double> v = {5, 4, 4.5, 3, 3.2, 3.1, 6, 2};
  CHECK(gated_rises(v, 0.0) == Approx(0.5 + 0.2 + 2.9));
  CHECK(gated_rises(v, 0.3) == Approx(0.5 + 3.0));  // 3 -> 3.2 is within the gate
  CHECK(gated_rises(v, 0.6) == Approx(6.0 - 3.0));  // only the big swing, counted from its low
  // A slow creep in steps below the gate counts in full once it exceeds the gate.
  const std::vector<double> creep = {1, 1.1, 1.2, 1.3, 1.4};
  CHECK(gated_rises(creep, 0.25) == Approx(0.3));
}

TEST_CASE("noisy: a minibatch loss that falls to a level converges (settled) - read raw it oscillates", "[noise]") {
  const auto t = noisy_trace(fall, 0.15, 240, 11);
  const Classification raw = classify(t, OutcomeSettings{}, false, false);
  CHECK(raw.outcome == Outcome::oscillating);  // the overshoot of scatter alone, as before noise handling
  const Classification c = noisy(t);
  INFO(c.reason);
  CHECK(c.outcome == Outcome::converged);
  CHECK(c.noise == Approx(0.15).epsilon(0.3));
  CHECK(c.overshoot <= 3.0);
  REQUIRE(c.iterations);
  // About where the fall is within 10% of its drop of the final level: exp(-12x) = 0.1 at x = 0.19.
  CHECK(*c.iterations > 20);
  CHECK(*c.iterations < 90);
  CHECK_THAT(c.reason, Catch::Contains("noise level"));
}

TEST_CASE("noisy: a held-out loss every 20 steps converges with defaults", "[noise]") {
  const auto t = noisy_trace(fall, 0.01, 13, 3, 20);
  const Classification c = noisy(t);
  INFO(c.reason);
  CHECK(c.outcome == Outcome::converged);
}

TEST_CASE("noisy: a tiny rate is slow, never converged or diverged", "[noise]") {
  // Linear descent 2.3 -> 2.0: the last quarter still gains a quarter of the improvement.
  const auto slow = noisy(noisy_trace([](double x) { return 2.3 - 0.3 * x; }, 0.1, 240, 5));
  INFO(slow.reason);
  CHECK(slow.outcome == Outcome::slow);
  // Flat at the start level: nothing moved beyond the noise.
  for (std::uint64_t seed = 1; seed <= 20; ++seed) {
    const auto flat = noisy(noisy_trace([](double) { return 2.3; }, 0.1, 240, seed));
    INFO("seed " << seed << ": " << flat.reason);
    CHECK(flat.outcome == Outcome::slow);
  }
}

TEST_CASE("noisy: a network that spiked and ended at chance level diverged (trained to nothing)", "[noise]") {
  auto t = noisy_trace([](double) { return 2.3; }, 0.05, 240, 9);
  for (int k = 10; k < 16; ++k) t[k].cost = 2.3 * 2000.0;  // a few steps at 2000 x the start
  const Classification c = noisy(t);
  INFO(c.reason);
  CHECK(c.outcome == Outcome::diverged);
  // Read raw, as before: overshoot inf, oscillating, no blow-up anywhere.
  CHECK(classify(t, OutcomeSettings{}, false, false).outcome == Outcome::oscillating);
}

TEST_CASE("noisy: a loss that improved and lost all its gains diverged", "[noise]") {
  const auto t = noisy_trace([](double x) { return x < 0.4 ? fall(x) : 2.3; }, 0.05, 240, 4);
  const Classification c = noisy(t);
  INFO(c.reason);
  CHECK(c.outcome == Outcome::diverged);
  CHECK_THAT(c.reason, Catch::Contains("trained to nothing"));
}

TEST_CASE("noisy: a loss that degrades after its best oscillates", "[noise]") {
  const auto t = noisy_trace([](double x) { return x < 0.5 ? fall(x) : fall(0.5) + 1.2 * (x - 0.5); }, 0.05, 240, 8);
  const Classification c = noisy(t);
  INFO(c.reason);
  CHECK(c.outcome == Outcome::oscillating);
}

TEST_CASE("noisy: non-finite and far rises diverge live - nothing else stops the run early", "[noise]") {
  OutcomeSettings s;
  OutcomeMonitor m(s, false, 239);
  m.read_as_noisy();
  const auto t = noisy_trace(fall, 0.15, 240, 11);
  for (const TracePoint& p : t) CHECK_FALSE(m.observe(p));  // decided only at the end
  CHECK(m.result().outcome == Outcome::converged);

  OutcomeMonitor nan_run(s, false, 100);
  nan_run.read_as_noisy();
  CHECK_FALSE(nan_run.observe({0, 2.3, kMissing, kMissing}));
  CHECK(nan_run.observe({1, std::nan(""), kMissing, kMissing}));
  CHECK(nan_run.result().outcome == Outcome::diverged);

  OutcomeMonitor rise(s, false, 100);
  rise.read_as_noisy();
  bool stopped = false;
  for (long k = 0; k < 100 && !stopped; ++k) stopped = rise.observe({k, k == 0 ? 2.3 : 40.0, kMissing, kMissing});
  CHECK(stopped);
  CHECK(rise.result().outcome == Outcome::diverged);
  CHECK_THAT(rise.result().reason, Catch::Contains("median of the last 5"));
}

TEST_CASE("noisy: with a known optimum the gap is read and the divergence rules of networks stay off", "[noise]") {
  // A gap that settles at a stochastic floor, as constant-rate sgd on least squares does.
  Normal z(21);
  std::vector<TracePoint> t;
  for (int k = 0; k < 300; ++k) {
    const double gap = 10.0 * std::exp(-0.05 * k) + 0.02 * (1.0 + 0.3 * z());
    t.push_back({k, gap + 1.0, gap, kMissing});
  }
  const Classification c = classify(t, OutcomeSettings{}, true, true);
  INFO(c.reason);
  CHECK(c.outcome == Outcome::converged);
  CHECK(c.noise > 0.0);
}

TEST_CASE("noisy: explicit criteria read the smoothed trace and must hold to the end", "[noise]") {
  OutcomeSettings s;
  s.criterion = Criterion::cost;
  s.target = 0.6;
  const auto t = noisy_trace(fall, 0.15, 240, 11);
  const Classification c = noisy(t, s);
  INFO(c.reason);
  CHECK(c.outcome == Outcome::converged);  // raw values cross 0.6 up and down for the whole run
  s.target = 0.3;  // below the level it settles at
  CHECK(noisy(t, s).outcome == Outcome::slow);
}

TEST_CASE("noise off and deterministic traces: the live rules, unchanged", "[noise]") {
  std::vector<TracePoint> t;
  for (int k = 0; k < 200; ++k) {
    const double g = std::pow(0.9, k);
    t.push_back({k, g, g, std::sqrt(g)});
  }
  const Classification before = classify(t, OutcomeSettings{}, true, false);
  CHECK(before.outcome == Outcome::converged);
  CHECK(std::isnan(before.noise));
  // Read as noisy, a scatter-free trace has noise level 0 and is read raw (criterion settled).
  const Classification as_noisy = classify(t, OutcomeSettings{}, true, true);
  CHECK(as_noisy.noise == 0.0);
  CHECK(as_noisy.outcome == Outcome::converged);
  CHECK(as_noisy.overshoot == before.overshoot);
}

TEST_CASE("noisy with J* and no scatter: the live rules decide, reason and iterations alike", "[noise]") {
  OutcomeSettings s;
  s.confirm_min = 20;
  for (double ratio : {0.9, 0.99, 0.999}) {
    std::vector<TracePoint> t;
    for (int k = 0; k <= 3000; ++k) {
      const double g = std::pow(ratio, k);
      t.push_back({k, 1.0 + g, g, std::sqrt(g)});
    }
    const Classification live = classify(t, s, true, false);
    const Classification read_noisy = classify(t, s, true, true);
    INFO(live.reason);
    CHECK(read_noisy.outcome == live.outcome);
    CHECK(read_noisy.iterations == live.iterations);
    CHECK(read_noisy.reason == live.reason);
    CHECK(read_noisy.noise == 0.0);
  }
}

// ---- Beside the seed's best level (analysis/seed_level) ----

namespace {

// A network's minibatch loss at rate r over 300 steps, started from unnormalised inputs (a loss
// of 21 at initialisation, as examples/torch_minibatch's --no-normalize): up to 0.1 it falls
// to a level that grows with the rate, 0.4 + 0.6 (r/0.1)²; from 0.1 to 2 the first steps throw
// it to chance level (2.30), where it stays; above 2 the loss is non-finite at step 5.
std::vector<TracePoint> network_trace(double r, std::uint64_t seed) {
  if (r > 2.0) {
    std::vector<TracePoint> t;
    for (int k = 0; k <= 5; ++k) t.push_back({k, k < 5 ? 21.0 * std::pow(10.0, k) : kInf, kMissing, kMissing});
    return t;
  }
  const double level = r <= 0.1 ? 0.4 + 0.6 * (r / 0.1) * (r / 0.1) : 2.30;
  const double speed = r <= 0.1 ? 100.0 * r : 50.0;  // fraction of the way per unit of x
  auto f = [&](double x) { return x == 0.0 ? 21.0 : level + (21.0 - level) * std::exp(-300.0 * speed * x); };
  std::vector<TracePoint> t = noisy_trace(f, 0.08, 301, seed);
  t[0].cost = 21.0;
  return t;
}

CaseSearchOutput search_network(const OutcomeSettings& outcome) {
  CaseSearchInput in;
  in.case_id = "net/none/momentum";
  in.run.budget = 300;
  in.run.outcome = outcome;
  in.rates.grid = RateGrid{1e-3, 10.0, 3};
  in.rates.precision = 0.05;
  in.seeds = {1, 2};
  const RunBatchFn runner = [&](std::span<const double> rates, BatchSeed seed) {
    std::vector<RunRecord> out;
    for (double r : rates) {
      RunRecord rec;
      rec.rate = r;
      rec.seed = seed.seed;
      rec.seed_index = seed.index;
      rec.trace = network_trace(r, seed.seed ^ std::hash<double>{}(r));
      rec.steps = rec.trace.back().iter;
      record_classification(classify(rec.trace, outcome, false, true), rec);
      out.push_back(std::move(rec));
    }
    return out;
  };
  return search_case_with(runner, nullptr, in);
}

}  // namespace

TEST_CASE("a network stuck at chance level after a fast first fall is not converged", "[noise][level]") {
  // Alone, the settled criterion accepts every run up to rate 2: each fell from 21 and settled.
  OutcomeSettings alone;
  alone.level_ratio = 1e9;
  const CaseSearchOutput before = search_network(alone);
  CHECK(before.summary.edge > 1.5);
  // Beside the seed's best level (0.4 at the lowest rates that finish their fall), a run must
  // end below 1.5 × 0.4 = 0.6: 0.4 + 0.6 (r/0.1)² ≤ 0.6 up to r = 0.1/√3 = 0.0577. The best
  // level is the lowest of a dozen noisy end levels (each a median of 21 losses of sd 0.08, so
  // about ±0.02), which puts it up to 0.05 lower: then the edge is down to 0.1·√(0.14/0.6) = 0.048.
  const CaseSearchOutput after = search_network(OutcomeSettings{});
  INFO("edge " << after.summary.edge);
  CHECK(after.summary.edge >= 0.045);
  CHECK(after.summary.edge <= 0.0577 * 1.05);
  int held = 0, chance_slow = 0;
  for (const StoredRun& s : after.runs) {
    if (s.record.reason.find("level_ratio 1.5") != std::string::npos) ++held;
    if (s.record.rate > 0.1 && s.record.rate <= 2.0) {
      CHECK(s.record.outcome == Outcome::slow);
      ++chance_slow;
    }
  }
  CHECK(held >= chance_slow);
  CHECK(chance_slow >= 2 * 3);  // the grid's 0.215, 0.464 and 1, for each seed
  // The blow-up is where the loss turns non-finite, as before.
  CHECK(after.summary.blowup > 2.0);
  CHECK(after.summary.blowup < 2.0 * 1.06);
}

TEST_CASE("the level rule: which runs it reads, the best level and the ratio", "[noise][level]") {
  OutcomeSettings s;
  auto run = [](double rate, double level, Outcome o, double noise, bool gap) {
    RunRecord r;
    r.rate = rate;
    r.outcome = o;
    r.noise = noise;
    r.reason = "settled";
    if (o == Outcome::converged) r.iterations = 10;
    for (int k = 0; k <= 40; ++k) {
      const double c = k == 0 ? 2.3 : level;
      r.trace.push_back({k, c, gap ? c - 0.1 : kMissing, kMissing});
    }
    return r;
  };
  const RunRecord a = run(0.01, 0.4, Outcome::converged, 0.05, false);
  const RunRecord b = run(0.1, 0.7, Outcome::converged, 0.05, false);
  const RunRecord c = run(1.0, 0.1, Outcome::diverged, 0.05, false);   // diverged: not a level
  const RunRecord d = run(0.001, 0.3, Outcome::slow, 0.05, false);     // slow runs count
  const RunRecord e = run(0.002, 0.2, Outcome::converged, kMissing, false);  // not read as noisy
  const RunRecord f = run(0.003, 0.2, Outcome::converged, 0.05, true);       // J* known
  CHECK(judged_by_level(a, s));
  CHECK_FALSE(judged_by_level(e, s));
  CHECK_FALSE(judged_by_level(f, s));
  OutcomeSettings named_gap;
  named_gap.criterion = Criterion::cost;
  named_gap.target = 1.0;
  CHECK_FALSE(judged_by_level(a, named_gap));
  const std::vector<const RunRecord*> runs{&a, &b, &c, &d, &e, &f};
  const BestLevel best = best_level(runs, s);
  CHECK(best.level == 0.3);
  CHECK(best.rate == 0.001);
  RunRecord a2 = a, b2 = b, e2 = e;
  CHECK_FALSE(hold_to_best_level(a2, best, s));  // 0.4 ≤ 1.5 × 0.3
  CHECK(hold_to_best_level(b2, best, s));        // 0.7 > 0.45
  CHECK(b2.outcome == Outcome::slow);
  CHECK_FALSE(b2.iterations);
  CHECK(b2.reason.find("ends at 0.7, above level_ratio 1.5 x the best level 0.3") != std::string::npos);
  CHECK(b2.reason.find("judged alone: settled") != std::string::npos);
  CHECK_FALSE(hold_to_best_level(e2, best, s));
  // A best level at or below 0 has no natural zero for a ratio: nothing changes.
  RunRecord b3 = b;
  CHECK_FALSE(hold_to_best_level(b3, BestLevel{0.0, 0.001}, s));
  CHECK_FALSE(hold_to_best_level(b3, BestLevel{-1.0, 0.001}, s));
  CHECK_FALSE(hold_to_best_level(b3, BestLevel{}, s));
  CHECK(b3.outcome == Outcome::converged);
}
