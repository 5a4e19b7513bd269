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
#include "core/outcome_settings.hpp"
#include "core/run_record.hpp"

namespace stepgate {

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
