// Verify mode (docs/design.md, "Verify mode"): a few probe runs against the baseline's edge and
// floor instead of the whole search. Checked on quadratics, where gd's edge is 2/L (Polyak 1987,
// sect. 1.4, recalled from memory; tests/reference/test_thresholds.cpp checks it): a pass must
// mean that the full search would place the edge within the gate's allowance, and a change
// beyond it must disagree.
#include <catch2/catch.hpp>
#include <cmath>

#include "stepgate/gate/moves.hpp"
#include "stepgate/problems/quadratic.hpp"
#include "stepgate/search/case_search.hpp"
#include "stepgate/search/verify.hpp"

using namespace stepgate;

namespace {

CaseSearchInput gd_case() {
  CaseSearchInput in;
  in.case_id = "bowl/none/gd";
  in.run.budget = 2000;
  in.rates.grid = RateGrid{1e-3, 10.0, 3};
  in.rates.precision = 0.01;
  in.seeds = {1, 2};
  in.pinned = 0.5;
  return in;
}

std::unique_ptr<Problem> bowl(double L) {
  QuadraticOptions q;
  q.dim = 30;
  q.L = L;
  q.condition = 50;
  q.seed = 9;
  return make_quadratic(q);
}

VerifyTargets targets_of(const CaseSummary& s) {
  VerifyTargets t;
  t.edge = s.edge;
  t.edge_hi = s.edge_hi;
  t.ragged_top = s.ragged_top;
  t.floor = s.floor;
  t.best_rate = s.best_rate;
  return t;
}

// The seeds that set the edge and the floor, as an accepted baseline records them.
VerifyTargets with_boundary_seeds(VerifyTargets t, const CaseSummary& s) {
  for (const SeedSummary& seed : s.seeds) {
    if (!t.edge_seed && seed.edge == s.edge) t.edge_seed = seed.seed;
    if (!t.floor_seed && seed.floor == s.floor) t.floor_seed = seed.seed;
  }
  return t;
}

}  // namespace

TEST_CASE("verify: probe rates follow the tolerances and the search precision", "[verify]") {
  RatePolicy rates;
  rates.grid = RateGrid{1e-4, 10.0, 3};
  rates.precision = 0.01;
  VerifyTargets t;
  t.edge = 2.0;
  t.edge_hi = 2.02;
  t.floor = 0.01;
  t.best_rate = 1.0;
  const ProbeRates p = probe_rates(t, rates, false);
  CHECK(p.edge_inside == Approx(2.0 / 1.05));
  CHECK(p.edge_outside == Approx(2.0 * 1.05 * 1.01));
  CHECK(p.floor_inside == Approx(0.01 * 1.25));
  CHECK(p.floor_outside == Approx(0.01 / (1.25 * 1.01)));
  CHECK(std::isnan(p.reference));
  CHECK(probe_rates(t, rates, true).reference == 1.0);

  SECTION("with a ragged zone the outside probe goes above its top, as the gate compares zones") {
    t.ragged_top = 2.5;
    const ProbeRates q = probe_rates(t, rates, false);
    CHECK(q.edge_inside == Approx(2.0 / 1.05));
    CHECK(q.edge_outside == Approx(2.5 * 1.05 * 1.01));
  }
  SECTION("an edge at the top of the grid is probed at itself, with nothing outside") {
    t.edge_hi = kMissing;
    const ProbeRates q = probe_rates(t, rates, false);
    CHECK(q.edge_inside == 2.0);
    CHECK(std::isnan(q.edge_outside));
  }
  SECTION("an edge that was not narrowed is a grid rate: inside is it, outside its grid neighbour") {
    rates.locate_edge = false;
    t.edge_hi = 4.6416;
    const ProbeRates q = probe_rates(t, rates, false);
    CHECK(q.edge_inside == 2.0);
    CHECK(q.edge_outside == 4.6416);
  }
  SECTION("a floor at the lowest grid rate is where the grid starts, not a located boundary") {
    t.floor = 1e-4;
    const ProbeRates q = probe_rates(t, rates, false);
    CHECK(std::isnan(q.floor_inside));
    CHECK(std::isnan(q.floor_outside));
  }
  SECTION("a range narrower than the tolerances has no floor probes") {
    t.floor = 1.8;
    CHECK(std::isnan(probe_rates(t, rates, false).floor_inside));
  }
  SECTION("a baseline without an edge has nothing to probe") {
    t.edge = kMissing;
    CHECK(std::isnan(probe_rates(t, rates, false).edge_inside));
  }
  SECTION("a zero tolerance still leaves the precision between inside and outside") {
    t.edge_moved = 0.0;
    const ProbeRates q = probe_rates(t, rates, false);
    CHECK(q.edge_inside == 2.0);
    CHECK(q.edge_outside == Approx(2.02));
  }
}

