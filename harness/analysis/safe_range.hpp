// The safe range of a case across its seeds (docs/design.md, "Search"): from each seed's located
// boundaries and runs, the case's floor, edge, bracket, ragged zone, blow-up, best rate, the
// outcome and iterations at the pinned rate, and the headroom.
#pragma once
#include <map>
#include <vector>

#include "stepgate/core/results.hpp"
#include "stepgate/core/run_record.hpp"

namespace stepgate {

/// One seed as the summary sees it: its located boundaries (floor, edge, bracket, blow-up,
/// runs) and every run it made, by rate (ascending).
struct SeedRunsView {
  SeedSummary located;
  std::map<double, const RunRecord*> by_rate;
};

/// The cross-seed summary. The case's edge is the smallest seed edge and its floor the largest
/// seed floor (every seed must be safe); there is a safe range only when every seed has an edge
/// and floor <= edge. edge_spread = largest / smallest seed edge. The best rate is the rate with
/// the smallest median iterations among rates every seed ran and converged at inside [floor,
/// edge]. A seed's ragged top is its highest converged rate above its edge; the case's is the
/// largest of them. At the pinned rate (NaN: none): the worst outcome over seeds, the median
/// iterations when every seed converged, and headroom = edge / pinned.
/// `precision` is the search's relative precision, recorded with the summary.
CaseSummary summarise_seeds(const std::vector<SeedRunsView>& seeds, double precision, double pinned);

/// Larger is worse: converged < slow < oscillating < diverged < failed. The outcome a rate
/// gets across seeds is the worst one.
int badness(Outcome o);

/// The median (mean of the middle two for an even count); NaN for none.
double median(std::vector<double> v);

}  // namespace stepgate
