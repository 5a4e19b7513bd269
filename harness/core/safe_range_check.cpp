#include "stepgate/core/safe_range_check.hpp"

#include <cmath>

#include <fmt/format.h>

namespace stepgate {

namespace {

bool known(double v) { return !std::isnan(v); }

}  // namespace

void check_safe_range(const SafeRange& s, const JsonField& at, const char* ragged_key) {
  const auto bad = [&](const char* key, const std::string& expected) { at[key].expected(expected); };
  for (auto [key, v] : {std::pair{"floor", s.floor}, {"edge", s.edge}, {"blowup", s.blowup}, {"best_rate", s.best_rate},
                        {"pinned", s.pinned}})
    if (known(v) && !(std::isfinite(v) && v > 0.0)) bad(key, "a rate > 0 or null");
  for (double v : {s.edge_lo, s.edge_hi})
    if (known(v) && !(std::isfinite(v) && v > 0.0)) at["edge_bracket"].expected("[lo, hi]: rates > 0 or null");
  if (known(s.edge_lo) && known(s.edge_hi) && !(s.edge_lo <= s.edge_hi))
    at["edge_bracket"].expected("[lo, hi] with lo <= hi");
  for (auto [key, v] : {std::pair{"best_iterations", s.best_iterations}, {"pinned_iterations", s.pinned_iterations}})
    if (known(v) && !(std::isfinite(v) && v >= 0.0)) bad(key, "a number of iterations >= 0 or null");
  if (known(s.precision) && !(s.precision > 0.0 && s.precision <= 1.0))
    bad("precision", "the search's relative precision, in (0, 1] as a suite sets it, or null");
  if (known(s.edge_spread) && !(std::isfinite(s.edge_spread) && s.edge_spread >= 1.0))
    bad("edge_spread", "the largest over the smallest seed edge (>= 1) or null");
  if (known(s.floor) && known(s.edge) && !(s.floor <= s.edge))
    bad("floor", fmt::format("a floor at or below the edge {}", s.edge));
  if (known(s.ragged_top) && !(known(s.edge) && s.ragged_top > s.edge))
    at[ragged_key].expected("a ragged top above the edge, or null");
  if (known(s.edge) && known(s.pinned)) {
    const double headroom = s.edge / s.pinned;
    if (!(std::abs(s.headroom - headroom) <= 1e-9 * headroom))
      bad("headroom", fmt::format("edge / pinned = {:.17g} (the headroom is derived from them)", headroom));
  } else if (known(s.headroom)) {
    bad("headroom", "null (there is no headroom without both an edge and a pinned rate)");
  }
}

}  // namespace stepgate