TEST_CASE("verify: an unchanged case is verified in at most 4 runs per seed, as its own search agrees", "[verify]") {
  const auto problem = bowl(1.0);
  const CaseSearchInput in = gd_case();
  const CaseSearchOutput searched = search_case(*problem, in);
  REQUIRE(searched.summary.edge == Approx(2.0).epsilon(0.02));  // 2/L
  const VerifyTargets t = targets_of(searched.summary);
  const VerifyOutput v = verify_case(*problem, in, t);
  INFO(v.check.disagreement);
  REQUIRE(v.verified);
  CHECK(v.check.verified);
  // Per seed: the pinned rate and the inside probes; each outside probe on the seeds up to the
  // first that did not converge there (the case's edge is the lowest seed's, its floor the highest).
  int inside = 0, outside_runs = 0;
  for (ProbeKind k : {ProbeKind::edge_outside, ProbeKind::floor_outside}) {
    int after_settled = 0;
    bool settled = false;
    for (const BoundaryProbe& p : v.check.probes)
      if (p.kind == k) {
        ++outside_runs;
        after_settled += settled;
        settled = settled || p.as_expected;
      }
    CHECK(after_settled == 0);
  }
  for (const BoundaryProbe& p : v.check.probes) inside += must_converge(p.kind);
  CHECK(inside == 3 * static_cast<int>(in.seeds.size()));  // pinned, edge and floor inside
  CHECK(v.check.runs == inside + outside_runs);
  CHECK(v.check.runs <= 5 * static_cast<int>(in.seeds.size()));
  CHECK(v.check.runs * 5 <= static_cast<int>(searched.runs.size()));  // at least 5x fewer than the search
  const CaseSummary& s = v.verified->summary;
  CHECK(s.edge == Approx(t.edge / 1.05));
  CHECK(s.edge_lo == s.edge);
  CHECK(s.edge_hi == Approx(t.edge * 1.05 * 1.01));
  CHECK(s.edge_lo <= searched.summary.edge);  // the search's edge lies in what the probes proved
  CHECK(searched.summary.edge < s.edge_hi);
  CHECK(std::isnan(s.best_rate));
  CHECK(std::isnan(s.blowup));
  CHECK(std::isnan(s.ragged_top));
  CHECK(s.pinned_outcome == Outcome::converged);
  CHECK(s.pinned_iterations == Approx(searched.summary.pinned_iterations));
  CHECK(s.headroom == Approx(s.edge / 0.5));
  for (const StoredRun& r : v.verified->runs) CHECK(r.role == RunRole::verify);
  CHECK(static_cast<int>(v.verified->runs.size()) == v.check.runs);
  CHECK(describe(v.check).find("the edge lies in [") != std::string::npos);
  // Theory is computed as the search computes it.
  CHECK(v.verified->theory.predicted_blowup == Approx(searched.theory.predicted_blowup));

  SECTION("knowing which seed set each boundary, each outside probe runs once") {
    const VerifyOutput known = verify_case(*problem, in, with_boundary_seeds(t, searched.summary));
    REQUIRE(known.verified);
    CHECK(known.check.runs == 3 * static_cast<int>(in.seeds.size()) + 2);
  }
  SECTION("the same bits twice") {
    const VerifyOutput again = verify_case(*problem, in, t);
    REQUIRE(again.verified);
    REQUIRE(again.verified->runs.size() == v.verified->runs.size());
    for (std::size_t i = 0; i < again.verified->runs.size(); ++i) {
      CHECK(again.verified->runs[i].record.rate == v.verified->runs[i].record.rate);
      CHECK(again.verified->runs[i].record.trace.back().cost == v.verified->runs[i].record.trace.back().cost);
    }
  }
}

