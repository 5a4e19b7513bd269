// Which rates a case is run at (docs/design.md, "Search"). Rates are base rates of the schedule.
#pragma once
#include <optional>
#include <vector>

namespace stepgate {

struct RateGrid {
  double from = 1e-4;   ///< lowest grid rate, > 0
  double to = 10.0;     ///< highest grid rate, > from
  int per_decade = 3;   ///< log-spaced points per factor 10, >= 1 (3: 1, 2.15, 4.64, ...)
};

struct RatePolicy {
  std::vector<double> fixed;      ///< always run as well, reported one by one (e.g. the pinned rate)
  std::optional<RateGrid> grid = RateGrid{};  ///< nullopt: fixed rates only, no search
  double precision = 0.01;        ///< brackets are narrowed until upper/lower <= 1 + precision
  int lanes = 3;                  ///< rates per narrowing round (k-ary section; 1 = bisection)
  bool locate_edge = true;        ///< narrow the edge (largest safe rate of the best range)
  bool locate_floor = true;       ///< narrow the floor when the grid has slow rates below the range
  bool locate_blowup = true;      ///< narrow the lowest diverging rate above the edge
  int refine_points = 4;          ///< best rate: extra rates between the grid neighbours of the
                                  ///< grid's best (0 = no refinement)
};

}  // namespace stepgate
