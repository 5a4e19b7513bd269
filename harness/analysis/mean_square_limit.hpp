// The mean-square stability limit of mini-batch SGD on least squares (docs/design.md, "Theory
// beside measurement").
//
// With a constant rate η and a batch B of b rows drawn afresh at every step, independently of
// earlier steps, the error e = w − w* of SGD on a cost with sample Hessians aᵢ = uᵢuᵢᵀ
// (Problem::sample_curvature) evolves as e ← (I − ηH_B)e − ηξ_B, with H_B = (1/b)Σ_{i∈B} aᵢ + R,
// E[H_B] = H, and ξ_B the batch gradient at w* (zero when the data are interpolated). The
// second moment M = E[eeᵀ] of the homogeneous part evolves by the linear map
//
//   T(M) = E[(I − ηH_B) M (I − ηH_B)] = M − η(HM + MH) + η²·E[H_B M H_B],
//   E[H_B M H_B] = HMH + c_b·((1/n)Σᵢ aᵢ M aᵢ − DMD),   D = H − R (the data part),
//
// where c_b = (n − b)/(b(n − 1)) for b distinct rows (a uniform b-subset) and 1/b for b rows drawn
// with replacement (the variance of a sample mean, with and without the finite-population
// correction). The ridge R is the same in every batch, so it carries no variance: only the data
// part D enters the c_b term. The mean-square stability limit is the largest η with ρ(T) < 1:
// below it E‖e‖² stays bounded (it converges to 0 on interpolated data), above it E‖e‖² grows
// geometrically. At b = n without replacement c_b = 0 and the limit is 2/λ_max(H), gd's.
// Background: Ma, Bassily & Belkin (2018), "The Power of Interpolation: Understanding the
// Effectiveness of SGD in Modern Over-parametrized Learning" (ICML): the largest rate grows
// linearly with b below a critical batch size m* and saturates at gd's above it.
//
// How it is computed. T is self-adjoint in the Frobenius inner product and maps positive
// semi-definite matrices to positive semi-definite ones, so ρ(T) is its largest eigenvalue (with a
// PSD eigenvector). Write T = I − ηA + η²B with A(M) = HM + MH and B(M) = E[H_B M H_B] ⪰ 0; then
// λ_max(T) < 1 ⇔ η·⟨M, BM⟩ < ⟨M, AM⟩ for all M ⇔ η < 1/λ_max(A^{-1/2} B A^{-1/2}). So the limit
// is one symmetric eigenvalue problem, solved by power iteration on d×d symmetric matrices in the
// eigenbasis of H (where A^{-1/2} divides entry (i,j) by √(λᵢ + λⱼ)), without a bisection on η;
// second_moment_radius() gives ρ(T) itself (power iteration on T) for checks. Directions in the
// null space of H (every aᵢ and R vanish there, T is the identity on them) are left out: the
// limit is that of the part of the error that H sees.
//
// Units: rates in the problem's units (parameters per unit of gradient); n, b counts. Cost: one
// application of T or B is O(n·d² + d³) flops (d = parameters; the d³ only with a ridge), with
// work matrices held by the map, no allocation per application; the set-up is one symmetric
// eigen-decomposition of H, O(n·d² + d³).
#pragma once
#include <optional>

#include "stepgate/core/optimizer_spec.hpp"
#include "stepgate/problems/problem.hpp"

namespace stepgate {

/// c_b of a batch of b rows out of n: (n − b)/(b(n − 1)) for `independent` (b distinct rows)
/// and for `epochs` (the same per-step law; see mean_square_limit), 1/b for `replacement`.
/// b is clamped to 1..n; n = 1 gives 0 without replacement. Throws std::invalid_argument for n < 1.
double batch_variance_factor(Index n, Index b, BatchSampling sampling);

/// The map T of a problem's sample curvature for one c_b, in the eigenbasis of H. Not thread-safe
/// (it keeps its work matrices); one per thread.
class SecondMomentMap {
 public:
  /// Throws std::invalid_argument when rows and ridge disagree in size, the ridge has a negative
  /// or non-finite entry, there are no rows, or c_b is not in [0, 1].
  SecondMomentMap(const SampleCurvature& curvature, double variance_factor);

  Index dim() const { return basis_.cols(); }
  /// Eigenvalues of H, ascending (its λ_max is the last).
  const Vec& eigenvalues() const { return lambda_; }

  /// out = T_η(M) for a symmetric d×d M in the original coordinates (out resized; may not alias M).
  void apply(double eta, const Mat& M, Mat& out);
  /// out = E[H_B M H_B] in the original coordinates.
  void batch_product(const Mat& M, Mat& out);

  /// ρ(T_η) by power iteration from the identity (restricted to the range of H), to a relative
  /// change below `tol` of the Rayleigh quotient between iterations (at most max_iterations).
  double radius(double eta, double tol = 1e-12, int max_iterations = 100000);

  struct Limit {
    double rate = kMissing;   ///< the largest η with ρ(T_η) < 1; NaN when H is zero or the
                              ///< iteration did not settle (its estimate would lie above the limit)
    int iterations = 0;       ///< power iterations used
    bool converged = false;   ///< the eigenvalue settled to the tolerance within max_iterations
  };
  /// The mean-square stability limit 1/λ_max(A^{-1/2} B A^{-1/2}), settled when the Rayleigh
  /// quotient changes by less than tol (relative) between iterations and the residual is below
  /// √tol of it. On open data sets it takes 12 to 20 iterations (tests/reference).
  Limit limit(double tol = 1e-12, int max_iterations = 1000);

 private:
  // In the eigenbasis (Q: H = QΛQᵀ): out = B(M).
  void batch_product_in_basis(const Mat& M, Mat& out);
  void to_basis(const Mat& M, Mat& out);
  void from_basis(const Mat& M, Mat& out);
  void clear_null(Mat& M) const;

  Mat basis_;          ///< Q (d×d, orthogonal)
  Vec lambda_;         ///< Λ, ascending
  Mat rows_;           ///< U Q (n×d): the samples' uᵢ in the eigenbasis
  Mat data_;           ///< D = Λ − QᵀRQ in the eigenbasis (empty without a ridge: D = Λ)
  Index null_dim_ = 0; ///< leading eigenvalues treated as 0 (≤ 1e-13·d·λ_max)
  double c_ = 0.0;
  // Work matrices of one application.
  Mat um_, scaled_, t1_, t2_, t3_, m_, b_;
  Vec q_;
};

/// The mean-square stability limit of constant-rate SGD with batch b (clamped to 1..n) on a
/// problem with this sample curvature. `epochs` sampling is not independent between the steps of
/// an epoch; it gets the limit for independent batches (the same per-step law), which is then an
/// approximation (documented in docs/design.md).
struct MeanSquareLimit {
  double rate = kMissing;             ///< η*, NaN when H is zero or the power iteration did not settle
  double variance_factor = kMissing;  ///< c_b
  double lambda_max = kMissing;       ///< λ_max(H): 2/λ_max is the limit at c_b = 0
  int iterations = 0;
  bool converged = false;
};
MeanSquareLimit mean_square_limit(const SampleCurvature& curvature, Index batch, BatchSampling sampling);

}  // namespace stepgate