TEST_CASE("verify: a pass proves the edge is within edge_moved and a larger move disagrees", "[verify]") {
  // The baseline is the search at L = 1; the current problem's curvature moves the edge (2/L) by
  // the factors below. Whenever verification passes, the current problem's full search must
  // place its edge within the gate's allowance (1.05 x 1.01) of the baseline's, and a move
  // beyond the probes must disagree.
  const CaseSearchInput in = gd_case();
  const VerifyTargets t = targets_of(search_case(*bowl(1.0), in).summary);
  const double allowed = tolerance_log(0.05) + tolerance_log(0.01);
  int verified = 0, disagreed = 0;
  for (double factor : {0.8, 0.93, 0.97, 1.0, 1.04, 1.08, 1.25}) {
    const auto problem = bowl(1.0 / factor);  // edge 2/L moves by `factor`
    const VerifyOutput v = verify_case(*problem, in, t);
    const CaseSearchOutput searched = search_case(*problem, in);
    const double moved = log_move(t.edge, searched.summary.edge);
    INFO("edge x" << factor << ": search edge " << searched.summary.edge << ", " << v.check.disagreement);
    if (v.verified) {
      ++verified;
      CHECK(moved <= allowed);
      CHECK(v.verified->summary.edge <= searched.summary.edge);
      CHECK(searched.summary.edge < v.verified->summary.edge_hi);
    } else {
      ++disagreed;
    }
    if (factor <= 0.93) {
      CHECK_FALSE(v.verified);
      CHECK(v.check.disagreement.find("just inside the edge") != std::string::npos);
      CHECK(v.check.runs < 4 * static_cast<int>(in.seeds.size()));  // stopped at the first seed
    }
    if (factor >= 1.08) {
      CHECK_FALSE(v.verified);
      CHECK(v.check.disagreement.find("may have risen") != std::string::npos);
    }
    if (moved > allowed) CHECK_FALSE(v.verified);  // what the gate would fail is never verified
  }
  CHECK(verified >= 3);  // 1.0 and the moves well inside the tolerance
  CHECK(disagreed >= 4);
}

TEST_CASE("verify: the floor is probed where the baseline located one, and a fallen floor disagrees", "[verify]") {
  CaseSearchInput in = gd_case();
  in.run.budget = 300;  // a short budget gives the range a floor
  in.pinned = kMissing;
  const CaseSearchOutput base = search_case(*bowl(1.0), in);
  REQUIRE(base.summary.floor > in.rates.grid->from * 1.01);
  const VerifyTargets t = targets_of(base.summary);
  const VerifyOutput v = verify_case(*bowl(1.0), in, t);
  INFO(v.check.disagreement);
  REQUIRE(v.verified);
  CHECK(v.check.floor_inside == Approx(t.floor * 1.25));
  CHECK(v.verified->summary.floor == v.check.floor_inside);
  CHECK(v.check.floor_inside >= base.summary.floor);
  CHECK(v.check.floor_outside < base.summary.floor);

  // A budget three times as long lowers the floor about threefold: the outside probe converges.
  CaseSearchInput longer = in;
  longer.run.budget = 900;
  const VerifyOutput fell = verify_case(*bowl(1.0), longer, t);
  CHECK_FALSE(fell.verified);
  CHECK(fell.check.disagreement.find("floor may have fallen") != std::string::npos);
}
