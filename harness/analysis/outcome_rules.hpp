// Classification of a run into an outcome, exactly as DESIGN.md defines it. One implementation
// serves both the live runner (observe() per evaluation, with early exit) and finished traces
// (classify()), so the two can never disagree.
#pragma once
#include <cstddef>
#include <deque>
#include <optional>
#include <span>
#include <string>
#include <string_view>

#include "core/outcome.hpp"
#include "core/run_record.hpp"

namespace stepgate {

enum class Criterion {
  automatic,  ///< gap when J* is known, otherwise plateau
  gap,        ///< gap_k ≤ tol · gap_0
  grad,       ///< ‖g_k‖ ≤ tol · ‖g_0‖
  cost,       ///< J_k ≤ target
  plateau,    ///< (J_{k−w} − J_k) / |J_{k−w}| < tol over the last w evaluations
};

std::string_view to_string(Criterion c);
std::optional<Criterion> criterion_from_string(std::string_view s);

/// Settings of classification. Defaults and why:
struct OutcomeSettings {
  Criterion criterion = Criterion::automatic;
  /// Tolerance of the criterion; NaN = the criterion's default: gap 1e-6 (six decades below the
  /// starting gap, so slow modes must be resolved too, not just the stiff ones), grad 1e-3
  /// (near a minimum gap ∝ ‖g‖², so 1e-3 in the gradient is about 1e-6 in the gap), plateau 1e-8.
  double tol = kMissing;
  double target = kMissing;    ///< cost criterion: the cost to reach (required for it)
  long plateau_window = 10;    ///< plateau: evaluations compared (w)
  /// A run whose gap (or, without J*, cost) exceeds blowup_factor times its starting value has
  /// diverged. 1e4: far above the transient growth of momentum methods at safe rates (bounded by
  /// about 1/(1−β) for the heavy ball), yet reached within a few hundred iterations by gd at 1%
  /// above 2/L, so the divergence threshold is located sharply.
  double blowup_factor = 1e4;
  /// A run whose overshoot exceeds this is oscillating. 0.5: the cost rose by more than half of
  /// what it fell in all; monotone methods score 0, and a well-damped heavy ball stays well below.
  double overshoot_limit = 0.5;
  /// The criterion must hold at one evaluation and the next `hold` evaluations (so a single dip
  /// of an oscillating run does not count as convergence).
  long hold = 3;

  /// The tolerance in force for the given criterion (resolves NaN to the default).
  double tolerance(Criterion resolved) const;
};

/// The verdict on one run.
struct Classification {
  Outcome outcome = Outcome::slow;
  std::optional<long> iterations;  ///< converged only
  double overshoot = 0.0;
  std::string reason;
};

/// Watches a run evaluation by evaluation and says when it is decided.
class OutcomeMonitor {
 public:
  /// `has_optimum`: J* is known, so gaps are given (criterion automatic → gap).
  OutcomeMonitor(const OutcomeSettings& settings, bool has_optimum);

  /// Feeds one evaluation; returns true when the outcome is decided (diverged, or the
  /// criterion held for hold+1 evaluations) and the run should stop.
  bool observe(const TracePoint& point);
  bool decided() const { return decided_.has_value(); }
  /// The classification now; when not decided, the run is taken to have used its budget.
  Classification result() const;
  /// The criterion in force after resolving `automatic`.
  Criterion criterion() const { return criterion_; }

 private:
  double progress_value(const TracePoint& p) const;  // gap when known, else cost
  bool criterion_met(const TracePoint& p);
  double overshoot() const;

  OutcomeSettings settings_;
  bool has_optimum_;
  Criterion criterion_;
  double tol_;
  std::size_t count_ = 0;
  TracePoint first_;
  double prev_value_ = 0.0, min_value_ = 0.0, rises_ = 0.0;
  std::optional<long> stretch_start_;
  long stretch_length_ = 0;
  std::deque<double> window_;  // plateau: last w+1 costs
  std::optional<Classification> decided_;
};

/// Classifies a finished trace (the run is taken to have used its budget unless decided earlier).
Classification classify(std::span<const TracePoint> trace, const OutcomeSettings& settings,
                        bool has_optimum);

}  // namespace stepgate
