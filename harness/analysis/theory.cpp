#include "stepgate/analysis/theory.hpp"

#include <cmath>

namespace stepgate {

double predicted_blowup(StepRule rule, double beta, double L) {
  if (!(L > 0.0)) return kMissing;
  switch (rule) {
    case StepRule::gd: return 2.0 / L;
    case StepRule::heavy_ball: return 2.0 * (1.0 + beta) / L;
    case StepRule::nesterov: return (2.0 + 2.0 * beta) / ((1.0 + 2.0 * beta) * L);
    case StepRule::none: break;
  }
  return kMissing;
}

static const char* rule_text(StepRule rule) {
  switch (rule) {
    case StepRule::gd: return "2/L";
    case StepRule::heavy_ball: return "2(1+beta)/L";
    case StepRule::nesterov: return "(2+2beta)/((1+2beta)L)";
    case StepRule::none: break;
  }
  return "";
}

Theory theory_for(const Problem& problem, const Vec& start, StepRule rule, double beta,
                  const CurvatureOptions& opt, bool use_optimum) {
  Theory t;
  t.at_start = curvature_at(problem, start, opt);
  if (!use_optimum) {
    t.L = t.at_start.lambda_max;
    t.mu = t.at_start.lambda_min;
    return t;
  }
  if (auto optimum = problem.optimum()) {
    t.at_optimum = curvature_at(problem, optimum->w, opt);
    t.L = t.at_optimum.lambda_max;
    t.mu = t.at_optimum.lambda_min;
  } else {
    t.L = t.at_start.lambda_max;
    t.mu = t.at_start.lambda_min;
  }
  t.predicted_blowup = predicted_blowup(rule, beta, t.L);
  if (!std::isnan(t.predicted_blowup)) {
    t.rule = rule_text(rule);
    // A convex quadratic's Hessian is the same everywhere: the limit then predicts the blow-up too.
    t.threshold = std::isnan(problem.quadratic_curvature_bound()) ? "local" : "quadratic";
  }
  return t;
}

}  // namespace stepgate
