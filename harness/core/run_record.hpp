// What one run produced: its trace, its outcome and its final point. Written by run/, read by
// search/, sweep/, gate/ and report/ (through the Results model).
#pragma once
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "stepgate/core/outcome.hpp"
#include "stepgate/core/types.hpp"

namespace stepgate {

/// One evaluation of a run: after `iter` steps (0 = the start).
struct TracePoint {
  long iter = 0;
  double cost = kMissing;       ///< J at the recorded point
  double gap = kMissing;        ///< J − J*, NaN when J* is unknown
  double grad_norm = kMissing;  ///< ‖∇J‖ on the full data
};

/// How a run's convergence was confirmed (docs/design.md, "Confirmed convergence"): the
/// stretch after the criterion was first met, and the probe beside it.
struct Confirmation {
  std::string method;              ///< "stretch+probe" or "stretch" (no probe was possible)
  long until = 0;                  ///< last iteration of the stretch (criterion met throughout)
  double probe_growth = kMissing;  ///< ‖kick at the end‖ / ‖kick at the start‖; NaN without probe
};

struct RunRecord {
  double rate = 0.0;              ///< the searched (base) rate
  std::uint64_t seed = 0;         ///< the derived seed of this run (start point, mini-batches)
  long seed_index = 0;            ///< which of the case's seeds (0-based)
  Outcome outcome = Outcome::failed;
  std::string reason;             ///< why: e.g. "gap ≤ 1e-06·gap₀ from iteration 812", "non-finite cost"
  std::optional<long> iterations; ///< converged: first iteration of the stretch that met the criterion
  std::optional<Confirmation> confirmation;  ///< converged only: how it was confirmed
  long steps = 0;                 ///< iterations actually run (early exit makes it < budget)
  double overshoot = kMissing;    ///< Σ max(0, J_{k+1} − J_k) / (J_0 − min J) over the trace
  /// The noise level of the progress values (gap, or cost without J*) when the run was read as
  /// noisy (docs/design.md, "Noisy runs"), in the cost's units; NaN when it was not.
  double noise = kMissing;
  std::vector<TracePoint> trace;  ///< every evaluation, in order
  Vec final_params;               ///< parameters at the last evaluation
  double wall_seconds = 0.0;      ///< not part of any comparison: timing only
  long log_lines = 0;             ///< command runs: output lines that were not protocol lines
  /// Command runs that failed (empty otherwise): the last lines of the program's stderr (at
  /// most 20 lines, 4096 bytes), the argv it was started with (placeholders expanded) and, in
  /// serving mode, the request line it was answering. `reason` says what went wrong.
  std::string stderr_tail;
  std::vector<std::string> command;
  std::string request;

  const TracePoint* last() const { return trace.empty() ? nullptr : &trace.back(); }
};

}  // namespace stepgate
