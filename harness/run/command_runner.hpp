// Runs of a command problem: the user's own training program, one process per run (per-run
// mode) or long-lived processes that each serve many runs (serving mode), its cost stream
// classified live with the same rules as built-in runs (docs/design.md, "External commands";
// README, "Gating your own training code"). Faults become `failed` runs with a reason that
// carries the last lines of stderr; the tool never hangs on a child and reaps every child.
#pragma once
#include <algorithm>
#include <condition_variable>
#include <cstdint>
#include <mutex>
#include <map>
#include <memory>
#include <span>
#include <string>
#include <vector>

#include "stepgate/core/command_spec.hpp"
#include "stepgate/core/optimizer_spec.hpp"
#include "stepgate/core/run_record.hpp"
#include "stepgate/core/run_settings.hpp"
#include "stepgate/run/batch.hpp"

namespace stepgate {

/// What the placeholders of one case expand to, and what its requests say.
struct CommandCase {
  CommandSpec spec;
  std::string case_id, scaling;
  /// With its label ({optimizer}, the request's "optimizer"); its kind's fields and its
  /// schedule's go to {optimizer.FIELD}, {schedule.FIELD} and the requests (core/trainer_fields.hpp).
  OptimizerSpec optimizer;
  bool wants_params = false;  ///< reference values exist: converged runs go on to their params line
};

/// How many user processes may run at once across all cases of a sweep (cases run in
/// parallel, each with its own session). Thread-safe.
class ProcessSlots {
 public:
  explicit ProcessSlots(int capacity) : free_(std::max(1, capacity)) {}
  bool try_take();
  void take();  ///< waits for a free slot
  void give();

 private:
  std::mutex mutex_;
  std::condition_variable freed_;
  int free_;
};

/// The runs of one case. In serving mode it keeps up to `parallel` serving processes for its
/// whole life (so a trainer's heavy imports are paid once per worker, not once per run);
/// they get end of input and are reaped when the session ends. Not thread-safe.
class CommandSession {
 public:
  /// `jobs`: processes at once when spec.parallel is 0. `slots` (may be null): the sweep's
  /// limit across cases; a session that holds no process waits for a slot, one that holds some
  /// goes on with those.
  CommandSession(CommandCase c, RunSettings settings, int jobs, ProcessSlots* slots = nullptr);
  ~CommandSession();
  CommandSession(const CommandSession&) = delete;
  CommandSession& operator=(const CommandSession&) = delete;

  /// Runs `rates` for one seed. Records come back in the order of `rates`; they do not depend
  /// on the number of processes at once.
  std::vector<RunRecord> run(std::span<const double> rates, BatchSeed seed);

  struct Impl;

 private:
  std::unique_ptr<Impl> impl_;
};

/// One batch with a session of its own (per-run mode, or servers started and ended for it).
std::vector<RunRecord> run_commands(const CommandCase& c, const RunSettings& settings,
                                    std::span<const double> rates, BatchSeed seed, int jobs = 1);

}  // namespace stepgate
