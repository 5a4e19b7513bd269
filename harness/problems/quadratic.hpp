// Synthetic quadratics with a known optimum: J(w) = ½ (w − w*)ᵀ A (w − w*), A = Q Λ Qᵀ.
// L = λ_max(A), μ = λ_min(A) = L / condition, w* and J* = 0 are known exactly.
#pragma once
#include <cstdint>
#include <memory>

#include "problems/problem.hpp"

namespace stepgate {

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

std::unique_ptr<Problem> make_quadratic(const QuadraticOptions& opt);

}  // namespace stepgate
