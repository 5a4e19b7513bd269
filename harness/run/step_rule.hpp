// Which theoretical threshold applies to an optimizer (joins optimizers/ and analysis/).
#pragma once
#include "stepgate/analysis/theory.hpp"
#include "stepgate/optimizers/optimizer.hpp"

namespace stepgate {

/// gd, heavy ball and Nesterov at a constant full-batch rate have a known threshold; mini-batch,
/// adaptive methods and non-constant schedules have none (StepRule::none).
StepRule step_rule(const OptimizerSpec& spec);

/// Theory for one (problem, optimizer): curvature at `start` and at the optimum, predicted blow-up.
/// `use_optimum`: as theory_for.
Theory case_theory(const Problem& problem, const OptimizerSpec& spec, const Vec& start,
                   const CurvatureOptions& opt = {}, bool use_optimum = true);

}  // namespace stepgate
