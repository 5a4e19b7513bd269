#include "stepgate/core/baseline_check.hpp"

#include <cmath>

#include <fmt/format.h>
#include <fmt/ranges.h>

namespace stepgate {

namespace {

constexpr ProbeKind kKinds[] = {ProbeKind::pinned,       ProbeKind::edge_inside,   ProbeKind::edge_outside,
                                ProbeKind::floor_inside, ProbeKind::floor_outside, ProbeKind::reference};

std::string num(double v) { return fmt::format("{:.4g}", v); }

// The first probe of this kind that did what the baseline expects (an outside probe: the seed
// that did not converge there).
const BoundaryProbe* settled_by(const BaselineCheck& c, ProbeKind k) {
  for (const BoundaryProbe& p : c.probes)
    if (p.kind == k && p.as_expected) return &p;
  return nullptr;
}

}  // namespace

std::string_view to_string(ProbeKind k) {
  switch (k) {
    case ProbeKind::pinned: return "pinned";
    case ProbeKind::edge_inside: return "edge_inside";
    case ProbeKind::edge_outside: return "edge_outside";
    case ProbeKind::floor_inside: return "floor_inside";
    case ProbeKind::floor_outside: return "floor_outside";
    case ProbeKind::reference: return "reference";
  }
  return "pinned";
}

std::optional<ProbeKind> probe_kind_from_string(std::string_view s) {
  for (ProbeKind k : kKinds)
    if (to_string(k) == s) return k;
  return std::nullopt;
}

bool must_converge(ProbeKind k) { return k != ProbeKind::edge_outside && k != ProbeKind::floor_outside; }

std::string describe(const BaselineCheck& c) {
  if (!c.verified) return "searched: the baseline check disagreed: " + c.disagreement;
  std::vector<std::string> inside;
  double pinned = kMissing, reference = kMissing;
  for (const BoundaryProbe& p : c.probes) {
    if (p.kind == ProbeKind::pinned) pinned = p.rate;
    if (p.kind == ProbeKind::reference) reference = p.rate;
  }
  if (!std::isnan(pinned)) inside.push_back(num(pinned) + " (pinned)");
  inside.push_back(fmt::format("{} (edge side)", num(c.edge_inside)));
  if (!std::isnan(c.floor_inside)) inside.push_back(fmt::format("{} (floor side)", num(c.floor_inside)));
  if (!std::isnan(reference)) inside.push_back(fmt::format("{} (the baseline's best, first seed only)", num(reference)));
  std::string text = fmt::format("verified against the baseline in {} runs: converged at {}", c.runs,
                                 fmt::join(inside, ", "));
  std::string edge, floor;
  if (const BoundaryProbe* p = settled_by(c, ProbeKind::edge_outside)) {
    text += fmt::format("; {} at {} (seed {})", to_string(p->outcome), num(p->rate), p->seed);
    edge = fmt::format("the edge lies in [{}, {}) (baseline {})", num(c.edge_inside), num(c.edge_outside),
                       num(c.baseline_edge));
  } else {
    edge = fmt::format("every seed still converges at the baseline's edge {}, the top of the grid",
                       num(c.baseline_edge));
  }
  if (const BoundaryProbe* p = settled_by(c, ProbeKind::floor_outside)) {
    text += fmt::format("; {} at {} (seed {})", to_string(p->outcome), num(p->rate), p->seed);
    floor = fmt::format(" and the floor in ({}, {}] (baseline {})", num(c.floor_outside), num(c.floor_inside),
                        num(c.baseline_floor));
  }
  return text + ". So " + edge + floor +
         ", within the gate's tolerances, if outcomes change once on each side of the safe range (as the search "
         "assumes). Not measured: best rate, blow-up, ragged zone, seed spread";
}

}  // namespace stepgate
