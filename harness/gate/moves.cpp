#include "stepgate/gate/moves.hpp"

#include <cmath>

#include <fmt/format.h>

namespace stepgate {

double log_move(double base, double now) { return std::abs(std::log(now / base)); }

double ragged_move(double base_lo, double base_hi, double now_lo, double now_hi) {
  if (now_lo > base_hi) return std::log(now_lo / base_hi);
  if (now_hi < base_lo) return std::log(base_lo / now_hi);
  return 0.0;
}

double tolerance_log(double t) { return std::log1p(t); }

std::string factor_text(double base, double now) {
  const double ratio = now / base;
  return ratio >= 1.0 ? fmt::format("×{:.4g}", ratio) : fmt::format("÷{:.4g}", 1.0 / ratio);
}

std::string either_way_text(double log_factor) { return fmt::format("×/÷{:.4g}", std::exp(log_factor)); }

}  // namespace stepgate
