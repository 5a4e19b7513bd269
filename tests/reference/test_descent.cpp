// The descent lemma: for an L-smooth J and 0 < α ≤ 1/L, a gradient step satisfies
// J(w − α∇J) ≤ J(w) − (α/2)‖∇J‖² (Bertsekas, "Nonlinear Programming", 2nd ed. 1999,
// Prop. A.24, the descent lemma; proposition number recalled from memory; also common
// practice: a small enough rate lowers the cost every iteration). L is each problem's global bound: λmax of the Gram matrix for least squares,
// λmax(XᵀX)/(4n) for logistic regression (σ' ≤ 1/4).
#include <catch2/catch.hpp>
#include <fmt/format.h>

#include "stepgate/data/csv.hpp"
#include "stepgate/data/scaling.hpp"
#include "longley.hpp"
#include "stepgate/problems/linear_models.hpp"
#include "stepgate/run/batch.hpp"

using namespace stepgate;

namespace {

Dataset spector() {
  CsvOptions opt;
  opt.whitespace_delimited = true;
  opt.quote = '\'';
  return load_csv_dataset("/usr/lib/python3/dist-packages/statsmodels/datasets/spector/spector.csv",
                          opt, "GRADE", {"GPA", "TUCE", "PSI"}, "spector");
}

Dataset standardized(Dataset d) {
  ScalingSpec spec;
  spec.kind = ScalingSpec::standardize;
  apply_scaling(d, spec);
  return d;
}

// Largest rise J_{k+1} − J_k over the run, relative to J_k (rounding allowance: 1e-14).
double largest_relative_rise(const RunRecord& r) {
  double worst = -kInf;
  for (std::size_t k = 1; k < r.trace.size(); ++k)
    worst = std::max(worst, (r.trace[k].cost - r.trace[k - 1].cost) / std::abs(r.trace[k - 1].cost));
  return worst;
}

void check_monotone(const char* name, const Problem& p) {
  const double L = p.smoothness_bound();
  REQUIRE(L > 0.0);
  RunSettings s;
  s.budget = 3000;
  s.outcome.tol = 1e-30;  // stop only when J − J* is at rounding level
  s.prove_slow = false;   // watch the whole trajectory, although 1e-30 is proven out of reach
  const std::vector<double> rates = {1.0 / L, 0.5 / L, 0.1 / L};
  for (const RunRecord& r : run_batch(p, OptimizerSpec{}, s, rates, {1, 0})) {
    const double rise = largest_relative_rise(r);
    fmt::print("descent {:>24} at {:.2f}/L: {} steps, largest relative rise {:.2e}\n", name,
               r.rate * L, r.steps, rise);
    INFO(name << " at rate " << r.rate);
    CHECK(r.trace.size() > 50);  // many steps watched (a run that reaches J* to the last bit stops)
    CHECK(rise <= 1e-14);
  }
}

}  // namespace

TEST_CASE("gd at rates up to 1/L never raises the cost (least squares)", "[descent]") {
  check_monotone("longley standardized", *make_least_squares(standardized(testdata::longley())));
  check_monotone("longley raw", *make_least_squares(testdata::longley()));
  LinearModelOptions ridge;
  ridge.l2 = 0.1;
  ridge.gram_ratio = 0.0;  // the residual form, not the Gram form
  check_monotone("longley std ridge, rows", *make_least_squares(standardized(testdata::longley()), ridge));
}

TEST_CASE("gd at rates up to 1/L never raises the cost (logistic)", "[descent]") {
  check_monotone("spector raw", *make_logistic(spector()));
  check_monotone("spector standardized", *make_logistic(standardized(spector())));
  LinearModelOptions ridge;
  ridge.l2 = 0.01;
  check_monotone("spector std ridge", *make_logistic(standardized(spector()), ridge));
}
