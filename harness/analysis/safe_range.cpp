// The cross-seed summary of a case (moved here from search/: the safe range is analysis, the
// search only decides which rates to run).
#include "stepgate/analysis/safe_range.hpp"

#include <algorithm>
#include <cmath>

namespace stepgate {

namespace {

bool converged(Outcome o) { return o == Outcome::converged; }

const RunRecord* at(const SeedRunsView& s, double rate) {
  const auto it = s.by_rate.find(rate);
  return it == s.by_rate.end() ? nullptr : it->second;
}

}  // namespace

int badness(Outcome o) {
  switch (o) {
    case Outcome::converged: return 0;
    case Outcome::slow: return 1;
    case Outcome::oscillating: return 2;
    case Outcome::diverged: return 3;
    case Outcome::failed: return 4;
  }
  return 4;
}

double median(std::vector<double> v) {
  if (v.empty()) return kMissing;
  std::sort(v.begin(), v.end());
  const std::size_t n = v.size();
  return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

CaseSummary summarise_seeds(const std::vector<SeedRunsView>& seeds, double precision, double pinned) {
  CaseSummary c;
  c.precision = precision;
  c.pinned = pinned;
  double edge = kInf, edge_lo = kInf, edge_hi = kInf, floor = 0.0, blowup = kInf, emax = 0.0;
  bool all_have_edge = !seeds.empty();
  for (const SeedRunsView& s : seeds) {
    SeedSummary x = s.located;
    if (!std::isnan(x.edge))  // every run is in by now: grid, fixed, narrowing, refinement
      for (const auto& [rate, run] : s.by_rate)
        if (rate > x.edge && converged(run->outcome)) x.ragged_top = rate;  // by_rate ascends
    c.seeds.push_back(x);
    c.runs += x.runs;
    if (std::isnan(x.edge)) all_have_edge = false;
    else {
      edge = std::min(edge, x.edge);
      emax = std::max(emax, x.edge);
      edge_lo = std::min(edge_lo, x.edge_lo);
      if (!std::isnan(x.edge_hi)) edge_hi = std::min(edge_hi, x.edge_hi);
      floor = std::max(floor, x.floor);
    }
    if (!std::isnan(x.blowup)) blowup = std::min(blowup, x.blowup);
  }
  if (std::isfinite(blowup)) c.blowup = blowup;
  if (all_have_edge && floor <= edge) {
    c.edge = edge;
    c.edge_lo = edge_lo;
    c.edge_hi = std::isfinite(edge_hi) ? edge_hi : kMissing;
    c.floor = floor;
    c.edge_spread = emax / edge;
    for (const SeedSummary& x : c.seeds)
      if (!std::isnan(x.ragged_top) && !(x.ragged_top <= c.ragged_top)) c.ragged_top = x.ragged_top;
  }
  // Best rate: among rates every seed ran, inside [floor, edge], all converged.
  if (!std::isnan(c.edge)) {
    double best_iters = kInf;
    for (const auto& [rate, first] : seeds.front().by_rate) {
      if (rate < c.floor || rate > c.edge) continue;
      std::vector<double> iters;
      for (const SeedRunsView& s : seeds) {
        const RunRecord* r = at(s, rate);
        if (!r || !converged(r->outcome)) break;
        iters.push_back(static_cast<double>(*r->iterations));
      }
      if (iters.size() != seeds.size()) continue;
      const double m = median(iters);
      if (m < best_iters) best_iters = m, c.best_rate = rate, c.best_iterations = m;
    }
  }
  for (std::size_t i = 0; i < c.seeds.size(); ++i) {
    double best = kMissing, iters = kInf;
    for (const auto& [rate, run] : seeds[i].by_rate) {
      const RunRecord& r = *run;
      if (converged(r.outcome) && *r.iterations < iters) iters = static_cast<double>(*r.iterations), best = rate;
    }
    c.seeds[i].best_rate = best;
  }
  if (!std::isnan(pinned)) {
    std::vector<double> iters;
    int worst = -1;
    for (const SeedRunsView& s : seeds) {
      const RunRecord* r = at(s, pinned);
      if (!r) continue;
      if (badness(r->outcome) > worst) worst = badness(r->outcome), c.pinned_outcome = r->outcome;
      if (r->iterations) iters.push_back(static_cast<double>(*r->iterations));
    }
    if (iters.size() == seeds.size()) c.pinned_iterations = median(iters);
    if (!std::isnan(c.edge)) c.headroom = c.edge / pinned;
  }
  return c;
}

}  // namespace stepgate
