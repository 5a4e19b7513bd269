// Which theoretical threshold applies to an optimizer (joins optimizers/ and analysis/).
#pragma once
#include "stepgate/analysis/theory.hpp"
#include "stepgate/optimizers/optimizer.hpp"

namespace stepgate {

/// gd, heavy ball and Nesterov at a constant full-batch rate have a known threshold; mini-batch,
/// adaptive methods and non-constant schedules have none (StepRule::none).
StepRule step_rule(const OptimizerSpec& spec);

/// Above this n·p² (samples × parameters²) the mean-square limit is not computed: each of its
/// power iterations costs about 2·n·p² flops (0.1 s here), and it takes 12 to 20 of them on
/// the open data sets, up to 1000 where the top eigenvalue is not well separated.
inline constexpr double kMeanSquareWorkLimit = 2.5e8;

/// Theory for one (problem, optimizer): curvature at `start` and at the optimum, predicted blow-up.
/// `use_optimum`: as theory_for. Plain mini-batch gradient steps (sgd, or gd with a batch size)
/// at a constant rate on a problem with Problem::sample_curvature (least squares) get the
/// mean-square stability limit (analysis/mean_square_limit.hpp) as predicted_blowup, with
/// threshold "mean_square"; under `epochs` sampling it is the independent-batch limit, an
/// approximation, and `method` says so.
Theory case_theory(const Problem& problem, const OptimizerSpec& spec, const Vec& start,
                   const CurvatureOptions& opt = {}, bool use_optimum = true);

}  // namespace stepgate
