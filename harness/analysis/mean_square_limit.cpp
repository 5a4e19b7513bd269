#include "stepgate/analysis/mean_square_limit.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace stepgate {

double batch_variance_factor(Index n, Index b, BatchSampling sampling) {
  if (n < 1) throw std::invalid_argument("batch_variance_factor: no samples");
  b = std::clamp<Index>(b, 1, n);
  if (sampling == BatchSampling::replacement) return 1.0 / static_cast<double>(b);
  if (n == 1) return 0.0;
  return static_cast<double>(n - b) / (static_cast<double>(b) * static_cast<double>(n - 1));
}

SecondMomentMap::SecondMomentMap(const SampleCurvature& curvature, double variance_factor)
    : c_(variance_factor) {
  const Mat& U = curvature.rows;
  const Index n = U.rows(), d = U.cols();
  if (n < 1 || d < 1) throw std::invalid_argument("mean-square limit: no samples or no parameters");
  if (curvature.ridge.size() != d)
    throw std::invalid_argument("mean-square limit: the ridge has " + std::to_string(curvature.ridge.size()) +
                                " entries for " + std::to_string(d) + " parameters");
  if (!curvature.ridge.allFinite() || (curvature.ridge.array() < 0.0).any())
    throw std::invalid_argument("mean-square limit: the ridge must be finite and >= 0");
  if (!U.allFinite()) throw std::invalid_argument("mean-square limit: a sample is not finite");
  if (!(c_ >= 0.0 && c_ <= 1.0)) throw std::invalid_argument("mean-square limit: c_b must lie in [0, 1]");

  // H = (1/n) UᵀU + diag(ridge), and its eigenbasis.
  Mat H = Mat::Zero(d, d);
  H.selfadjointView<Eigen::Lower>().rankUpdate(U.transpose(), 1.0 / static_cast<double>(n));
  H.triangularView<Eigen::StrictlyUpper>() = H.transpose();
  H.diagonal() += curvature.ridge;
  const Eigen::SelfAdjointEigenSolver<Mat> eig(H);
  if (eig.info() != Eigen::Success) throw std::runtime_error("mean-square limit: eigen-decomposition failed");
  basis_ = eig.eigenvectors();
  lambda_ = eig.eigenvalues().cwiseMax(0.0);  // H ⪰ 0: a negative value is rounding
  const double cut = 1e-13 * static_cast<double>(d) * lambda_[d - 1];
  while (null_dim_ < d && lambda_[null_dim_] <= cut) ++null_dim_;
  rows_.noalias() = U * basis_;
  if ((curvature.ridge.array() != 0.0).any()) {
    data_.noalias() = -basis_.transpose() * curvature.ridge.asDiagonal() * basis_;
    data_.diagonal() += lambda_;
  }
}

void SecondMomentMap::to_basis(const Mat& M, Mat& out) {
  t3_.noalias() = M * basis_;
  out.noalias() = basis_.transpose() * t3_;
}

void SecondMomentMap::from_basis(const Mat& M, Mat& out) {
  t3_.noalias() = M * basis_.transpose();
  out.noalias() = basis_ * t3_;
}

void SecondMomentMap::clear_null(Mat& M) const {
  if (null_dim_ == 0) return;
  M.topRows(null_dim_).setZero();
  M.leftCols(null_dim_).setZero();
}

// B(M) = HMH + c·(G(M) − DMD), G(M) = (1/n) Σᵢ uᵢ (uᵢᵀ M uᵢ) uᵢᵀ, in the eigenbasis (H = Λ).
void SecondMomentMap::batch_product_in_basis(const Mat& M, Mat& out) {
  const Index d = dim();
  out.resize(d, d);
  for (Index j = 0; j < d; ++j) out.col(j) = (lambda_[j] * M.col(j)).cwiseProduct(lambda_);  // ΛMΛ
  if (c_ == 0.0) return;
  um_.noalias() = rows_ * M;
  q_.noalias() = um_.cwiseProduct(rows_).rowwise().sum();  // qᵢ = uᵢᵀ M uᵢ
  scaled_.noalias() = q_.asDiagonal() * rows_;
  t1_.noalias() = rows_.transpose() * scaled_;  // n·G(M)
  const double c_over_n = c_ / static_cast<double>(rows_.rows());
  if (data_.size() == 0) {  // D = H: out = (1 − c)·HMH + c·G
    out *= 1.0 - c_;
    out.noalias() += c_over_n * t1_;
    return;
  }
  t2_.noalias() = data_ * M;
  out.noalias() += c_over_n * t1_;
  out.noalias() -= c_ * (t2_ * data_);
}

void SecondMomentMap::batch_product(const Mat& M, Mat& out) {
  to_basis(M, m_);
  batch_product_in_basis(m_, b_);
  from_basis(b_, out);
}

