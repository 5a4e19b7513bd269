#include "stepgate/sweep/plan.hpp"

#include <cmath>
#include <stdexcept>

namespace stepgate {

namespace {

// Rounds of k-ary section that bring a bracket of ratio `ratio` to 1 + precision.
int section_rounds(double ratio, double precision, int lanes) {
  if (ratio <= 1.0 + precision) return 0;
  return static_cast<int>(std::ceil(std::log(std::log(ratio) / std::log1p(precision)) / std::log(lanes + 1.0)));
}

int runs_per_seed(const ProblemSpec& p, bool pinned) {
  const RatePolicy& r = p.rates;
  int n = static_cast<int>(r.fixed.size()) + (pinned ? 1 : 0);
  if (r.grid) {
    const double decades = std::log10(r.grid->to / r.grid->from);
    n += static_cast<int>(std::floor(decades * r.grid->per_decade + 1e-9)) + 1;
    const int per_boundary = section_rounds(std::pow(10.0, 1.0 / r.grid->per_decade), r.precision, r.lanes) * r.lanes;
    // The blow-up bracket can be wider than one grid step when non-diverged rates lie above
    // the edge; count two steps for it.
    const int blowup = section_rounds(std::pow(10.0, 2.0 / r.grid->per_decade), r.precision, r.lanes) * r.lanes;
    n += (r.locate_edge ? per_boundary : 0) + (r.locate_floor ? per_boundary : 0) +
         (r.locate_blowup ? blowup : 0) + r.refine_points;
  }
  return n;
}

}  // namespace

int Plan::max_runs() const {
  int n = 0;
  for (const PlannedCase& c : cases) n += c.max_runs;
  return n;
}

double Plan::max_iterations() const {
  double n = 0;
  for (const PlannedCase& c : cases) n += c.max_iterations;
  return n;
}

Plan make_plan(const Suite& suite) {
  Plan plan;
  for (std::size_t i = 0; i < suite.problems.size(); ++i) {
    const ProblemSpec& p = suite.problems[i];
    for (const std::string& scaling : p.scalings)
      for (const std::string& optimizer : p.optimizers) {
        PlannedCase c;
        c.id = p.name + "/" + scaling + "/" + optimizer;
        c.problem = i;
        c.scaling = scaling;
        c.optimizer = optimizer;
        if (auto it = p.pinned.find(optimizer); it != p.pinned.end()) c.pinned = it->second;
        c.max_runs = runs_per_seed(p, !std::isnan(c.pinned)) * static_cast<int>(p.seeds.size());
        c.max_iterations = static_cast<double>(c.max_runs) * static_cast<double>(p.run.budget);
        plan.cases.push_back(std::move(c));
      }
  }
  return plan;
}

Plan shard_of(const Plan& plan, int k, int n) {
  if (n < 1 || k < 1 || k > n) throw std::invalid_argument("a shard is K/N with 1 <= K <= N");
  Plan out;
  for (std::size_t i = 0; i < plan.cases.size(); ++i)
    if (static_cast<int>(i % static_cast<std::size_t>(n)) + 1 == k) out.cases.push_back(plan.cases[i]);
  return out;
}

}  // namespace stepgate
