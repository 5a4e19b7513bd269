// Least squares J(w) = s/2·‖Xaug w − y‖² + (l2/2)·‖w‖², s = 1/n (mean) or 1 (sum).
#include <algorithm>
#include <cmath>
#include <mutex>
#include <stdexcept>

#include "stepgate/problems/linear_common.hpp"
#include "stepgate/problems/linear_models.hpp"

namespace stepgate {
namespace {

using LongVec = Eigen::Matrix<long double, Eigen::Dynamic, 1>;
using LongMat = Eigen::Matrix<long double, Eigen::Dynamic, Eigen::Dynamic>;

class LeastSquares final : public detail::LinearModel {
 public:
  LeastSquares(Dataset&& data, const LinearModelOptions& opt) : LinearModel(std::move(data), opt, 1) {
    const Index n = Xaug_.rows(), p = Xaug_.cols();
    use_gram_ = opt.gram_ratio > 0.0 && double(n) >= opt.gram_ratio * double(p);
    if (use_gram_) {
      // The Hessian (constant): s·XaugᵀXaug + l2 on the weights (not the intercept).
      H_.setZero(p, p);
      H_.selfadjointView<Eigen::Lower>().rankUpdate(Xaug_.transpose(), data_weight());
      H_.triangularView<Eigen::StrictlyUpper>() = H_.transpose();
      H_.diagonal().head(features_).array() += opt.l2;
      c_.noalias() = data_weight() * (Xaug_.transpose() * y_);
      yy_ = data_weight() * y_.squaredNorm();
    }
  }

  std::string_view kind() const override { return "least_squares"; }
  bool has_exact_gap() const override { return true; }

  void evaluate(const Mat& W, Evaluation& out, Scratch& s) const override {
    const Index K = W.cols();
    out.cost.resize(K);
    out.grad.resize(dim(), K);
    if (use_gram_) {
      // G = H W − c 1ᵀ = ∇J;  J = ½wᵀHw − cᵀw + ½s·yᵀy = ½wᵀG − ½cᵀw + ½s·yᵀy.
      out.grad.noalias() = H_ * W;
      out.grad.colwise() -= c_;
      s.v.resize(K);
      s.v.noalias() = W.transpose() * c_;
      out.cost = 0.5 * (W.cwiseProduct(out.grad).colwise().sum().transpose() - s.v);
      out.cost.array() += 0.5 * yy_;
    } else {
      s.a.resize(Xaug_.rows(), K);
      s.a.noalias() = Xaug_ * W;
      s.a.colwise() -= y_;
      out.cost = 0.5 * data_weight() * s.a.colwise().squaredNorm().transpose();
      out.grad.noalias() = data_weight() * (Xaug_.transpose() * s.a);
      add_ridge(W, &out.cost, out.grad);
    }
    // Exact for a quadratic: J(w) − J* = ½(w − w*)ᵀH(w − w*) and ∇J(w) = H(w − w*).
    const Vec& w_star = solution().w;
    s.b.resize(dim(), K);
    s.b = W.colwise() - w_star;
    out.gap = 0.5 * s.b.cwiseProduct(out.grad).colwise().sum().transpose();
  }

  void gradient_rows(const Mat& W, std::span<const Index> rows, Mat& grad, Scratch& s) const override {
    if (rows.empty()) throw std::invalid_argument("least_squares: empty mini-batch");
    detail::gather_rows(Xaug_, rows, s.c);
    s.a.resize(s.c.rows(), W.cols());
    s.a.noalias() = s.c * W;
    for (std::size_t i = 0; i < rows.size(); ++i) s.a.row(Index(i)).array() -= y_[rows[i]];
    grad.resize(dim(), W.cols());
    grad.noalias() = batch_weight(Index(rows.size())) * (s.c.transpose() * s.a);
    add_ridge(W, nullptr, grad);
  }

  void hessian_vector(const Vec& w, const Vec& v, Vec& out) const override {
    if (use_gram_) {
      out.noalias() = H_ * v;
      return;
    }
    (void)w;
    const Vec Xv = Xaug_ * v;
    out.noalias() = data_weight() * (Xaug_.transpose() * Xv);
    add_ridge(v, out);
  }
  Mat hessian(const Vec& w) const override { return use_gram_ ? H_ : Problem::hessian(w); }
  std::optional<Optimum> optimum() const override { return solution(); }

  /// λ_max(H): exact with the Gram matrix; otherwise s·λ_max(XaugᵀXaug) + l2, which is exact
  /// without intercept or without l2 and an upper bound otherwise.
  double smoothness_bound() const override {
    if (!use_gram_) return data_weight() * gram_lambda_max() + opt_.l2;
    std::call_once(lmax_once_, [this] {
      lambda_max_ = Eigen::SelfAdjointEigenSolver<Mat>(H_, Eigen::EigenvaluesOnly).eigenvalues().maxCoeff();
    });
    return lambda_max_;
  }

