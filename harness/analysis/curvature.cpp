#include "stepgate/analysis/curvature.hpp"

#include <algorithm>
#include <random>

#include <fmt/format.h>

namespace stepgate {

namespace {

Curvature exact(const Problem& problem, const Vec& w) {
  Eigen::SelfAdjointEigenSolver<Mat> eig(problem.hessian(w), Eigen::EigenvaluesOnly);
  return {eig.eigenvalues().maxCoeff(), eig.eigenvalues().minCoeff(), "eigen-decomposition"};
}

// Lanczos (Golub & Van Loan, Matrix Computations, 4th ed., sect. 10.1) with full
// reorthogonalisation; the extreme Ritz values converge first. Returns the basis Q (p x m) and
// the tridiagonal T (m x m).
struct Krylov {
  Mat Q, T;
};
Krylov lanczos_basis(const Problem& problem, const Vec& w, const CurvatureOptions& opt) {
  const Index p = problem.dim();
  const Index m = std::min(opt.lanczos_steps, p);
  Mat Q(p, m);
  std::mt19937_64 rng(opt.seed);
  Vec q(p);
  for (Index i = 0; i < p; ++i) q[i] = static_cast<double>(rng() >> 11) * 0x1.0p-53 - 0.5;
  q.normalize();
  Vec alpha(m), beta(m), z(p);
  Index steps = 0;
  const auto H = problem.hessian_at(w);  // what the products at w share, prepared once
  for (Index j = 0; j < m; ++j) {
    Q.col(j) = q;
    H(q, z);
    alpha[j] = q.dot(z);
    // Full reorthogonalisation against all previous vectors (twice is enough: Kahan's rule).
    for (int pass = 0; pass < 2; ++pass) z.noalias() -= Q.leftCols(j + 1) * (Q.leftCols(j + 1).transpose() * z);
    beta[j] = z.norm();
    steps = j + 1;
    if (beta[j] <= 1e-14 * std::abs(alpha[j]) || j + 1 == m) break;
    q = z / beta[j];
  }
  Mat T = Mat::Zero(steps, steps);
  for (Index j = 0; j < steps; ++j) {
    T(j, j) = alpha[j];
    if (j + 1 < steps) T(j, j + 1) = T(j + 1, j) = beta[j];
  }
  return {Q.leftCols(steps), std::move(T)};
}

Curvature lanczos(const Problem& problem, const Vec& w, const CurvatureOptions& opt) {
  const Krylov k = lanczos_basis(problem, w, opt);
  Eigen::SelfAdjointEigenSolver<Mat> eig(k.T, Eigen::EigenvaluesOnly);
  return {eig.eigenvalues().maxCoeff(), eig.eigenvalues().minCoeff(), fmt::format("lanczos({})", k.T.rows())};
}

}  // namespace

Curvature curvature_at(const Problem& problem, const Vec& w, const CurvatureOptions& opt) {
  return problem.dim() <= opt.exact_limit ? exact(problem, w) : lanczos(problem, w, opt);
}

}  // namespace stepgate

namespace stepgate {

Vec top_eigenvector(const Problem& problem, const Vec& w, const CurvatureOptions& opt) {
  Vec v;
  if (problem.dim() <= opt.exact_limit) {
    Eigen::SelfAdjointEigenSolver<Mat> eig(problem.hessian(w));
    v = eig.eigenvectors().col(eig.eigenvalues().size() - 1);  // eigenvalues ascend
  } else {
    const Krylov k = lanczos_basis(problem, w, opt);
    Eigen::SelfAdjointEigenSolver<Mat> eig(k.T);
    v = k.Q * eig.eigenvectors().col(eig.eigenvalues().size() - 1);
  }
  v.normalize();
  Index top = 0;
  v.cwiseAbs().maxCoeff(&top);
  if (v[top] < 0) v = -v;
  return v;
}

}  // namespace stepgate
