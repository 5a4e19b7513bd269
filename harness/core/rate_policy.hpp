// Which rates a case is run at (docs/design.md, "Search"). Rates are base rates of the schedule.
#pragma once
#include <optional>
#include <string>
#include <vector>

#include "stepgate/core/setting_field.hpp"

namespace stepgate {

struct RateGrid {
  double from = 1e-4;   ///< lowest grid rate, > 0
  double to = 10.0;     ///< highest grid rate, > from
  int per_decade = 3;   ///< log-spaced points per factor 10, 1..1000 (3: 1, 2.15, 4.64, ...)
};

struct RatePolicy {
  std::vector<double> fixed;      ///< always run as well, reported one by one (e.g. the pinned rate)
  std::optional<RateGrid> grid = RateGrid{};  ///< nullopt: fixed rates only, no search
  double precision = 0.01;        ///< brackets are narrowed until upper/lower <= 1 + precision, (0, 1]
  int lanes = 3;                  ///< rates per narrowing round, 1..16 (k-ary section; 1 = bisection)
  bool locate_edge = true;        ///< narrow the edge (largest safe rate of the best range)
  bool locate_floor = true;       ///< narrow the floor when the grid has slow rates below the range
  bool locate_blowup = true;      ///< narrow the lowest diverging rate above the edge
  int refine_points = 4;          ///< best rate: extra rates between the grid neighbours of the
                                  ///< grid's best, 0..32 (0 = no refinement)
  /// With a baseline, check its boundaries with a few probe runs before searching (verify mode,
  /// core/baseline_check.hpp); the case is searched only when a probe disagrees. false: always
  /// search (what `run --full` does for every case).
  bool verify = true;
};

/// from, to, per_decade.
const std::vector<SettingField<RateGrid>>& grid_fields();
/// The scalar settings of RatePolicy (`grid` and `fixed` are read on their own).
const std::vector<SettingField<RatePolicy>>& rate_fields();

/// Every problem with `p`, separated by "; "; empty when valid: each field in its range, a grid
/// with from < to, fixed rates > 0, and a grid or fixed rates (or both).
std::string validate(const RatePolicy& p);

}  // namespace stepgate
