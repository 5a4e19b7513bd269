#include "stepgate/run/step_rule.hpp"

namespace stepgate {

StepRule step_rule(const OptimizerSpec& spec) {
  if (spec.batch_size > 0 || spec.schedule.kind != ScheduleKind::constant || spec.schedule.warmup > 0)
    return StepRule::none;
  switch (spec.kind) {
    case OptimizerKind::gd: return StepRule::gd;
    case OptimizerKind::momentum: return StepRule::heavy_ball;
    case OptimizerKind::nesterov: return StepRule::nesterov;
    default: return StepRule::none;
  }
}

Theory case_theory(const Problem& problem, const OptimizerSpec& spec, const Vec& start,
                   const CurvatureOptions& opt, bool use_optimum) {
  return theory_for(problem, start, step_rule(spec), spec.beta, opt, use_optimum);
}

}  // namespace stepgate
