// Standard normal draws that are the same bits on every platform: Box-Muller on top of
// std::mt19937_64 (whose output sequence the C++ standard fixes), because the standard
// distributions are implementation-defined.
#pragma once
#include <cmath>
#include <cstdint>
#include <numbers>
#include <random>

#include "stepgate/core/types.hpp"

namespace stepgate::detail {

/// Uniform in the open interval (0, 1) from the top 53 bits of one draw.
inline double open_unit(std::mt19937_64& rng) {
  return (static_cast<double>(rng() >> 11) + 0.5) * 0x1.0p-53;
}

/// n independent N(0, 1) draws (Box-Muller: two draws per pair of uniforms).
inline Vec standard_normal(std::mt19937_64& rng, Index n) {
  Vec out(n);
  for (Index i = 0; i < n; i += 2) {
    const double radius = std::sqrt(-2.0 * std::log(open_unit(rng)));
    const double angle = 2.0 * std::numbers::pi * open_unit(rng);
    out[i] = radius * std::cos(angle);
    if (i + 1 < n) out[i + 1] = radius * std::sin(angle);
  }
  return out;
}

}  // namespace stepgate::detail
