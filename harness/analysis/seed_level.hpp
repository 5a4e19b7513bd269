// Noisy runs beside their seed's best level (docs/design.md, "Noisy runs", "Beside the best
// level"). The settled criterion judges a run alone, so a network that falls fast and then sits
// at chance level, or at any level far worse than other rates reach, meets it. Without J* the
// only yardstick for "worse" is the other runs of the same seed: a run the criterion reads must
// also end within `level_ratio` times the lowest level any of them ended at.
#pragma once
#include <span>

#include "stepgate/core/outcome_settings.hpp"
#include "stepgate/core/run_record.hpp"

namespace stepgate {

/// Whether the rule reads this run: read as noisy (noise not NaN), no J* (no gap at its start)
/// and judged by the settled criterion (named, or automatic).
bool judged_by_level(const RunRecord& r, const OutcomeSettings& s);

/// The level a run ended at, as classify_whole_trace reads it (analysis/noise, end_level): the
/// median of the last 2h+1 costs when its noise level is above 0, else its last cost.
double run_end_level(const RunRecord& r);

/// The lowest end level among `runs` that the rule reads and that neither failed nor diverged,
/// and the rate of the run that reached it; level NaN when there is none.
struct BestLevel {
  double level = kMissing;
  double rate = kMissing;
};
BestLevel best_level(std::span<const RunRecord* const> runs, const OutcomeSettings& s);

/// A converged run the rule reads that ends above level_ratio × best.level (best.level > 0:
/// a loss that is a mean of non-negative terms) becomes `slow`: the criterion did not hold at
/// the level other rates reach. Its reason says so, before the old reason. Returns whether the
/// run changed. A best level ≤ 0 or NaN changes nothing: a ratio needs a natural zero.
bool hold_to_best_level(RunRecord& r, const BestLevel& best, const OutcomeSettings& s);

}  // namespace stepgate
