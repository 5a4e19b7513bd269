#include "stepgate/run/step_rule.hpp"

#include <fmt/format.h>

#include "stepgate/analysis/mean_square_limit.hpp"

namespace stepgate {

namespace {

bool constant_rate(const OptimizerSpec& spec) {
  return spec.schedule.kind == ScheduleKind::constant && spec.schedule.warmup == 0;
}

// Plain mini-batch gradient steps (sgd, or gd given a batch size: the same update) at a constant
// rate: the map whose second moment analysis/mean_square_limit describes.
bool plain_minibatch(const OptimizerSpec& spec) {
  return (spec.kind == OptimizerKind::sgd || spec.kind == OptimizerKind::gd) && spec.batch_size > 0 &&
         constant_rate(spec);
}

// "c_b=(n-b)/(b(n-1))" or "c_b=1/b", with the sampling and what it means for the limit.
std::string mean_square_rule(const OptimizerSpec& spec) {
  const bool replacement = spec.sampling == BatchSampling::replacement;
  return fmt::format("mean-square rho(T)<1, b={}, {}, {}", spec.batch_size,
                     replacement ? "c_b=1/b" : "c_b=(n-b)/(b(n-1))",
                     spec.sampling == BatchSampling::epochs ? "epochs taken as independent" : to_string(spec.sampling));
}

}  // namespace

StepRule step_rule(const OptimizerSpec& spec) {
  if (spec.batch_size > 0 || !constant_rate(spec)) return StepRule::none;
  switch (spec.kind) {
    case OptimizerKind::gd: return StepRule::gd;
    case OptimizerKind::momentum: return StepRule::heavy_ball;
    case OptimizerKind::nesterov: return StepRule::nesterov;
    default: return StepRule::none;
  }
}

Theory case_theory(const Problem& problem, const OptimizerSpec& spec, const Vec& start,
                   const CurvatureOptions& opt, bool use_optimum) {
  Theory t = theory_for(problem, start, step_rule(spec), spec.beta, opt, use_optimum);
  if (!use_optimum || !plain_minibatch(spec)) return t;
  const std::optional<SampleCurvature> curvature = problem.sample_curvature();
  if (!curvature) return t;
  const double work = double(curvature->rows.rows()) * double(curvature->rows.cols()) * double(curvature->rows.cols());
  if (work > kMeanSquareWorkLimit) {
    t.method = fmt::format("no mean-square limit: n·p² = {:.3g} is above {:.3g}, where its power iteration would "
                           "take minutes",
                           work, kMeanSquareWorkLimit);
    return t;
  }
  const MeanSquareLimit limit = mean_square_limit(*curvature, spec.batch_size, spec.sampling);
  if (!(limit.rate > 0.0)) {
    t.method = limit.converged ? "no mean-square limit: the Hessian is zero"
                               : fmt::format("no mean-square limit: its power iteration did not settle in {} iterations",
                                             limit.iterations);
    return t;
  }
  t.predicted_blowup = limit.rate;
  t.rule = mean_square_rule(spec);
  t.threshold = "mean_square";
  t.method = fmt::format("mean-square limit by power iteration on d-by-d symmetric matrices ({} iterations), "
                         "c_b = {:.6g}, 2/lambda_max = {:.6g}",
                         limit.iterations, limit.variance_factor, 2.0 / limit.lambda_max);
  if (spec.sampling == BatchSampling::epochs)
    t.method += "; epochs of reshuffled batches are not independent between steps, so this limit (for "
                "independent batches) is an approximation: sampling \"independent\" is the one it holds for";
  return t;
}

}  // namespace stepgate
