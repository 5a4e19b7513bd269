// How long runs go and how they are judged: a plain value a suite describes and run/ executes.
#pragma once
#include <string>
#include <vector>

#include "stepgate/core/outcome_settings.hpp"
#include "stepgate/core/setting_field.hpp"

namespace stepgate {

/// Largest budget a suite may set: 10^9 iterations is days of work for one run of the
/// smallest problem; more is a typing error, not a plan (the suite reader says "too large").
inline constexpr long kMaxBudget = 1'000'000'000;

struct RunSettings {
  long budget = 10000;  ///< iterations per run (1..kMaxBudget). 1e4: enough for gd at its best rate on a
                        ///< problem with condition number up to ~1e3 to reach a 1e-6 gap
  long eval_every = 0;  ///< iterations between evaluations, 0..budget; 0 = every iteration for full
                        ///< batch, once per epoch for mini-batch
  OutcomeSettings outcome;
  // Set by the tool, not by a suite's settings:
  bool keep_final_params = true;  ///< store each run's final parameters in its record
  /// Do not compute the optimum J* (a Newton solve that can outweigh the runs on large data):
  /// runs then have no gap, and the automatic criterion falls back to the plateau. For
  /// criteria that need no J* (cost, grad, plateau). Default false: J* when the problem has one;
  /// a suite sets it with a problem's "optimum": "skip".
  bool skip_optimum = false;
  /// Stop a run as soon as `slow` is proven (gd at a constant rate on a convex quadratic:
  /// docs/design.md, "A proven early slow verdict"); the outcome is the same as at the end of
  /// the budget, the trace shorter. false runs every slow run to its budget (for comparisons
  /// with loops that do). Default true.
  bool prove_slow = true;
};

/// The settings a suite writes beside a problem: budget and eval_every.
const std::vector<SettingField<RunSettings>>& run_fields();

/// Every problem with `s` (its fields, eval_every <= budget, and the outcome settings),
/// separated by "; "; empty when valid.
std::string validate(const RunSettings& s);

}  // namespace stepgate
