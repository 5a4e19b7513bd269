#include "stepgate/core/range.hpp"

#include <cmath>

#include <fmt/format.h>

namespace stepgate {

bool Range::admits(double v) const {
  // isfinite is false for NaN and ±inf, which no range admits.
  return std::isfinite(v) && (min_open ? v > min : v >= min) && (max_open ? v < max : v <= max) &&
         (!whole || v == std::floor(v));
}

std::string Range::words() const {
  const bool low = std::isfinite(min), high = std::isfinite(max);
  if (whole && low && high) return fmt::format("in {}..{}", min, max);
  if (low && high) return fmt::format("in {}{}, {}{}", min_open ? '(' : '[', min, max, max_open ? ')' : ']');
  if (low) return fmt::format("{} {}", min_open ? ">" : ">=", min);
  if (high) return fmt::format("{} {}", max_open ? "<" : "<=", max);
  return "";
}

std::string Range::expected() const {
  const std::string w = words();
  const char* what = whole ? "a whole number" : "a number";
  return w.empty() ? what : fmt::format("{} {}", what, w);
}

}  // namespace stepgate
