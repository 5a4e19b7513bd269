// Extreme eigenvalues of a problem's Hessian at a point: exact for small dimension, Lanczos
// with Hessian-vector products otherwise.
#pragma once
#include <string>

#include "stepgate/problems/problem.hpp"

namespace stepgate {

struct CurvatureOptions {
  Index exact_limit = 400;   ///< dimension up to which the dense Hessian is decomposed exactly
  Index lanczos_steps = 80;  ///< Krylov dimension above it (full reorthogonalisation)
  std::uint64_t seed = 1;    ///< start vector of Lanczos
};

struct Curvature {
  double lambda_max = kMissing;  ///< largest eigenvalue of ∇²J
  double lambda_min = kMissing;  ///< smallest eigenvalue (Lanczos: an upper estimate of it)
  std::string method;            ///< "eigen-decomposition" or "lanczos(m)"
};

Curvature curvature_at(const Problem& problem, const Vec& w, const CurvatureOptions& opt = {});

/// A unit eigenvector of ∇²J(w) for its largest eigenvalue (exact up to exact_limit, else the
/// Ritz vector of Lanczos); the sign is fixed so that its largest-magnitude entry is positive.
Vec top_eigenvector(const Problem& problem, const Vec& w, const CurvatureOptions& opt = {});

}  // namespace stepgate
