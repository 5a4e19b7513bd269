// Settings of run classification (definitions: docs/design.md, "Runs and outcomes"); the rules that
// use them are analysis/outcome_rules.
#pragma once
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "stepgate/core/setting_field.hpp"
#include "stepgate/core/types.hpp"

namespace stepgate {

enum class Criterion {
  automatic,  ///< noisy runs: settled; otherwise gap when J* is known, else plateau
  gap,        ///< gap_k ≤ tol · gap_0
  grad,       ///< ‖g_k‖ ≤ tol · ‖g_0‖
  cost,       ///< J_k ≤ target
  plateau,    ///< (J_{k−w} − J_k) / |J_{k−w}| < tol over the last w evaluations
  /// Noisy runs (docs/design.md, "Noisy runs"): the smoothed progress improved over the last
  /// quarter of the run by at most tol · its whole improvement, and ends near its best.
  settled,
};

/// Whether a run's trace is read as noisy (docs/design.md, "Noisy runs"): its noise level is
/// estimated and the outcome rules read the smoothed trace.
enum class NoiseMode {
  automatic,  ///< on for mini-batch runs of built-in problems and for every command problem
  on,
  off,        ///< the deterministic rules of "Runs and outcomes"
};
std::string_view to_string(NoiseMode m);
/// Whether a run is read as noisy: `on`, or `automatic` for a run that draws minibatches or
/// comes from an external command (`stochastic`).
inline bool reads_as_noisy(NoiseMode m, bool stochastic) {
  return m == NoiseMode::on || (m == NoiseMode::automatic && stochastic);
}
std::optional<NoiseMode> noise_mode_from_string(std::string_view s);
/// "auto", "on", "off".
const std::vector<std::string>& noise_mode_names();

std::string_view to_string(Criterion c);
std::optional<Criterion> criterion_from_string(std::string_view s);
/// "auto", "gap", "grad", "cost", "plateau", "settled".
const std::vector<std::string>& criterion_names();

/// Settings of classification. Defaults and why:
struct OutcomeSettings {
  Criterion criterion = Criterion::automatic;
  /// Tolerance of the criterion; NaN = the criterion's default: gap 1e-6 (six decades below the
  /// starting gap, so slow modes must be resolved too, not just the stiff ones), grad 1e-3
  /// (near a minimum gap ∝ ‖g‖², so 1e-3 in the gradient is about 1e-6 in the gap), plateau 1e-8,
  /// settled 0.1 (an exponential approach to its level gains under 10% of its drop in the last
  /// quarter once the run is at least two time constants long: 86% of the way there).
  double tol = kMissing;
  double target = kMissing;    ///< cost criterion: the cost to reach (required for it)
  long plateau_window = 10;    ///< plateau: evaluations compared (w)
  /// A run whose gap (or, without J*, cost) exceeds blowup_factor times its starting value has
  /// diverged. 1e4: far above the transient growth of momentum methods at safe rates (bounded by
  /// about 1/(1−β) for the heavy ball), yet reached within a few hundred iterations by gd at 1%
  /// above 2/L, so the divergence threshold is located sharply.
  double blowup_factor = 1e4;
  /// A run whose overshoot exceeds this is oscillating. 3: momentum methods ring by nature —
  /// a mode that swings with a per-swing decay ρ has overshoot ≈ ρ/(1−ρ), and a heavy ball with
  /// β = 0.9 at αL = 1 (its fastest rates) scores 1.3 while converging — so only ringing that
  /// loses less than a quarter of its height per swing (ρ > 0.75) counts. Monotone methods
  /// (gd below 2/L on a quadratic) score 0.
  double overshoot_limit = 3.0;
  /// The criterion must hold at one evaluation and the next `hold` evaluations (so a single dip
  /// of an oscillating run does not count as convergence) before confirmation starts.
  long hold = 3;
  /// Confirmation (docs/design.md, "Confirmed convergence"): once the criterion has held from
  /// iteration t1 for hold+1 evaluations, the run goes on to iteration
  /// t1 + max(confirm_min, ⌈confirm_factor · t1⌉) (capped at the budget) and must meet the
  /// criterion at every evaluation on the way. 0.5 and 50: after a nonlinear start the unstable
  /// mode of a rate above the local limit starts 1e-9..1e-4 below the criterion and grows by
  /// |1 − αλ| per iteration, so it needs a stretch proportional to the time already taken; 50
  /// iterations of the probe below resolve a growth of 1% per iteration (1.01^50 = 1.6).
  double confirm_factor = 0.5;
  long confirm_min = 50;
  /// The probe: during the stretch a copy of the run, kicked along the top eigenvector of the
  /// Hessian (size 1e-4 · max(1, ‖w‖)), runs beside it; the run is confirmed only if the kick
  /// has not grown by the end of the stretch. This excites the one mode that a nonlinear start
  /// leaves nearly empty, exactly as a quadratic's start excites it. true by default; false
  /// leaves the stretch alone (cheaper, weaker).
  bool probe = true;
  /// Noise handling (docs/design.md, "Noisy runs"); automatic by default.
  NoiseMode noise = NoiseMode::automatic;
  /// Noisy runs without a known optimum: a smoothed cost above rise_factor times its start has
  /// diverged (a network that blew up). 10: a loss ten times its value at initialisation means
  /// the weights were thrown far from any useful region; minibatch spikes are single steps,
  /// which the smoothing removes.
  double rise_factor = 10.0;
  /// Noisy runs without a known optimum judged by `settled` (analysis/seed_level): a run
  /// converges only if it also ends at most level_ratio times the lowest level that any run of
  /// its seed in the grid ended at (when that level is above 0). 1.5: a network stuck at chance
  /// level ends several times above a trained one (2.30 against 0.4–1.2 on ten classes), while
  /// the stationary level of constant-rate SGD, which grows with the rate, stays within 1.5 of
  /// the best up to about three times the best rate (measured on examples/torch_minibatch).
  double level_ratio = 1.5;

  /// The tolerance in force for the given criterion (resolves NaN to the default).
  double tolerance(Criterion resolved) const;
};

/// The numeric and yes/no settings (tol, target, plateau_window, ...; `criterion` and `noise`
/// are words).
const std::vector<SettingField<OutcomeSettings>>& outcome_fields();

/// Every problem with `o`, separated by "; "; empty when valid: each field in its range, and a
/// target for the cost criterion.
std::string validate(const OutcomeSettings& o);

}  // namespace stepgate
