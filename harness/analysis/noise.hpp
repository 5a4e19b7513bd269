// The noise in a run's trace and the smoothed trace the outcome rules read (docs/design.md,
// "Noisy runs"). A minibatch loss logged every step scatters around its trend; these helpers
// separate the two without assuming a shape for the trend.
#pragma once
#include <cstddef>
#include <span>
#include <vector>

namespace stepgate {

/// Half-width h of the running median for a trace of `points` evaluations: points/24, at least
/// 1 and at most 10 (a window of 3 for a dozen held-out evaluations, 21 for a per-step loss of a
/// few hundred steps: wide enough to average minibatch scatter, narrow enough to follow a drop).
int smoothing_half_width(std::size_t points);

/// The centred running median of half-width h: out[k] = median of v[k−r .. k+r] with
/// r = min(h, k, n−1−k), so windows shrink symmetrically at the ends (out[0] = v[0]). The
/// median of an odd window is exact for monotone stretches, so those pass through unchanged.
void running_median(std::span<const double> v, int h, std::vector<double>& out);

/// The median of v (copied; NaN for an empty span).
double median_of(std::span<const double> v);

/// The noise level: 1.4826 · median |v_k − smoothed_k| over the interior points k in
/// [h, n−1−h] (the MAD scaled to a normal's sd; robust to spikes). 0 when there are fewer than
/// 5 interior points, and 0 for a trace whose interior is mostly monotone (no scatter to
/// explain) or whose residuals alternate in sign (lag-1 correlation below −0.8: a 2-cycle of
/// the iteration, which the rules must see as the swing it is), or at most 1e-9 of the largest
/// |v| (rounding at a converged run's last bits, not sampling).
double noise_level(std::span<const double> v, std::span<const double> smoothed, int h);

/// The level a trace ends at, as the rules read it: with noise (`smoothed`), the median of the
/// last 2h+1 values (h = smoothing_half_width(n)); without, the last value. NaN when empty.
double end_level(std::span<const double> v, bool smoothed);

/// noise_level of v against its running median of half-width smoothing_half_width(v.size()).
double noise_level_of(std::span<const double> v);

/// The sum of the rises of `s` that exceed `gate` (a hysteresis: the reference level follows
/// every fall, and a rise counts, in full, only once it is more than `gate` above the
/// reference). With gate = 0 this is Σ max(0, s_{k+1} − s_k).
double gated_rises(std::span<const double> s, double gate);

}  // namespace stepgate
