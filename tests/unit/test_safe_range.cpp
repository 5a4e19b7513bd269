// The cross-seed summary (analysis/safe_range): the case's range from its seeds' ranges.
#include <catch2/catch.hpp>

#include <cmath>
#include <deque>

#include "stepgate/analysis/safe_range.hpp"

using namespace stepgate;

namespace {

struct Seed {
  std::deque<RunRecord> runs;  // stable addresses for the views
  SeedRunsView view;
  void add(double rate, Outcome o, long iterations = 0) {
    RunRecord& r = runs.emplace_back();
    r.rate = rate;
    r.outcome = o;
    if (o == Outcome::converged) r.iterations = iterations;
    view.by_rate[rate] = &r;
  }
};

}  // namespace

TEST_CASE("safe range: the smallest edge, the largest floor, the spread and the best rate", "[search]") {
  Seed a, b;
  a.view.located.seed = 1, b.view.located.seed = 2;
  a.view.located.floor = 0.01, b.view.located.floor = 0.02;
  a.view.located.edge = 1.0, b.view.located.edge = 1.1;
  a.view.located.edge_lo = 1.0, b.view.located.edge_lo = 1.1;
  a.view.located.edge_hi = 1.01, b.view.located.edge_hi = 1.11;
  for (Seed* s : {&a, &b}) {
    s->add(0.001, Outcome::slow);
    s->add(0.1, Outcome::converged, 400);
    s->add(0.5, Outcome::converged, s == &a ? 90 : 110);  // median 100
    s->add(0.8, Outcome::converged, s == &a ? 80 : 130);  // median 105
    s->add(3.0, Outcome::diverged);
  }
  a.add(1.5, Outcome::converged, 300);  // above a's edge: a ragged zone up to 1.5
  b.add(1.5, Outcome::oscillating);
  const CaseSummary c = summarise_seeds({a.view, b.view}, 0.01, 0.5);
  CHECK(c.edge == 1.0);
  CHECK(c.floor == 0.02);
  CHECK(c.edge_lo == 1.0);
  CHECK(c.edge_hi == 1.01);
  CHECK(c.edge_spread == Approx(1.1));
  CHECK(c.best_rate == 0.5);
  CHECK(c.best_iterations == 100);
  CHECK(c.ragged_top == 1.5);
  CHECK(c.seeds[0].ragged_top == 1.5);
  CHECK(std::isnan(c.seeds[1].ragged_top));
  CHECK(c.seeds[0].best_rate == 0.8);  // per seed: its own fastest converged rate
  CHECK(c.pinned_outcome == Outcome::converged);
  CHECK(c.pinned_iterations == 100);
  CHECK(c.headroom == 2.0);
  CHECK(c.precision == 0.01);

  // A seed without an edge: no safe range for the case, and no headroom.
  Seed none;
  none.view.located.seed = 3;
  none.add(0.5, Outcome::diverged);
  const CaseSummary lost = summarise_seeds({a.view, none.view}, 0.01, 0.5);
  CHECK(std::isnan(lost.edge));
  CHECK(std::isnan(lost.best_rate));
  CHECK(std::isnan(lost.headroom));
  CHECK(lost.pinned_outcome == Outcome::diverged);  // the worst over seeds
  CHECK(std::isnan(lost.pinned_iterations));       // not every seed converged
}

TEST_CASE("safe range: badness orders outcomes and median takes the middle", "[search]") {
  CHECK(badness(Outcome::converged) < badness(Outcome::slow));
  CHECK(badness(Outcome::slow) < badness(Outcome::oscillating));
  CHECK(badness(Outcome::oscillating) < badness(Outcome::diverged));
  CHECK(badness(Outcome::diverged) < badness(Outcome::failed));
  CHECK(median({3, 1, 2}) == 2);
  CHECK(median({4, 1, 2, 3}) == 2.5);
  CHECK(std::isnan(median({})));
}
