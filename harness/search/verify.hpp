// Verify mode (docs/design.md, "Verify mode"): instead of searching again, a case with an accepted
// baseline first runs a few probes (the pinned rate, a rate just inside and one just outside the
// baseline's edge and floor). When every probe agrees, their outcomes prove that a new search
// would place the edge (and floor) within the gate's tolerances of the baseline, and the case is
// not searched; when one disagrees, the caller searches the case (sweep/sweep.cpp).
#pragma once
#include <optional>

#include "stepgate/core/baseline_check.hpp"
#include "stepgate/core/rate_policy.hpp"
#include "stepgate/search/case_search.hpp"

namespace stepgate {

/// The accepted boundaries of a case and the gate's tolerances for them.
struct VerifyTargets {
  double edge = kMissing;       ///< the baseline's edge (> 0); NaN: nothing to verify
  /// The top of the baseline's edge bracket; NaN: no rate above the edge failed (the edge was
  /// the top of the grid), so there is no outside probe and the inside probe is the edge itself.
  double edge_hi = kMissing;
  /// The top of the baseline's ragged zone (NaN: none): rates above the edge at which a seed
  /// still converged. The outside probe goes above it, as the gate measures moves between zones.
  double ragged_top = kMissing;
  double floor = kMissing;      ///< the baseline's floor; NaN: none
  double best_rate = kMissing;  ///< the baseline's best rate: the reference probe (first seed)
  /// The seeds that set the baseline's edge (lowest) and floor (highest): each outside probe
  /// runs on that seed first, where it should fail. nullopt: seeds in order.
  std::optional<std::uint64_t> edge_seed, floor_seed;
  double edge_moved = 0.05;     ///< gate tolerance of the edge (relative), >= 0
  double floor_moved = 0.25;    ///< gate tolerance of the floor (relative), >= 0
};

/// The probe rates of a case (NaN: that probe is not run). The argument (docs/design.md,
/// "Verify mode"): with t the tolerance and p the search precision, a search places the edge at
/// the lower end of a bracket at most 1 + p wide around the true edge E; every seed converging at
/// edge ÷ (1 + t) and some seed not at edge × (1 + t)(1 + p) put E in that interval, so the
/// search's edge lies within (1 + t)(1 + p) of the baseline's either way: what edge_moved
/// allows. With a ragged zone [edge, top] the outside probe is top × (1 + t)(1 + p), since the
/// gate measures the move between zones. The floor mirrors it (× inside, ÷ outside). A boundary not narrowed by the search
/// (locate_edge / locate_floor false, or an edge at the top of the grid) is a grid rate: then
/// inside is that rate and outside its grid neighbour. The floor is probed only where the
/// baseline located one (above the lowest grid rate); the reference probe only when `with_reference`.
struct ProbeRates {
  double edge_inside = kMissing, edge_outside = kMissing;
  double floor_inside = kMissing, floor_outside = kMissing;
  double reference = kMissing;
};
ProbeRates probe_rates(const VerifyTargets& t, const RatePolicy& rates, bool with_reference);

struct VerifyOutput {
  BaselineCheck check;
  /// When every probe agreed: the case as the probes show it (summary with edge = edge_inside,
  /// the bracket [edge_inside, edge_outside], floor = floor_inside, the pinned rate's outcome
  /// and iterations; no best rate, blow-up or ragged zone), theory and the reference
  /// comparison as a search gives them, and the probe runs (role verify). nullopt: a probe
  /// disagreed (check.disagreement says which) and the case must be searched.
  std::optional<CaseSearchOutput> verified;
};

/// Runs the probes seed by seed, one batch per seed, through the same store and level rule as
/// the search: every seed runs the pinned rate and the inside probes; each outside probe runs on
/// the seed that set that boundary in the baseline (the first seed when unknown), and on the
/// other seeds in order, each as a batch of its own, only while no seed has failed there. Stops at the
/// first inside probe that does not converge. Deterministic like the search.
VerifyOutput verify_case(const Problem& problem, const CaseSearchInput& in, const VerifyTargets& t,
                         const BatchDone& on_batch = {});
/// The same with runs made by `run` (a command), as search_case_with.
VerifyOutput verify_case_with(const RunBatchFn& run, const Problem* problem, const CaseSearchInput& in,
                              const VerifyTargets& t, const BatchDone& on_batch = {});

}  // namespace stepgate
