#include "stepgate/search/verify.hpp"

#include <algorithm>
#include <cmath>
#include <utility>
#include <vector>

#include <fmt/format.h>

#include "stepgate/analysis/safe_range.hpp"
#include "stepgate/search/searcher.hpp"

namespace stepgate {

ProbeRates probe_rates(const VerifyTargets& t, const RatePolicy& rates, bool with_reference) {
  ProbeRates p;
  if (!(t.edge > 0.0) || !std::isfinite(t.edge)) return p;
  const double precision = rates.precision;
  const bool ragged = t.ragged_top > t.edge;  // false for NaN
  if (std::isnan(t.edge_hi)) {
    p.edge_inside = t.edge;  // the top of the grid: nothing above it was run
  } else if (rates.locate_edge) {
    p.edge_inside = t.edge / (1.0 + t.edge_moved);
    p.edge_outside = (ragged ? t.ragged_top : t.edge) * (1.0 + t.edge_moved) * (1.0 + precision);
  } else {
    p.edge_inside = t.edge;  // a grid rate: the search keeps it while the edge stays below edge_hi
    p.edge_outside = ragged && rates.grid ? t.ragged_top * std::pow(10.0, 1.0 / rates.grid->per_decade) : t.edge_hi;
  }
  // A floor above the lowest grid rate was located (a grid rate below it did not converge); one
  // at the lowest grid rate is only where the grid starts, and is not probed.
  const bool located = t.floor > 0.0 && std::isfinite(t.floor) && rates.grid && t.floor > rates.grid->from * (1.0 + 1e-9);
  if (located) {
    if (rates.locate_floor) {
      p.floor_inside = t.floor * (1.0 + t.floor_moved);
      p.floor_outside = t.floor / ((1.0 + t.floor_moved) * (1.0 + precision));
    } else {
      p.floor_inside = t.floor;
      p.floor_outside = t.floor / std::pow(10.0, 1.0 / rates.grid->per_decade);
    }
    // A range narrower than the tolerances: the floor's inside probe would lie above the edge's.
    if (!(p.floor_inside < p.edge_inside)) p.floor_inside = p.floor_outside = kMissing;
  }
  if (with_reference && t.best_rate > 0.0 && std::isfinite(t.best_rate)) p.reference = t.best_rate;
  return p;
}

namespace detail {

namespace {

std::string num(double v) { return fmt::format("{:.4g}", v); }

std::string what(ProbeKind k) {
  switch (k) {
    case ProbeKind::pinned: return "the pinned rate";
    case ProbeKind::edge_inside: return "the rate just inside the edge";
    case ProbeKind::edge_outside: return "the rate just outside the edge";
    case ProbeKind::floor_inside: return "the rate just inside the floor";
    case ProbeKind::floor_outside: return "the rate just below the floor";
    case ProbeKind::reference: return "the baseline's best rate";
  }
  return "a probe";
}

}  // namespace

VerifyOutput Searcher::verify(const VerifyTargets& t) {
  VerifyOutput out;
  BaselineCheck& c = out.check;
  const ProbeRates p = probe_rates(t, in_.rates, in_.reference.has_value());
  c.baseline_edge = t.edge;
  c.baseline_floor = t.floor;
  c.edge_inside = p.edge_inside;
  c.edge_outside = p.edge_outside;
  c.floor_inside = p.floor_inside;
  c.floor_outside = p.floor_outside;
  if (std::isnan(p.edge_inside)) {
    c.disagreement = "the baseline has no edge to verify";
    return out;
  }
  prepare();
  bool edge_open = !std::isnan(p.edge_outside), floor_open = !std::isnan(p.floor_outside);
  std::size_t edge_seed = seeds_.size();  // the seed that did not converge just outside the edge
  // Each outside probe first on the seed that set that boundary in the baseline.
  auto first_of = [&](std::optional<std::uint64_t> n) {
    for (std::size_t i = 0; n && i < seeds_.size(); ++i)
      if (seeds_[i].number == *n) return i;
    return std::size_t{0};
  };
  const std::size_t edge_first = first_of(t.edge_seed), floor_first = first_of(t.floor_seed);
  std::vector<bool> edge_tried(seeds_.size()), floor_tried(seeds_.size());
  using Probes = std::vector<std::pair<ProbeKind, double>>;
  // One batch of probes for seed i; records what each showed.
  auto probe = [&](std::size_t i, const Probes& probes, bool first_batch) {
    SeedRuns& s = seeds_[i];
    std::vector<double> rates;
    for (const auto& [kind, rate] : probes) rates.push_back(rate);
    std::sort(rates.begin(), rates.end());
    rates.erase(std::unique(rates.begin(), rates.end()), rates.end());
    run(s, rates, RunRole::verify);
    // The level rule, against the lowest level among this seed's first probes (a later probe
    // is held to it, as a search's later runs are held to the grid's).
    if (first_batch) set_best_level(s);
    for (const auto& [kind, rate] : probes) {
      const RunRecord& r = *at(s, rate);
      const bool ok = must_converge(kind) == (r.outcome == Outcome::converged);
      c.probes.push_back({kind, rate, s.number, r.outcome, ok});
      if (kind == ProbeKind::edge_outside) edge_tried[i] = true;
      if (kind == ProbeKind::floor_outside) floor_tried[i] = true;
      if (ok && kind == ProbeKind::edge_outside) edge_open = false, edge_seed = i;
      if (ok && kind == ProbeKind::floor_outside) floor_open = false;
      if (!ok && must_converge(kind) && c.disagreement.empty())
        c.disagreement = fmt::format("{} {} was {} for seed {} ({}), where the baseline expects convergence",
                                     what(kind), num(rate), to_string(r.outcome), s.number, r.reason);
    }
  };
  for (std::size_t i = 0; i < seeds_.size() && c.disagreement.empty(); ++i) {
    Probes probes;
    if (!std::isnan(in_.pinned)) probes.emplace_back(ProbeKind::pinned, in_.pinned);
    probes.emplace_back(ProbeKind::edge_inside, p.edge_inside);
    if (!std::isnan(p.floor_inside)) probes.emplace_back(ProbeKind::floor_inside, p.floor_inside);
    if (i == 0 && !std::isnan(p.reference)) probes.emplace_back(ProbeKind::reference, p.reference);
    if (edge_open && i == edge_first) probes.emplace_back(ProbeKind::edge_outside, p.edge_outside);
    if (floor_open && i == floor_first) probes.emplace_back(ProbeKind::floor_outside, p.floor_outside);
    probe(i, probes, true);
  }
  // An outside probe that converged on its first seed: the other seeds in order, until one fails.
  for (std::size_t i = 0; i < seeds_.size() && c.disagreement.empty() && (edge_open || floor_open); ++i) {
    Probes probes;
    if (edge_open && !edge_tried[i]) probes.emplace_back(ProbeKind::edge_outside, p.edge_outside);
    if (floor_open && !floor_tried[i]) probes.emplace_back(ProbeKind::floor_outside, p.floor_outside);
    if (!probes.empty()) probe(i, probes, false);
  }
  if (c.disagreement.empty() && edge_open)
    c.disagreement = fmt::format("every seed converged at {}, just outside the baseline's edge {}: the edge may have risen",
                                 num(p.edge_outside), num(t.edge));
  if (c.disagreement.empty() && floor_open)
    c.disagreement = fmt::format("every seed converged at {}, just below the baseline's floor {}: the floor may have fallen",
                                 num(p.floor_outside), num(t.floor));
  for (const SeedRuns& s : seeds_) c.runs += s.summary.runs;
  if (!c.disagreement.empty()) return out;
  c.verified = true;

  // The case as the probes show it: the edge is the highest rate known safe for every seed, its
  // bracket closed by the seed that failed outside; nothing the probes did not measure.
  std::vector<SeedRunsView> views;
  for (std::size_t i = 0; i < seeds_.size(); ++i) {
    const SeedRuns& s = seeds_[i];
    SeedRunsView v{s.summary, {}};
    v.located.edge = v.located.edge_lo = p.edge_inside;
    v.located.edge_hi = i == edge_seed ? p.edge_outside : kMissing;
    v.located.floor = std::isnan(p.floor_inside) ? 0.0 : p.floor_inside;
    for (const auto& [rate, index] : s.by_rate) v.by_rate.emplace(rate, &order_[index].record);
    views.push_back(std::move(v));
  }
  CaseSearchOutput& o = out.verified.emplace();
  CaseSummary& sum = o.summary;
  sum = summarise_seeds(views, in_.rates.precision, in_.pinned);
  if (std::isnan(p.floor_inside)) sum.floor = kMissing;
  sum.ragged_top = sum.best_rate = sum.best_iterations = sum.edge_spread = sum.blowup = kMissing;
  for (SeedSummary& x : sum.seeds) {
    x.ragged_top = x.best_rate = x.blowup = kMissing;
    if (std::isnan(p.floor_inside)) x.floor = kMissing;
  }
  finish(o, p.reference);
  return out;
}

}  // namespace detail

VerifyOutput verify_case(const Problem& problem, const CaseSearchInput& in, const VerifyTargets& t,
                         const BatchDone& on_batch) {
  const RunBatchFn none;
  return detail::Searcher(none, &problem, detail::checked(in), on_batch).verify(t);
}

VerifyOutput verify_case_with(const RunBatchFn& run, const Problem* problem, const CaseSearchInput& in,
                              const VerifyTargets& t, const BatchDone& on_batch) {
  return detail::Searcher(run, problem, detail::checked(in), on_batch).verify(t);
}

}  // namespace stepgate
