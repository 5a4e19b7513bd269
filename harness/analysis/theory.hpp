// Divergence thresholds that theory gives for constant-rate methods on a quadratic with
// largest Hessian eigenvalue L (local theory near a minimum for other smooth problems).
#pragma once
#include <string>

#include "stepgate/analysis/curvature.hpp"

namespace stepgate {

enum class StepRule { gd, heavy_ball, nesterov, none };

/// gd: 2/L; heavy ball: 2(1+β)/L (Polyak 1964); Nesterov in the look-ahead form:
/// (2+2β)/((1+2β)L), from the characteristic polynomial z² − (1+β)(1−h)z + β(1−h) with h = αλ,
/// whose root reaches −1 at h = (2+2β)/(1+2β). NaN for StepRule::none or L ≤ 0.
double predicted_blowup(StepRule rule, double beta, double L);

/// What theory says about a case: curvature at the start and at the optimum, and the threshold.
struct Theory {
  Curvature at_start;
  Curvature at_optimum;          ///< NaN fields when the optimum is unknown
  double L = kMissing;           ///< the L used for the prediction (at the optimum when known)
  double mu = kMissing;          ///< λ_min at the same point
  double predicted_blowup = kMissing;
  std::string rule;              ///< e.g. "2/L", "2(1+beta)/L"; "" when theory gives none
  std::string threshold;         ///< CaseTheory::threshold: "quadratic", "local", "mean_square" or ""
  std::string method;            ///< how the threshold was computed where it takes more than a formula ("" else)
};

/// Computes the Theory of a problem for a step rule. `start` is the runs' starting point.
/// `use_optimum` false (the suite skips the optimum): curvature at the start only, and no
/// threshold, since a nonlinear problem's threshold is local to its optimum.
Theory theory_for(const Problem& problem, const Vec& start, StepRule rule, double beta,
                  const CurvatureOptions& opt = {}, bool use_optimum = true);

}  // namespace stepgate
