// Batched lanes against runs done one by one: the same K runs (one case, one seed, K rates)
// as one batch (one matrix-matrix product per step) and as K single runs. Prints wall times
// and the speed-up; not a test (timings vary with the machine).
#include <chrono>
#include <cstdio>
#include <random>
#include <vector>

#include "stepgate/problems/linear_models.hpp"
#include "stepgate/problems/quadratic.hpp"
#include "stepgate/run/batch.hpp"

using namespace stepgate;

namespace {

double seconds(const std::function<void()>& f) {
  const auto t0 = std::chrono::steady_clock::now();
  f();
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

void compare(const char* name, const Problem& p, const OptimizerSpec& spec, std::vector<double> rates, long budget) {
  RunSettings s;
  s.budget = budget;
  s.outcome.tol = 1e-30;  // every lane runs the whole budget: the comparison is per iteration
  s.prove_slow = false;   // (gd on least squares would be proven slow at once)
  s.keep_final_params = false;
  const double batch = seconds([&] { run_batch(p, spec, s, rates, {1, 0}); });
  const double alone = seconds([&] {
    for (double r : rates) run_single(p, spec, s, r, {1, 0});
  });
  const double lane_steps = static_cast<double>(rates.size()) * static_cast<double>(budget);
  std::printf("%-40s K=%zu: batch %.3f s, one by one %.3f s, speed-up %.2fx; %.1f us per lane-iteration batched\n",
              name, rates.size(), batch, alone, alone / batch, 1e6 * batch / lane_steps);
}

}  // namespace

int main() {
  std::mt19937_64 rng(1);
  std::normal_distribution<double> normal;  // values only; the timing does not depend on them
  Dataset d;
  d.X.resize(20000, 50);
  d.y.resize(20000);
  for (Index i = 0; i < d.X.rows(); ++i) {
    for (Index j = 0; j < d.X.cols(); ++j) d.X(i, j) = normal(rng);
    d.y[i] = d.X(i, 0) - 0.5 * d.X(i, 1) + 0.1 * normal(rng) > 0 ? 1.0 : 0.0;
  }
  for (int j = 0; j < 50; ++j) d.features.push_back("x" + std::to_string(j));
  d.map = FeatureMap::identity(50);
  const std::vector<double> rates8 = {0.01, 0.02, 0.05, 0.1, 0.2, 0.5, 1.0, 1.5};
  OptimizerSpec gd;
  compare("logistic n=20000 d=50 (X*W per step)", *make_logistic(d), gd, rates8, 300);
  LinearModelOptions rows;
  rows.gram_ratio = 0.0;
  compare("least squares n=20000 d=50, residual form", *make_least_squares(d, rows), gd, rates8, 300);
  compare("least squares n=20000 d=50, Gram form", *make_least_squares(d), gd, rates8, 3000);
  QuadraticOptions q;
  q.dim = 500;
  q.condition = 100;
  compare("quadratic d=500", *make_quadratic(q), gd, rates8, 2000);
  OptimizerSpec adam;
  adam.kind = OptimizerKind::adam;
  compare("quadratic d=500, adam", *make_quadratic(q), adam, rates8, 2000);
  return 0;
}
