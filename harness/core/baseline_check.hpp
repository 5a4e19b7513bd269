// What verify mode ran for a case and what it showed (docs/design.md, "Verify mode"): with a
// baseline, each case first runs a few probes (the pinned rate, a rate just inside and one just
// outside the baseline's edge and floor) instead of the whole search. results.json keeps it as the
// case's "verification"; null when the case was searched without a baseline check.
#pragma once
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "stepgate/core/outcome.hpp"
#include "stepgate/core/types.hpp"

namespace stepgate {

/// Why a probe was run. Inside probes, the pinned rate and the reference probe must converge for
/// every seed; an outside probe must fail to converge for at least one seed.
enum class ProbeKind { pinned, edge_inside, edge_outside, floor_inside, floor_outside, reference };
std::string_view to_string(ProbeKind k);
std::optional<ProbeKind> probe_kind_from_string(std::string_view s);
/// True for the probes that must converge (all but the two outside ones).
bool must_converge(ProbeKind k);

/// One probe run: its rate, the suite's seed number and what it did.
struct BoundaryProbe {
  ProbeKind kind = ProbeKind::pinned;
  double rate = kMissing;
  std::uint64_t seed = 0;
  Outcome outcome = Outcome::failed;
  /// The outcome is what the baseline expects of this probe (converged inside, not converged
  /// outside). An outside probe that converged for one seed is settled by another seed.
  bool as_expected = false;
};

struct BaselineCheck {
  /// Every probe agreed with the baseline and the gate's rules passed on what they showed: the
  /// case's summary is the verified one and no search was run. false: the case was searched.
  bool verified = false;
  /// Why the case was searched after all, in words ("" when verified).
  std::string disagreement;
  double baseline_edge = kMissing, baseline_floor = kMissing;  ///< the accepted values checked
  /// The probe rates (NaN: that probe was not needed): inside = baseline ÷ (1 + edge_moved) for
  /// the edge, × (1 + floor_moved) for the floor; outside = baseline × ((1 + tolerance)(1 +
  /// precision)) for the edge, ÷ for the floor. A boundary the baseline did not locate by
  /// narrowing is probed at its own rate (inside) and its grid neighbour (outside).
  double edge_inside = kMissing, edge_outside = kMissing;
  double floor_inside = kMissing, floor_outside = kMissing;
  std::vector<BoundaryProbe> probes;  ///< in the order run
  int runs = 0;                       ///< runs the probes made
};

/// What a verified case proves, in one sentence for reports ("converged at 0.476 for every seed
/// and at no more than ... : the edge lies in [0.476, 0.5305)..."); for a check that disagreed,
/// what disagreed and that the case was searched.
std::string describe(const BaselineCheck& c);

}  // namespace stepgate
