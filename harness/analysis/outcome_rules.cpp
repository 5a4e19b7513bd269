#include "analysis/outcome_rules.hpp"

#include <cmath>
#include <fmt/format.h>

namespace stepgate {

OutcomeMonitor::OutcomeMonitor(const OutcomeSettings& settings, bool has_optimum)
    : settings_(settings), has_optimum_(has_optimum) {
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
  const bool finite = std::isfinite(p.cost) && std::isfinite(p.grad_norm) &&
                      (!has_optimum_ || std::isfinite(p.gap));
  if (count_ == 0) {
    first_ = p;
    prev_value_ = min_value_ = value;
  }
  ++count_;
  if (!finite) {
    decided_ = Classification{Outcome::diverged, std::nullopt, kInf,
                              fmt::format("non-finite cost or gradient at iteration {}", p.iter)};
    return true;
  }
  const double start = progress_value(first_);
  if (start > 0.0 && value > settings_.blowup_factor * start) {
    decided_ = Classification{
        Outcome::diverged, std::nullopt, overshoot(),
        fmt::format("{} {:.3g} > {:g} x its start {:.3g} at iteration {}",
                    has_optimum_ ? "gap" : "cost", value, settings_.blowup_factor, start, p.iter)};
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
    stretch_start_.reset();
  }
  if (stretch_start_ && stretch_length_ >= settings_.hold) {
    const double os = overshoot();
    if (os > settings_.overshoot_limit) {
      decided_ = Classification{
          Outcome::oscillating, std::nullopt, os,
          fmt::format("{} criterion met from iteration {}, but overshoot {:.3g} > {:g}",
                      to_string(criterion_), *stretch_start_, os, settings_.overshoot_limit)};
    } else {
      decided_ = Classification{
          Outcome::converged, stretch_start_, os,
          fmt::format("{} criterion (tol {:g}) met from iteration {} for {} more evaluations",
                      to_string(criterion_), criterion_ == Criterion::cost ? settings_.target : tol_,
                      *stretch_start_, settings_.hold)};
    }
    return true;
  }
  return false;
}

Classification OutcomeMonitor::result() const {
  if (decided_) return *decided_;
  const double os = overshoot();
  if (os > settings_.overshoot_limit)
    return {Outcome::oscillating, std::nullopt, os,
            fmt::format("budget used without meeting the {} criterion; overshoot {:.3g} > {:g}",
                        to_string(criterion_), os, settings_.overshoot_limit)};
  return {Outcome::slow, std::nullopt, os,
          fmt::format("budget used without meeting the {} criterion", to_string(criterion_))};
}

Classification classify(std::span<const TracePoint> trace, const OutcomeSettings& settings,
                        bool has_optimum) {
  OutcomeMonitor monitor(settings, has_optimum);
  for (const TracePoint& p : trace)
    if (monitor.observe(p)) break;
  return monitor.result();
}

}  // namespace stepgate
