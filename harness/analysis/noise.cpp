#include "stepgate/analysis/noise.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace stepgate {

int smoothing_half_width(std::size_t points) {
  return static_cast<int>(std::clamp<std::size_t>(points / 24, 1, 10));
}

double median_of(std::span<const double> v) {
  if (v.empty()) return std::numeric_limits<double>::quiet_NaN();
  std::vector<double> w(v.begin(), v.end());
  const std::size_t mid = w.size() / 2;
  std::nth_element(w.begin(), w.begin() + static_cast<std::ptrdiff_t>(mid), w.end());
  if (w.size() % 2 == 1) return w[mid];
  const double upper = w[mid];
  const double lower = *std::max_element(w.begin(), w.begin() + static_cast<std::ptrdiff_t>(mid));
  return 0.5 * (lower + upper);
}

void running_median(std::span<const double> v, int h, std::vector<double>& out) {
  const std::size_t n = v.size();
  out.resize(n);
  std::vector<double> window;
  window.reserve(2 * static_cast<std::size_t>(std::max(h, 0)) + 1);
  for (std::size_t k = 0; k < n; ++k) {
    const std::size_t r = std::min({static_cast<std::size_t>(std::max(h, 0)), k, n - 1 - k});
    window.assign(v.begin() + static_cast<std::ptrdiff_t>(k - r), v.begin() + static_cast<std::ptrdiff_t>(k + r + 1));
    std::nth_element(window.begin(), window.begin() + static_cast<std::ptrdiff_t>(r), window.end());
    out[k] = window[r];  // 2r+1 values: the middle one
  }
}

double noise_level(std::span<const double> v, std::span<const double> smoothed, int h) {
  const std::size_t n = v.size();
  const std::size_t hh = static_cast<std::size_t>(std::max(h, 0));
  if (n < 2 * hh + 5 || smoothed.size() != n) return 0.0;
  std::vector<double> dev;
  dev.reserve(n - 2 * hh);
  double lag0 = 0.0, lag1 = 0.0;
  for (std::size_t k = hh; k + hh < n; ++k) {
    const double r = v[k] - smoothed[k];
    dev.push_back(std::abs(r));
    lag0 += r * r;
    if (k + 1 + hh < n) lag1 += r * (v[k + 1] - smoothed[k + 1]);
  }
  // Scatter that alternates in sign from one evaluation to the next is a 2-cycle of the
  // iteration, not noise (the residuals of independent scatter have a lag-1 correlation near 0).
  if (lag0 > 0.0 && lag1 < -0.8 * lag0) return 0.0;
  const double mad = median_of(dev);
  // 1.4826 = 1/Φ⁻¹(3/4): the MAD of a normal sample estimates its sd this way (Hampel 1974).
  const double sigma = std::isfinite(mad) ? 1.4826 * mad : 0.0;
  // Scatter below 1e-9 of the trace's size is rounding (a converged deterministic run sitting at
  // its last bits), not sampling: minibatch noise is many decades larger.
  double size = 0.0;
  for (double x : v)
    if (std::isfinite(x)) size = std::max(size, std::abs(x));
  return sigma > 1e-9 * size ? sigma : 0.0;
}

double end_level(std::span<const double> v, bool smoothed) {
  const std::size_t n = v.size();
  if (n == 0) return std::numeric_limits<double>::quiet_NaN();
  if (!smoothed) return v[n - 1];
  const std::size_t w = std::min<std::size_t>(n, 2 * static_cast<std::size_t>(smoothing_half_width(n)) + 1);
  return median_of(v.subspan(n - w));
}

double noise_level_of(std::span<const double> v) {
  const int h = smoothing_half_width(v.size());
  std::vector<double> s;
  running_median(v, h, s);
  return noise_level(v, s, h);
}

double gated_rises(std::span<const double> s, double gate) {
  if (s.empty()) return 0.0;
  double rises = 0.0, ref = s[0];
  for (std::size_t k = 1; k < s.size(); ++k) {
    if (s[k] > ref + gate) {
      rises += s[k] - ref;
      ref = s[k];
    } else if (s[k] < ref) {
      ref = s[k];
    }
  }
  return rises;
}

}  // namespace stepgate
