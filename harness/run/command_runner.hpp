// Runs of a command problem: the user's own training program, one process per run (per-run
// mode) or long-lived processes that each serve many runs (serving mode), its cost stream
// classified live with the same rules as built-in runs (docs/design.md, "External commands";
// README, "Gating your own training code"). Faults become `failed` runs with a reason that
// carries the last lines of stderr; the tool never hangs on a child and reaps every child.
#pragma once
#include <cstdint>
#include <map>
#include <memory>
#include <span>
#include <string>
#include <vector>

#include "stepgate/core/command_spec.hpp"
#include "stepgate/core/run_record.hpp"
#include "stepgate/core/run_settings.hpp"
#include "stepgate/run/batch.hpp"

namespace stepgate {

/// What the placeholders of one case expand to.
struct CommandCase {
  CommandSpec spec;
  std::string case_id, optimizer, scaling;
  std::map<std::string, std::string> optimizer_fields;  ///< {optimizer.FIELD}: the entry's fields as text
};

/// The runs of one case. In serving mode it keeps up to `parallel` serving processes for its
/// whole life (so a trainer's heavy imports are paid once per worker, not once per run);
/// they get end of input and are reaped when the session ends. Not thread-safe.
class CommandSession {
 public:
  /// `jobs`: processes at once when spec.parallel is 0.
  CommandSession(CommandCase c, RunSettings settings, int jobs);
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
