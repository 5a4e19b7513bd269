#include "stepgate/analysis/outcome_rules.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>

#include "stepgate/analysis/noise.hpp"
#include "stepgate/analysis/noisy_outcome.hpp"

namespace stepgate {

OutcomeMonitor::OutcomeMonitor(const OutcomeSettings& settings, bool has_optimum, long budget)
    : settings_(settings), has_optimum_(has_optimum), budget_(budget) {
  criterion_ = settings.criterion;
  if (criterion_ == Criterion::automatic) criterion_ = has_optimum ? Criterion::gap : Criterion::plateau;
  tol_ = settings.tolerance(criterion_);
  whole_trace_ = criterion_ == Criterion::settled;
}

namespace {

// The live rules can judge a run by any criterion but settled, and by the automatic one only
// with J* (gap): without J* it would mean a relative plateau of 1e-8, which no log meets.
bool live_rules_can_judge(const OutcomeSettings& s, bool has_optimum) {
  return s.criterion != Criterion::settled && (has_optimum || s.criterion != Criterion::automatic);
}

double noise_of_progress(const std::vector<TracePoint>& points, bool has_optimum) {
  std::vector<double> v;
  v.reserve(points.size());
  for (const TracePoint& q : points) v.push_back(has_optimum ? q.gap : q.cost);
  return noise_level_of(v);
}

}  // namespace

void OutcomeMonitor::read_as_noisy(bool may_be_deterministic) {
  noisy_ = whole_trace_ = true;
  zero_noise_is_live_ = may_be_deterministic && live_rules_can_judge(settings_, has_optimum_);
  if (zero_noise_is_live_)
    live_ = std::make_shared<OutcomeMonitor>(settings_, has_optimum_, budget_);
  if (settings_.criterion == Criterion::automatic) criterion_ = Criterion::settled;
  tol_ = settings_.tolerance(criterion_);
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
    case Criterion::automatic:
    case Criterion::settled: break;  // whole-trace criteria: decided by classify_whole_trace
  }
  return false;
}

double OutcomeMonitor::overshoot() const {
  const double drop = progress_value(first_) - min_value_;
  if (drop > 0.0) return rises_ / drop;
  return rises_ > 0.0 ? kInf : 0.0;
}

void OutcomeMonitor::allow_slow_proof(long every) {
  if (every > 0 && (criterion_ == Criterion::gap || criterion_ == Criterion::grad)) proof_every_ = every;
}

double OutcomeMonitor::criterion_value(const TracePoint& p) const {
  return criterion_ == Criterion::gap ? p.gap : p.grad_norm;
}

