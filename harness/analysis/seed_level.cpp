#include "stepgate/analysis/seed_level.hpp"

#include <cmath>
#include <vector>

#include <fmt/format.h>

#include "stepgate/analysis/noise.hpp"

namespace stepgate {

bool judged_by_level(const RunRecord& r, const OutcomeSettings& s) {
  const bool settled = s.criterion == Criterion::settled || s.criterion == Criterion::automatic;
  return settled && !std::isnan(r.noise) && !r.trace.empty() && std::isnan(r.trace.front().gap);
}

double run_end_level(const RunRecord& r) {
  std::vector<double> cost;
  cost.reserve(r.trace.size());
  for (const TracePoint& p : r.trace) cost.push_back(p.cost);
  return end_level(cost, r.noise > 0.0);
}

BestLevel best_level(std::span<const RunRecord* const> runs, const OutcomeSettings& s) {
  BestLevel best;
  for (const RunRecord* r : runs) {
    if (!r || !judged_by_level(*r, s) || r->outcome == Outcome::failed || r->outcome == Outcome::diverged) continue;
    const double level = run_end_level(*r);
    // Ties go to the lower rate: the same bits for any order of the runs.
    if (std::isfinite(level) && (std::isnan(best.level) || level < best.level ||
                                 (level == best.level && r->rate < best.rate)))
      best = {level, r->rate};
  }
  return best;
}

bool hold_to_best_level(RunRecord& r, const BestLevel& best, const OutcomeSettings& s) {
  if (r.outcome != Outcome::converged || !judged_by_level(r, s) || !(best.level > 0.0)) return false;
  const double level = run_end_level(r);
  if (!(level > s.level_ratio * best.level)) return false;
  r.outcome = Outcome::slow;
  r.iterations.reset();
  r.confirmation.reset();
  r.reason = fmt::format("ends at {:.4g}, above level_ratio {:g} x the best level {:.4g} that this seed's runs "
                         "reached (rate {:.4g}); judged alone: {}",
                         level, s.level_ratio, best.level, best.rate, r.reason);
  return true;
}

}  // namespace stepgate
