#include "stepgate/analysis/noisy_outcome.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <vector>

#include "stepgate/analysis/noise.hpp"

namespace stepgate {

namespace {

// One series of the trace (progress, cost, gap or gradient norm) and its smoothed copy.
struct Series {
  std::vector<double> raw, smooth;
};

Series series_of(std::span<const TracePoint> trace, double TracePoint::*field, int h, bool smooth) {
  Series s;
  s.raw.reserve(trace.size());
  for (const TracePoint& p : trace) s.raw.push_back(p.*field);
  if (smooth) running_median(s.raw, h, s.smooth);
  else s.smooth = s.raw;
  return s;
}

double median_of_range(const std::vector<double>& v, std::size_t from, std::size_t to) {
  return median_of(std::span<const double>(v.data() + from, to - from));
}

// The first index t1 from which `met` holds at every later evaluation; nullopt when it does
// not hold at the last one.
template <class Met>
std::optional<std::size_t> held_to_the_end(std::size_t n, Met met) {
  std::optional<std::size_t> t1;
  for (std::size_t k = n; k-- > 0;) {
    if (!met(k)) break;
    t1 = k;
  }
  return t1;
}

}  // namespace

Classification classify_whole_trace(std::span<const TracePoint> trace, const OutcomeSettings& settings,
                                    bool has_optimum, Criterion criterion, bool noisy) {
  Classification c;
  c.noise = noisy ? 0.0 : kMissing;
  const std::size_t n = trace.size();
  if (n == 0) {
    c.reason = "no evaluation";
    return c;
  }
  const int h = smoothing_half_width(n);
  // Progress: the gap when J* is known, else the cost.
  Series v = series_of(trace, has_optimum ? &TracePoint::gap : &TracePoint::cost, h, noisy);
  const double sigma = noisy ? noise_level(v.raw, v.smooth, h) : 0.0;
  const bool smoothing = sigma > 0.0;
  if (!smoothing) v.smooth = v.raw;  // nothing to explain: the raw values, as the live rules read them
  if (noisy) c.noise = sigma;
  const std::string noise_note = noisy ? fmt::format("; noise level {:.3g}", sigma) : std::string();
  const double margin = 3.0 * sigma;

  // Levels. A minibatch loss at iteration 0 is itself a noisy draw: the start is the larger of
  // it and the median of the first h+1 evaluations; the end is the median of the last 2h+1.
  const double start = smoothing ? std::max(v.raw[0], median_of_range(v.raw, 0, std::min<std::size_t>(n, h + 1)))
                                 : v.raw[0];
  const double final_level = end_level(v.raw, smoothing);
  const double best = *std::min_element(v.smooth.begin(), v.smooth.end());
  const double top = *std::max_element(v.smooth.begin(), v.smooth.end());
  const long last_iter = trace[n - 1].iter;

  // Networks: a run that blew up often ends at chance level instead of at a non-finite or huge
  // cost. Without J* that is told by where it ends, not how far it went.
  if (!has_optimum && n >= 2) {
    if (start > 0.0 && top > settings.rise_factor * start) {
      c.outcome = Outcome::diverged;
      c.overshoot = kInf;
      c.reason = fmt::format("smoothed cost rose to {:.4g} > {:g} x its start {:.4g}{}", top, settings.rise_factor,
                             start, noise_note);
      return c;
    }
    const bool moved = top > start + margin || best < start - margin;
    if (final_level >= start - margin && moved) {
      c.outcome = Outcome::diverged;
      c.overshoot = kInf;
      c.reason = fmt::format("trained to nothing: ends at {:.4g}, no better than its start {:.4g}{} (smoothed range "
                             "{:.4g} to {:.4g})",
                             final_level, start, noise_note, best, top);
      return c;
    }
  }

  // Overshoot on the smoothed trace; a rise within the noise level is not a swing. With noise,
  // only the interior where the median's window is whole is read (the shrinking windows at the
  // ends pass single draws through), and a fall smaller than the noise margin is taken as the
  // margin: a run that never fell beyond the noise has no overshoot to speak of.
  const std::size_t edge = smoothing && n > 2 * static_cast<std::size_t>(h) ? static_cast<std::size_t>(h) : 0;
  const double rises =
      gated_rises(std::span<const double>(v.smooth.data() + edge, n - 2 * edge), sigma);
  const double drop = std::max(start - best, margin);
  c.overshoot = drop > 0.0 ? rises / drop : (rises > 0.0 ? kInf : 0.0);
  if (c.overshoot > settings.overshoot_limit) {
    c.outcome = Outcome::oscillating;
    c.reason = fmt::format("overshoot {:.3g} > {:g}{}{}", c.overshoot, settings.overshoot_limit,
                           smoothing ? " (rises of the smoothed trace beyond the noise level)" : "", noise_note);
    return c;
  }

  const double tol = settings.tolerance(criterion);
  const std::size_t need = static_cast<std::size_t>(settings.hold) + 1;
  auto converged_from = [&](std::size_t t1, std::string why) {
    c.outcome = Outcome::converged;
    c.iterations = trace[t1].iter;
    c.reason = std::move(why) + noise_note;
  };

  if (criterion == Criterion::settled) {
    const double gain = start - final_level;
    if (!(gain > margin) || !(gain > 0.0)) {
      c.reason = fmt::format("settled criterion: no improvement beyond the noise (from {:.4g} to {:.4g}){}", start,
                             final_level, noise_note);
      return c;
    }
    const double allowed = tol * gain;
    if (final_level - best > std::max(margin, allowed)) {
      c.outcome = Outcome::oscillating;
      c.reason = fmt::format("ends at {:.4g}, above its best {:.4g} by more than max(3 x noise, tol {:g} x its "
                             "improvement {:.4g}){}",
                             final_level, best, tol, gain, noise_note);
      return c;
    }
    // The last quarter of the run, by iterations.
    const long tail_from = last_iter - (last_iter - trace[0].iter) / 4;
    std::size_t q = 0;
    while (q + 1 < n && trace[q].iter < tail_from) ++q;
    const double tail_gain = v.smooth[q] - final_level;
    if (tail_gain > allowed) {
      c.reason = fmt::format("settled criterion: still improving, the last quarter (from iteration {}) gained {:.1f}% "
                             "of the whole improvement {:.4g} (tol {:g}){}",
                             trace[q].iter, 100.0 * tail_gain / gain, gain, tol, noise_note);
      return c;
    }
    std::size_t t1 = 0;
    while (t1 + 1 < n && v.smooth[t1] > final_level + allowed) ++t1;
    if (n - t1 < need) {
      c.reason = fmt::format("settled criterion: within tol of its final level only from iteration {}, fewer than "
                             "{} evaluations before the end{}", trace[t1].iter, need, noise_note);
      return c;
    }
    converged_from(t1, fmt::format("settled criterion (tol {:g}): from iteration {} within {:.3g} of its final level "
                                   "{:.4g}; the last quarter gained {:.1f}% of the improvement {:.4g}",
                                   tol, trace[t1].iter, allowed, final_level, 100.0 * std::max(0.0, tail_gain) / gain,
                                   gain));
    return c;
  }

  // The other criteria, read on the smoothed trace and held to the end of the run.
  Series q;
  double threshold = kMissing;
  switch (criterion) {
    case Criterion::gap:
      q = series_of(trace, &TracePoint::gap, h, smoothing);
      threshold = tol * q.raw[0];
      break;
    case Criterion::grad:
      q = series_of(trace, &TracePoint::grad_norm, h, smoothing);
      threshold = tol * q.raw[0];
      break;
    case Criterion::cost:
    case Criterion::plateau:
      q = series_of(trace, &TracePoint::cost, h, smoothing);
      threshold = settings.target;
      break;
    default: break;
  }
  const std::size_t window = static_cast<std::size_t>(settings.plateau_window);
  auto met = [&](std::size_t k) {
    const double x = q.smooth[k];
    if (criterion == Criterion::plateau) {
      if (k < window) return false;
      const double old = q.smooth[k - window];
      const double scale = std::abs(old) > 0.0 ? std::abs(old) : 1.0;
      return (old - x) / scale < tol;
    }
    return x <= threshold;
  };
  const std::optional<std::size_t> t1 = held_to_the_end(n, met);
  if (t1 && n - *t1 >= need) {
    converged_from(*t1, fmt::format("{} criterion ({} {:g}) met{} from iteration {} to the end ({})",
                                    to_string(criterion), criterion == Criterion::cost ? "target" : "tol",
                                    criterion == Criterion::cost ? settings.target : tol,
                                    smoothing ? " by the smoothed trace" : "", trace[*t1].iter, last_iter));
    return c;
  }
  c.reason = fmt::format("budget used without the {} criterion holding to the end{}{}", to_string(criterion),
                         t1 ? fmt::format(" (it holds over the last {} evaluations, from iteration {}; needs {})",
                                          n - *t1, trace[*t1].iter, need)
                            : std::string(),
                         noise_note);
  return c;
}

}  // namespace stepgate