// The proof. With eᵢ the error's component along the i-th eigenvector of H, gd at rate α gives
// gap_t = Σᵢ aᵢ rᵢᵗ with aᵢ = ½λᵢeᵢ² ≥ 0 and rᵢ = (1 − αλᵢ)² (and ‖∇J‖² the same with
// aᵢ = λᵢ²eᵢ²). Over an evaluation interval of e iterations the ratio
//   ρ_t = s_{t+e} / s_t = Σᵢ (aᵢrᵢᵗ) rᵢᵉ / Σᵢ aᵢrᵢᵗ
// is the mean of rᵢᵉ weighted by aᵢrᵢᵗ, and by Cauchy–Schwarz s_t² ≤ s_{t−e}·s_{t+e}, so
// ρ_{t−e} ≤ ρ_t: the ratio never decreases (the weight moves to the slowest mode), and a norm
// (the square root) keeps that. Hence s_{t+me} ≥ s_t·ρ_{t−e}^m for every m ≥ 0: extrapolating
// the latest ratio underestimates every later value. With α < 2/λ_max all rᵢ < 1, so the
// series never rises (no divergence, overshoot 0) and the outcome is converged or slow.
// Converged needs the criterion met at an evaluation t₁ with t₁ + confirm_min ≤ budget; if
// even the lower bound at the last such evaluation exceeds the threshold, slow is certain.
// The factor 2 leaves room for rounding, which the exact-arithmetic argument does not cover,
// and any rise seen so far (rounding dominating) switches the proof off for the run.
std::optional<std::string> OutcomeMonitor::proven_slow(const TracePoint& p) const {
  if (proof_every_ <= 0 || budget_ < 0 || stretch_start_ || !proof_monotone_) return std::nullopt;
  if (proof_prev_iter_ != p.iter - proof_every_) return std::nullopt;  // not evenly spaced
  const double s = criterion_value(p), s0 = criterion_value(first_), prev = proof_prev_;
  const double threshold = tol_ * s0;
  if (!(s > 0.0) || !(prev > 0.0) || !(threshold > 0.0) || !std::isfinite(s0)) return std::nullopt;
  const double ratio = s / prev;  // in (0, 1]: monotone so far
  const long last_start = budget_ - settings_.confirm_min;  // the latest t₁ that can be confirmed
  const long last_eval = last_start < 0 ? -1 : last_start / proof_every_ * proof_every_;
  const long ahead = last_eval <= p.iter ? 0 : (last_eval - p.iter) / proof_every_;
  // log of the lower bound s·ratio^ahead at the last evaluation that could start the stretch
  const double log_bound = std::log(s) + static_cast<double>(ahead) * std::log(ratio);
  if (!(log_bound > std::log(2.0 * threshold))) return std::nullopt;
  const char* what = criterion_ == Criterion::gap ? "gap" : "gradient norm";
  if (ahead == 0)
    return fmt::format("proven slow at iteration {}: the {} is {:.3g} of its start, above the criterion's {:g}, "
                       "and no later evaluation can start a stretch that is confirmed within the budget",
                       p.iter, what, s / s0, tol_);
  return fmt::format("proven slow at iteration {}: the {} shrinks at best x{:.6g} per evaluation (gd on a "
                     "convex quadratic below 2/L: this ratio never falls), so at iteration {}, the last that "
                     "can start a confirmed stretch within the budget, it is still at least {:.3g} of its start, "
                     "above the criterion's {:g}",
                     p.iter, what, ratio, last_eval, std::exp(log_bound) / s0, tol_);
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
  if (whole_trace_) {
    kept_.push_back(p);
    if (live_ && live_->observe(p)) {
      if (noise_of_progress(kept_, has_optimum_) == 0.0) {
        decided_ = live_->result();
        decided_->noise = 0.0;
        return true;
      }
      live_.reset();  // scatter: the noisy rules decide at the end
    }
    // A network that blew up: its cost stays far above its start (a median of 5 ignores the
    // single-step spikes of a minibatch loss).
    if (!has_optimum_ && start > 0.0 && kept_.size() >= 5) {
      double last[5];
      for (std::size_t i = 0; i < 5; ++i) last[i] = kept_[kept_.size() - 5 + i].cost;
      const double med = median_of(last);
      if (med > settings_.rise_factor * start) {
        decided_ = Classification{
            Outcome::diverged, std::nullopt, overshoot(),
            fmt::format("cost {:.3g} (median of the last 5 evaluations) > {:g} x its start {:.3g} at iteration {}",
                        med, settings_.rise_factor, start, p.iter), std::nullopt};
        return true;
      }
    }
    return false;
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
  if (proof_every_ > 0) {
    const double v = criterion_value(p);
    if (count_ > 1 && !(v <= proof_prev_)) proof_monotone_ = false;
    if (std::optional<std::string> why = proven_slow(p)) {
      decided_ = Classification{Outcome::slow, std::nullopt, overshoot(), std::move(*why), std::nullopt};
      return true;
    }
    proof_prev_ = v;
    proof_prev_iter_ = p.iter;
  }
  return false;
}

Classification OutcomeMonitor::result() const {
  if (decided_) {
    Classification c = *decided_;
    if (noisy_ && c.outcome != Outcome::failed) c.noise = noise_of_progress(kept_, has_optimum_);
    return c;
  }
  if (whole_trace_) {
    // A noisy run whose log shows no scatter, with a criterion the live rules can read (any but
    // settled, and the automatic one only with J*), is classified by the live rules: a noise
    // level of 0 changes nothing (docs/design.md, "Noisy runs").
    if (zero_noise_is_live_) {
      if (noise_of_progress(kept_, has_optimum_) == 0.0) {
        OutcomeMonitor live(settings_, has_optimum_, budget_);
        for (const TracePoint& q : kept_)
          if (live.observe(q)) break;
        Classification c = live.result();
        c.noise = 0.0;
        return c;
      }
    }
    return classify_whole_trace(kept_, settings_, has_optimum_, criterion_, noisy_);
  }
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

void record_classification(const Classification& c, RunRecord& r) {
  r.outcome = c.outcome;
  r.iterations = c.iterations;
  r.overshoot = c.overshoot;
  r.noise = c.noise;
  r.reason = c.reason;
  r.confirmation = c.confirmation;
}

Classification classify(std::span<const TracePoint> trace, const OutcomeSettings& settings,
                        bool has_optimum, bool noisy) {
  OutcomeMonitor monitor(settings, has_optimum, trace.empty() ? -1 : trace.back().iter);
  if (noisy) monitor.read_as_noisy();
  for (const TracePoint& p : trace)
    if (monitor.observe(p)) break;
  return monitor.result();
}

}  // namespace stepgate
