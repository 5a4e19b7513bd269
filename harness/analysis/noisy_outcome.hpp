// The outcome of a run read as a whole trace (docs/design.md, "Noisy runs"): for noisy runs
// (minibatch losses, a trainer's log) and for the `settled` criterion. The live rules of
// analysis/outcome_rules decide such runs only when they diverge; everything else is decided
// here once the run has used its budget.
#pragma once
#include <span>

#include "stepgate/analysis/outcome_rules.hpp"

namespace stepgate {

/// Classifies a finished trace. `criterion` is resolved (not automatic). With `noisy`, the noise
/// level σ is estimated (analysis/noise) and the rules read the running median of the progress
/// values (the gap when J* is known, else the cost); a noise level of 0 reads the raw values.
/// Without `noisy`, σ = 0. The rules, in order:
///  - diverged (no J* only): ends no better than it started after moving by more than the noise
///    ("trained to nothing"), or the smoothed cost rose above rise_factor × its start;
///  - oscillating: overshoot > overshoot_limit, counting only rises of the smoothed trace larger
///    than σ (inside the ends where the median's window is whole), over a fall of at least 3σ;
///  - converged: the criterion holds on the smoothed trace from t1 to the end, for at least
///    hold+1 evaluations (settled: see OutcomeSettings); iterations = t1;
///  - oscillating (settled only): ends above its best by more than max(3σ, tol × improvement);
///  - slow otherwise.
/// The result's `noise` is σ (NaN without `noisy`).
Classification classify_whole_trace(std::span<const TracePoint> trace, const OutcomeSettings& settings,
                                    bool has_optimum, Criterion criterion, bool noisy);

}  // namespace stepgate