  /// Sample i's Hessian s·n·x̃ᵢx̃ᵢᵀ (s the data weight, mean or sum) as uᵢuᵢᵀ; ridge l2 on the weights.
  std::optional<SampleCurvature> sample_curvature() const override {
    SampleCurvature c;
    c.rows = std::sqrt(data_weight() * static_cast<double>(samples())) * Xaug_;
    c.ridge = Vec::Zero(dim());
    c.ridge.head(features_).setConstant(opt_.l2);
    return c;
  }

  /// λ_max(H) ≤ tr(H) for H ⪰ 0, always; where an eigenvalue solver gave λ_max (the Gram form,
  /// or p ≤ 4000) it is within p·ε·‖H‖ of the truth, hence the 1e-10 allowance. Beyond 4000
  /// parameters λ_max comes from power iteration, which approaches it from below: the trace.
  double quadratic_curvature_bound() const override {
    const double trace = use_gram_ ? H_.trace()
                                   : data_weight() * Xaug_.squaredNorm() + opt_.l2 * static_cast<double>(features_);
    if (!use_gram_ && Xaug_.cols() > 4000) return trace;
    return std::min(trace, smoothness_bound() * (1.0 + 1e-10));
  }

 private:
  const Optimum& solution() const {
    std::call_once(solution_once_, [this] { solution_ = solve(); });
    return solution_;
  }

  Optimum solve() const;

  bool use_gram_ = false;
  Mat H_;
  Vec c_;
  double yy_ = 0.0;
  mutable std::once_flag solution_once_, lmax_once_;
  mutable Optimum solution_;
  mutable double lambda_max_ = 0.0;
};

// Closed form. With an intercept the columns and y are centred first (the intercept is then
// b = ȳ − x̄ᵀw), which removes the collinearity of a ones column with large-mean features.
// Columns are scaled to unit norm, and the ridge enters as extra rows sqrt(l2/s)·diag(1/norm).
// Column-pivoting QR solves it, and one step of refinement with the residual in long double
// recovers digits lost to conditioning (Longley: κ ≈ 1e9 in original units).
Optimum LeastSquares::solve() const {
  const Index n = Xaug_.rows(), d = features_;
  const bool icpt = opt_.intercept;
  const Mat X = Xaug_.leftCols(d);
  Vec x_mean = Vec::Zero(d);
  double y_mean = 0.0;
  if (icpt) {
    x_mean = X.colwise().mean().transpose();
    y_mean = y_.mean();
  }
  Mat Xc = X.rowwise() - x_mean.transpose();
  Vec norms = Xc.colwise().norm().transpose();
  for (Index j = 0; j < d; ++j)
    if (norms[j] == 0.0) norms[j] = 1.0;  // a constant column: leave it, QR drops it by rank
  const double ridge_rows = opt_.l2 > 0.0 ? std::sqrt(opt_.l2 / data_weight()) : 0.0;
  const Index extra = opt_.l2 > 0.0 ? d : 0;
  Mat A(n + extra, d);
  A.topRows(n) = Xc * norms.cwiseInverse().asDiagonal();
  if (extra > 0) A.bottomRows(d) = (ridge_rows * norms.cwiseInverse()).asDiagonal();
  Vec rhs = Vec::Zero(n + extra);
  rhs.head(n) = y_.array() - y_mean;

  Vec w(d);
  if (d > 0) {
    Eigen::ColPivHouseholderQR<Mat> qr(A);
    Vec v = qr.solve(rhs);
    // Refinement: residual of the scaled system in long double, then correct v.
    const LongMat Al = A.cast<long double>();
    const LongVec rl = rhs.cast<long double>() - Al * v.cast<long double>();
    v += qr.solve(Vec(rl.cast<double>()));
    w = v.cwiseQuotient(norms);
  }
  Optimum opt;
  opt.w.resize(dim());
  opt.w.head(d) = w;
  if (icpt) {
    long double b = y_mean;
    for (Index j = 0; j < d; ++j) b -= static_cast<long double>(x_mean[j]) * w[j];
    opt.w[d] = double(b);
  }
  // J* from the residual accumulated in long double.
  long double sum = 0.0L;
  for (Index i = 0; i < n; ++i) {
    long double ri = -static_cast<long double>(y_[i]);
    for (Index j = 0; j < opt.w.size(); ++j) ri += static_cast<long double>(Xaug_(i, j)) * opt.w[j];
    sum += ri * ri;
  }
  opt.cost = double(0.5L * data_weight() * sum + 0.5L * opt_.l2 * opt.w.head(d).squaredNorm());
  opt.method = "column-pivoting QR (centred, equilibrated, refined)";
  return opt;
}

}  // namespace

std::unique_ptr<Problem> make_least_squares(Dataset data, const LinearModelOptions& opt) {
  return std::make_unique<LeastSquares>(std::move(data), opt);
}

}  // namespace stepgate
