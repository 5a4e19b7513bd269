// Options of the built-in problems: plain values a suite describes and problems/ builds.
#pragma once
#include <cstdint>

#include "stepgate/core/types.hpp"

namespace stepgate {

enum class Reduction {
  mean,  ///< loss averaged over samples (default; what the formulas in docs/design.md say)
  sum,   ///< loss summed over samples: multiplies the gradient, and so the safe rates, by n
};

struct LinearModelOptions {
  bool intercept = true;              ///< fit an intercept b (unregularised)
  double l2 = 0.0;                    ///< ridge strength, >= 0: adds (l2/2)·‖w‖²
  Reduction reduction = Reduction::mean;
  double init_scale = 0.0;            ///< 0: start at w = 0 (common practice for convex GLMs);
                                      ///< > 0: start ~ N(0, init_scale²) drawn from the run seed
  /// least squares only: use the Gram matrix XᵀX/n when n >= gram_ratio · p (0 = never).
  double gram_ratio = 4.0;
};

enum class Spectrum {
  linear,       ///< λ_i evenly spaced from μ to L
  log_uniform,  ///< μ and L, the others drawn log-uniformly in [μ, L] from the seed
  two_clusters, ///< half the eigenvalues in [μ, 2μ], half in [L/2, L] (endpoints exact)
};

struct QuadraticOptions {
  Index dim = 50;            ///< d >= 1
  double L = 1.0;            ///< largest eigenvalue, > 0
  double condition = 100.0;  ///< κ = L/μ >= 1
  Spectrum spectrum = Spectrum::log_uniform;
  std::uint64_t seed = 0;    ///< problem seed: Q (Haar-random orthogonal), the spectrum draws and w*
  double start_radius = 1.0; ///< runs start at w* + start_radius · u, u a unit vector from the run seed
};

}  // namespace stepgate