void SecondMomentMap::apply(double eta, const Mat& M, Mat& out) {
  to_basis(M, m_);
  Mat& m = m_;
  Mat& t = b_;
  batch_product_in_basis(m, t);
  // T(M) = M − η(ΛM + MΛ) + η²·B(M), column by column.
  for (Index j = 0; j < dim(); ++j)
    t.col(j) = eta * eta * t.col(j) + m.col(j) - eta * (m.col(j).cwiseProduct(lambda_) + lambda_[j] * m.col(j));
  from_basis(t, out);
}

double SecondMomentMap::radius(double eta, double tol, int max_iterations) {
  // Power iteration on T + I (in the eigenbasis, on the range of H): its eigenvalues are those of
  // T plus 1, and since T's lie in [−ρ, ρ] with ρ one of them, 1 + ρ is the one largest in
  // magnitude: no sign ambiguity from an eigenvalue near −ρ.
  const Index d = dim();
  Mat m = Mat::Identity(d, d), t(d, d);
  clear_null(m);
  if (null_dim_ == d) return 1.0;
  m /= m.norm();
  double theta = kMissing;
  for (int k = 0; k < max_iterations; ++k) {
    batch_product_in_basis(m, t);
    for (Index j = 0; j < d; ++j)
      t.col(j) = eta * eta * t.col(j) + 2.0 * m.col(j) - eta * (m.col(j).cwiseProduct(lambda_) + lambda_[j] * m.col(j));
    clear_null(t);
    const double next = m.cwiseProduct(t).sum();  // ⟨M, (T + I)M⟩, ‖M‖ = 1
    const double norm = t.norm();
    if (!(norm > 0.0) || !std::isfinite(norm)) return kMissing;
    m = t / norm;
    if (std::abs(next - theta) <= tol * std::abs(next)) return next - 1.0;
    theta = next;
  }
  return theta - 1.0;
}

SecondMomentMap::Limit SecondMomentMap::limit(double tol, int max_iterations) {
  // Power iteration on S = A^{-1/2} B A^{-1/2}, A(M)_ij = (λᵢ + λⱼ) M_ij in the eigenbasis, on the
  // range of H. S is symmetric and positive semi-definite: its largest eigenvalue is 1/η*.
  Limit out;
  const Index d = dim();
  if (null_dim_ == d) return out;
  Mat inv_sqrt_a(d, d);
  for (Index j = 0; j < d; ++j)
    for (Index i = 0; i < d; ++i) {
      const double s = lambda_[i] + lambda_[j];
      inv_sqrt_a(i, j) = i < null_dim_ || j < null_dim_ || !(s > 0.0) ? 0.0 : 1.0 / std::sqrt(s);
    }
  // Start: A^{1/2}(I), which has a positive inner product with A^{1/2} of the PSD eigenvector of
  // T at the limit (the top eigenvector of S), so the iteration cannot miss it.
  Mat m = Mat::Identity(d, d);
  m.diagonal() = (2.0 * lambda_).cwiseSqrt();
  clear_null(m);
  m /= m.norm();
  Mat x(d, d), t(d, d);
  double theta = kMissing;
  for (int k = 1; k <= max_iterations; ++k) {
    x = m.cwiseProduct(inv_sqrt_a);
    batch_product_in_basis(x, t);
    t.array() *= inv_sqrt_a.array();
    const double next = m.cwiseProduct(t).sum();  // Rayleigh quotient, ‖m‖ = 1
    const double norm = t.norm();
    out.iterations = k;
    if (!(norm > 0.0) || !std::isfinite(norm)) return out;
    // Settled: the quotient no longer moves, and the residual ‖Sm − θm‖ = √(‖Sm‖² − θ²) puts an
    // eigenvalue within √tol·θ of it (a quotient that merely crawls has a large residual).
    const double residual = std::sqrt(std::max(0.0, norm * norm - next * next));
    m = t / norm;
    if (std::abs(next - theta) <= tol * std::abs(next) && residual <= std::sqrt(tol) * next) {
      theta = next;
      out.converged = true;
      break;
    }
    theta = next;
  }
  // Unsettled, the quotient lies below λ_max(S), and 1/θ above the limit: no answer then.
  out.rate = out.converged && theta > 0.0 ? 1.0 / theta : kMissing;
  return out;
}

MeanSquareLimit mean_square_limit(const SampleCurvature& curvature, Index batch, BatchSampling sampling) {
  MeanSquareLimit out;
  const Index n = curvature.rows.rows();
  out.variance_factor = batch_variance_factor(n, batch, sampling);
  SecondMomentMap map(curvature, out.variance_factor);
  out.lambda_max = map.eigenvalues().size() > 0 ? map.eigenvalues()[map.dim() - 1] : kMissing;
  const SecondMomentMap::Limit l = map.limit();
  out.rate = l.rate;
  out.iterations = l.iterations;
  out.converged = l.converged;
  return out;
}

}  // namespace stepgate
