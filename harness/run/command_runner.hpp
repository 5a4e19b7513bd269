// Runs of a command problem: the user's own training program, one process per run (per-run
// mode) or one process serving many runs (serving mode), its cost stream classified live with
// the same rules as built-in runs (DESIGN.md, "External commands"; README, "Gating your own
// training code"). Faults become `failed` runs with a reason; the tool never hangs on a child.
#pragma once
#include <cstdint>
#include <map>
#include <span>
#include <string>
#include <vector>

#include "core/command_spec.hpp"
#include "core/run_record.hpp"
#include "core/run_settings.hpp"
#include "run/batch.hpp"

namespace stepgate {

/// What the placeholders of one case expand to.
struct CommandCase {
  CommandSpec spec;
  std::string case_id, optimizer, scaling;
  std::map<std::string, std::string> optimizer_fields;  ///< {optimizer.FIELD}: the entry's fields as text
};

/// Runs `rates` for one seed, up to spec.parallel (0: `jobs`) processes at once. Records come
/// back in the order of `rates`; they do not depend on the parallelism.
std::vector<RunRecord> run_commands(const CommandCase& c, const RunSettings& settings,
                                    std::span<const double> rates, BatchSeed seed, int jobs = 1);

}  // namespace stepgate
