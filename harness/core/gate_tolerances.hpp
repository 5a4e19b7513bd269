// Tolerances of the gate rules (docs/design.md, "Gate"), set in a suite's `gate` section and per
// problem. Each default is chosen so that a re-run with the same seeds passes and a change a
// practitioner would care about fails; gate/ documents the rules that use them.
#pragma once
#include <array>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "stepgate/core/range.hpp"

namespace stepgate {

enum class Severity { pass, warn, fail };
std::string_view to_string(Severity s);

struct GateTolerances {
  /// Edge moved: a move by more than the factor (1 + edge_moved)(1 + search precision), either
  /// way (|log(edge/edge_base)| against its log), fails; seed spreads add nothing (the seeds are
  /// the same in both runs). 0.05: a 5% move of the divergence edge is a real change.
  double edge_moved = 0.05;
  /// Floor moved by more than the factor (1 + floor_moved)(1 + precision), either way: warns.
  /// Floors are softer (budget-dependent).
  double floor_moved = 0.25;
  /// Best rate moved by this factor or more (either way) warns. 2: a halving or a doubling; the
  /// best rate is refined between grid neighbours, so an unchanged case moves by less.
  double best_moved = 2.0;
  /// Required headroom: the pinned rate must satisfy floor <= pinned <= edge / pinned_headroom.
  /// 1.5: common practice keeps a shipped rate well below the divergence edge.
  double pinned_headroom = 1.5;
  /// Iterations at the pinned rate grew by more than this (relative): fails. 0.25.
  double pinned_iterations = 0.25;
  /// Minimum LRE (significant digits) required against published reference values. 6.
  double min_lre = 6.0;
  /// Predicted threshold and measured edge (gd) or blow-up (convex quadratics) disagree by more
  /// than this factor, either way: fails (often a gradient scaled wrongly). 1.25.
  double theory = 1.25;
  /// One-sided theory rule: where theory gives a threshold, an edge above
  /// predicted × (1 + precision + theory_slack) fails, because no rate above the local
  /// stability limit can converge (Polyak 1987, ch. 1: the map linearised at w* has eigenvalues
  /// 1 − αλᵢ for gd). 0.01: the runs end within the tolerance of w*, where λ_max differs from
  /// λ_max(∇²J(w*)) by O(√tol) ≈ 1e-3 relative, and Lanczos' top Ritz value is converged far
  /// better than that; 0.01 covers both with margin and is below any real excess worth knowing.
  double theory_slack = 0.01;
  Severity case_added = Severity::warn;    ///< a case in the results but not in the baseline
  Severity case_missing = Severity::fail;  ///< a case in the baseline but not in the results
  Severity data_changed = Severity::warn;  ///< data or suite hash differs (always shown)
};

/// One numeric tolerance as every reader and writer sees it (suite `gate` sections, results,
/// baselines): its key, its member, and the range it must lie in.
struct ToleranceField {
  std::string_view key;
  double GateTolerances::*member;
  Range range;
};

/// One severity key ("pass", "warn" or "fail").
struct SeverityField {
  std::string_view key;
  Severity GateTolerances::*member;
};

/// The numeric tolerances, in the order results.json writes them: the one declaration of their
/// keys and ranges, beside the members (a new tolerance is a member and a row, in this file).
inline const std::array<ToleranceField, 8>& tolerance_fields() {
  using G = GateTolerances;
  using R = Range;
  static const std::array<ToleranceField, 8> fields = {{
      {"edge_moved", &G::edge_moved, R::at_least(0)},
      {"floor_moved", &G::floor_moved, R::at_least(0)},
      {"best_moved", &G::best_moved, R::at_least(1)},
      {"pinned_headroom", &G::pinned_headroom, R::at_least(1)},
      {"pinned_iterations", &G::pinned_iterations, R::at_least(0)},
      {"min_lre", &G::min_lre, R::closed(0, 17)},
      {"theory", &G::theory, R::at_least(1)},
      {"theory_slack", &G::theory_slack, R::closed(0, 1)},
  }};
  return fields;
}
/// The severities, in the order results.json writes them.
const std::array<SeverityField, 3>& severity_fields();
/// Every key of a `gate` object, numeric then severities.
const std::vector<std::string>& gate_keys();
/// Keys of stepgate 0.1 and their names now (each tolerance is named as its rule).
const std::vector<std::pair<std::string_view, std::string_view>>& renamed_gate_keys();

}  // namespace stepgate
