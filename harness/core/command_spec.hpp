// An external training program as a problem (docs/design.md, "External commands"): what to start and
// how long to let it run. A plain value a suite describes and run/ executes.
#pragma once
#include <map>
#include <string>
#include <vector>

#include "stepgate/core/types.hpp"

namespace stepgate {

/// confirm_factor of command problems unless the suite sets one (no probe can run beside a
/// user's program, so the stretch is longer; README, "Gating your own training code").
inline constexpr double kCommandConfirmFactor = 4.0;

struct CommandSpec {
  /// argv[0] is looked up on PATH; never given to a shell. Placeholders, whole or inside an
  /// argument: {rate} {seed} {budget} {optimizer} {optimizer.kind} {optimizer.FIELD}
  /// {schedule.kind} {schedule.FIELD} {scaling} {case} {out} (FIELD: only the fields of the
  /// optimizer's kind and schedule's kind, core/trainer_fields.hpp). {out} is a fresh folder
  /// per run, made only when argv uses it.
  std::vector<std::string> argv;
  std::string cwd;                          ///< resolved against the suite's folder; "" = it
  std::map<std::string, std::string> env;   ///< added to (or replacing in) the tool's environment
  double timeout = 600.0;                   ///< seconds per run (> 0); the process group is killed
  int parallel = 0;                         ///< processes at once; 0 = --jobs
  bool serve = false;                       ///< serving mode: one process answers many runs
  double optimum = kMissing;                ///< J* when the user knows it (enables the gap criterion)
  /// Output over this many bytes (stdout + stderr) is a fault. 64 MiB: a 1e5-iteration run
  /// writes about 4 MB of protocol lines; more is a runaway program.
  long max_output = 64L << 20;
  /// Seconds between SIGTERM and SIGKILL when a decided run is stopped. 2: enough for a Python
  /// trainer to die on SIGTERM, short enough that a sweep of hundreds of runs does not wait.
  double grace = 2.0;
};

}  // namespace stepgate
