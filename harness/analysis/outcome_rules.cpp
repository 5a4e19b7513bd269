#include "stepgate/analysis/outcome_rules.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>

namespace stepgate {

OutcomeMonitor::OutcomeMonitor(const OutcomeSettings& settings, bool has_optimum, long budget)
    : settings_(settings), has_optimum_(has_optimum), budget_(budget) {
  criterion_ = settings.criterion;
  if (criterion_ == Criterion::automatic) criterion_ = has_optimum ? Criterion::gap : Criterion::plateau;
  tol_ = settings.tolerance(criterion_);
}

double OutcomeMonitor::progress_value(const TracePoint& p) const {
  return has_optimum_ ? p.gap : p.cost;
}

bool OutcomeMonitor::criterion_met(const TracePoint& p) {
  switch (criterion_) {
    case Criterion::gap: return p.gap <= tol_ * first_.gap;
    case Criterion::grad: return p.grad_norm <= tol_ * first_.grad_norm;
    case Criterion::cost: return p.cost <= settings_.target;
    case Criterion::plateau: {
      window_.push_back(p.cost);
      if (static_cast<long>(window_.size()) > settings_.plateau_window + 1) window_.pop_front();
      if (static_cast<long>(window_.size()) < settings_.plateau_window + 1) return false;
      const double old = window_.front();
      const double scale = std::abs(old) > 0.0 ? std::abs(old) : 1.0;
      return (old - p.cost) / scale < tol_;
    }
    case Criterion::automatic: break;
  }
  return false;
}

double OutcomeMonitor::overshoot() const {
  const double drop = progress_value(first_) - min_value_;
  if (drop > 0.0) return rises_ / drop;
  return rises_ > 0.0 ? kInf : 0.0;
}

bool OutcomeMonitor::observe(const TracePoint& p) {
  if (decided_) return true;
  const double value = progress_value(p);
  // A gradient norm that was not given (NaN: commands may leave it out) is no sign of divergence.
  const bool finite = std::isfinite(p.cost) && !std::isinf(p.grad_norm) &&
                      (!has_optimum_ || std::isfinite(p.gap));
  if (count_ == 0) {
    first_ = p;
    prev_value_ = min_value_ = value;
  }
  ++count_;
  if (!finite && count_ == 1) {
    // Not the rate's doing: the same at every rate, so no boundary may be read from it.
    decided_ = Classification{Outcome::failed, std::nullopt, kMissing,
                              fmt::format("cost not finite at the start (iteration {}): the problem, not the rate", p.iter),
                              std::nullopt};
    return true;
  }
  if (!finite) {
    decided_ = Classification{Outcome::diverged, std::nullopt, kInf,
                              fmt::format("non-finite cost or gradient at iteration {}", p.iter), std::nullopt};
    return true;
  }
  const double start = progress_value(first_);
  if (start > 0.0 && value > settings_.blowup_factor * start) {
    decided_ = Classification{
        Outcome::diverged, std::nullopt, overshoot(),
        fmt::format("{} {:.3g} > {:g} x its start {:.3g} at iteration {}",
                    has_optimum_ ? "gap" : "cost", value, settings_.blowup_factor, start, p.iter), std::nullopt};
    return true;
  }
  if (count_ > 1) {
    if (value > prev_value_) rises_ += value - prev_value_;
    if (value < min_value_) min_value_ = value;
    prev_value_ = value;
  }
  if (criterion_met(p)) {
    if (!stretch_start_) stretch_start_ = p.iter, stretch_length_ = 0;
    else ++stretch_length_;
  } else {
    if (confirming_) lost_from_ = stretch_start_, lost_at_ = p.iter;
    stretch_start_.reset();
    confirming_ = false;
    probe_growth_ = kMissing;
  }
  if (stretch_start_ && !confirming_ && stretch_length_ >= settings_.hold) {
    const long t1 = *stretch_start_;
    const long extra = std::max(settings_.confirm_min,
                                static_cast<long>(std::ceil(settings_.confirm_factor * static_cast<double>(t1))));
    confirming_ = true;
    confirm_until_ = t1 + extra;
    if (budget_ >= 0) confirm_until_ = std::min(confirm_until_, budget_);
  }
  // Decided when the stretch is complete: it must reach its end and be long enough (a stretch
  // cut short by the budget to under confirm_min iterations confirms nothing).
  if (confirming_ && p.iter >= confirm_until_ && confirm_until_ - *stretch_start_ >= settings_.confirm_min) {
    const long t1 = *stretch_start_;
    const double os = overshoot();
    if (os > settings_.overshoot_limit) {
      decided_ = Classification{
          Outcome::oscillating, std::nullopt, os,
          fmt::format("{} criterion met from iteration {}, but overshoot {:.3g} > {:g}",
                      to_string(criterion_), t1, os, settings_.overshoot_limit), std::nullopt};
    } else if (!std::isnan(probe_growth_) && !(probe_growth_ <= 1.0)) {
      decided_ = Classification{
          Outcome::oscillating, std::nullopt, os,
          fmt::format("{} criterion met from iteration {}, but a kick along the top curvature direction "
                      "grew x{:.3g} by iteration {}: the minimum repels the iteration at this rate",
                      to_string(criterion_), t1, probe_growth_, p.iter), std::nullopt};
    } else {
      const bool probed = !std::isnan(probe_growth_);
      decided_ = Classification{
          Outcome::converged, t1, os,
          fmt::format("{} criterion (tol {:g}) met from iteration {} to {}{}", to_string(criterion_),
                      criterion_ == Criterion::cost ? settings_.target : tol_, t1, p.iter,
                      probed ? fmt::format("; probe kick x{:.3g}", probe_growth_) : std::string()),
          Confirmation{probed ? "stretch+probe" : "stretch", p.iter, probed ? probe_growth_ : kMissing}};
    }
    return true;
  }
  return false;
}

Classification OutcomeMonitor::result() const {
  if (decided_) return *decided_;
  std::string note;
  if (confirming_)
    note = fmt::format("; met from iteration {}, too late to confirm within the budget (needs {} more iterations)",
                       *stretch_start_, settings_.confirm_min);
  else if (lost_from_)
    note = fmt::format("; met from iteration {} but lost at {} during confirmation", *lost_from_, *lost_at_);
  const double os = overshoot();
  if (os > settings_.overshoot_limit)
    return {Outcome::oscillating, std::nullopt, os,
            fmt::format("budget used without a confirmed {} criterion; overshoot {:.3g} > {:g}{}",
                        to_string(criterion_), os, settings_.overshoot_limit, note), std::nullopt};
  return {Outcome::slow, std::nullopt, os,
          fmt::format("budget used without a confirmed {} criterion{}", to_string(criterion_), note), std::nullopt};
}

Classification classify(std::span<const TracePoint> trace, const OutcomeSettings& settings,
                        bool has_optimum) {
  OutcomeMonitor monitor(settings, has_optimum, trace.empty() ? -1 : trace.back().iter);
  for (const TracePoint& p : trace)
    if (monitor.observe(p)) break;
  return monitor.result();
}

}  // namespace stepgate
