// Classification of a run into an outcome, exactly as docs/design.md defines it. One implementation
// serves both the live runner (observe() per evaluation, with early exit) and finished traces
// (classify()), so the two can never disagree.
#pragma once
#include <cstddef>
#include <deque>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "stepgate/core/outcome.hpp"
#include "stepgate/core/outcome_settings.hpp"
#include "stepgate/core/run_record.hpp"

namespace stepgate {

/// The verdict on one run.
struct Classification {
  Outcome outcome = Outcome::slow;
  std::optional<long> iterations;  ///< converged only
  double overshoot = 0.0;
  std::string reason;
  std::optional<Confirmation> confirmation;  ///< converged only
  double noise = kMissing;  ///< the trace's noise level when read as noisy; NaN otherwise
};

/// Watches a run evaluation by evaluation and says when it is decided.
///
/// Convergence is decided only once confirmed: the criterion holds from iteration t1 for
/// hold+1 evaluations, then on every evaluation up to t1 + max(confirm_min, ⌈confirm_factor·t1⌉)
/// (capped at the budget, and then at least confirm_min iterations), and the probe beside the
/// run (when the caller runs one and reports it with set_probe_growth) has not grown. A probe
/// that grew decides the run `oscillating`: the minimum repels the iteration at this rate.
class OutcomeMonitor {
 public:
  /// `has_optimum`: J* is known, so gaps are given (criterion automatic → gap).
  /// `budget`: the run's last iteration; negative = not known (confirmation then never caps).
  OutcomeMonitor(const OutcomeSettings& settings, bool has_optimum, long budget = -1);

  /// Reads the run as noisy (docs/design.md, "Noisy runs"); call before the first observe().
  /// Only divergence is then decided live (non-finite, blowup_factor, and without J* a median of
  /// the last 5 costs above rise_factor × the start); everything else is decided by
  /// classify_whole_trace when the budget is used. The automatic criterion becomes `settled`.
  /// The `settled` criterion is read this way even when the run is not noisy (noise level 0).
  /// `may_be_deterministic`: the log may have no scatter at all (a command: a full-batch
  /// trainer); then, where the live rules can judge it, a noise level of 0 leaves the decision
  /// to them. A built-in minibatch run is stochastic by construction: false.
  void read_as_noisy(bool may_be_deterministic = true);

  /// Feeds one evaluation; returns true when the outcome is decided (diverged, or converged and
  /// confirmed, or the probe grew) and the run should stop.
  bool observe(const TracePoint& point);
  bool decided() const { return decided_.has_value(); }
  /// True once decided as converged (confirmed).
  bool converged() const { return decided_ && decided_->outcome == Outcome::converged; }
  /// True while a confirmation stretch is under way (the criterion held hold+1 evaluations).
  bool confirming() const { return confirming_; }
  /// The probe's growth so far: ‖kick now‖ / ‖kick at the start‖ (NaN or not called: no
  /// probe). Call before observe() of the same evaluation; reset when confirmation restarts.
  void set_probe_growth(double growth) { probe_growth_ = growth; }
  /// Admits the proven early `slow` verdict (docs/design.md, "A proven early slow verdict").
  /// The caller vouches that the criterion's value (the gap, or ‖∇J‖) at evaluation t is
  /// √(Σᵢ aᵢ rᵢᵗ) or Σᵢ aᵢ rᵢᵗ with aᵢ ≥ 0 and 0 ≤ rᵢ < 1: gd at a constant rate α below
  /// 2/λ_max on a convex quadratic, with evaluations every `every` iterations. Then the ratio of
  /// successive values never decreases, so the run cannot diverge or ring, and once even the
  /// current ratio, extrapolated, leaves the value above twice the criterion's threshold at the
  /// last iteration that could still start a confirmable stretch, the run is decided `slow`.
  /// Only the gap and grad criteria; ignored for the others.
  void allow_slow_proof(long every);
  /// The classification now; when not decided, the run is taken to have used its budget.
  Classification result() const;
  /// The criterion in force after resolving `automatic`.
  Criterion criterion() const { return criterion_; }

 private:
  double progress_value(const TracePoint& p) const;  // gap when known, else cost
  bool criterion_met(const TracePoint& p);
  double overshoot() const;
  double criterion_value(const TracePoint& p) const;  // gap or ‖∇J‖ (the proof's series)
  std::optional<std::string> proven_slow(const TracePoint& p) const;

  OutcomeSettings settings_;
  bool has_optimum_;
  Criterion criterion_;
  double tol_;
  std::size_t count_ = 0;
  TracePoint first_;
  double prev_value_ = 0.0, min_value_ = 0.0, rises_ = 0.0;
  std::optional<long> stretch_start_;
  long stretch_length_ = 0;
  long budget_ = -1;
  bool confirming_ = false;
  long confirm_until_ = 0;
  double probe_growth_ = kMissing;
  std::optional<long> lost_from_, lost_at_;  // the last stretch that broke during confirmation
  long proof_every_ = 0;           // > 0: the slow proof is admitted (allow_slow_proof)
  bool proof_monotone_ = true;     // every criterion value so far at most the one before
  double proof_prev_ = kMissing;   // the criterion value at the previous evaluation
  long proof_prev_iter_ = -1;
  std::deque<double> window_;  // plateau: last w+1 costs
  bool noisy_ = false;         // read_as_noisy()
  bool zero_noise_is_live_ = false;  // read_as_noisy(may_be_deterministic)
  // Noisy runs that the live rules can judge: they run beside, and their decision stands when
  // the log has shown no scatter up to it (the run then stops as early as it always did).
  std::shared_ptr<OutcomeMonitor> live_;
  bool whole_trace_ = false;   // decided at the end from kept_ (noisy, or the settled criterion)
  std::vector<TracePoint> kept_;
  std::optional<Classification> decided_;
};

/// Writes a classification into its run's record (outcome, iterations, overshoot, noise,
/// reason, confirmation).
void record_classification(const Classification& c, RunRecord& r);

/// Classifies a finished trace (the run is taken to have used its budget, the trace's last
/// iteration, unless decided earlier). No probe: confirmation by the stretch alone. `noisy`:
/// as OutcomeMonitor::read_as_noisy.
Classification classify(std::span<const TracePoint> trace, const OutcomeSettings& settings,
                        bool has_optimum, bool noisy = false);

}  // namespace stepgate
