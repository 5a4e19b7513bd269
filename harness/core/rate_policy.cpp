#include "stepgate/core/rate_policy.hpp"

#include <cmath>

namespace stepgate {

const std::vector<SettingField<RateGrid>>& grid_fields() {
  using G = RateGrid;
  static const std::vector<SettingField<G>> fields = {
      {"from", &G::from, Range::above(0)},
      {"to", &G::to, Range::above(0)},
      {"per_decade", &G::per_decade, Range::count_in(1, 1000)},
  };
  return fields;
}

const std::vector<SettingField<RatePolicy>>& rate_fields() {
  using P = RatePolicy;
  static const std::vector<SettingField<P>> fields = {
      {"precision", &P::precision, Range::open_closed(0, 1)},
      {"lanes", &P::lanes, Range::count_in(1, 16)},
      {"locate_edge", &P::locate_edge},
      {"locate_floor", &P::locate_floor},
      {"locate_blowup", &P::locate_blowup},
      {"refine_points", &P::refine_points, Range::count_in(0, 32)},
      {"verify", &P::verify},
  };
  return fields;
}

std::string validate(const RatePolicy& p) {
  std::vector<std::string> errors;
  check_fields(p, rate_fields(), errors);
  if (p.grid) {
    check_fields(*p.grid, grid_fields(), errors, "grid.");
    if (!(p.grid->from < p.grid->to))
      errors.push_back(fmt::format("grid from {} to {}, expected from < to", p.grid->from, p.grid->to));
  }
  for (double r : p.fixed)
    if (!Range::above(0).admits(r)) errors.push_back(fmt::format("fixed rate {}, expected a rate > 0", r));
  if (!p.grid && p.fixed.empty()) errors.push_back("no grid and no fixed rates, expected a grid, fixed rates, or both");
  return fmt::format("{}", fmt::join(errors, "; "));
}

}  // namespace stepgate
