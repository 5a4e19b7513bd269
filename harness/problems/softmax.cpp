// Softmax regression: J(W) = s·Σ_i [logsumexp(z_i) − z_{i,y_i}] + (l2/2)‖W‖², z_i = W_augᵀ x_i,
// s = 1/n (mean) or 1 (sum). Parameters: (d+1) x C, column c = weights of class c, then its
// intercept; the full (over-complete) parameterisation.
#include <algorithm>
#include <cmath>
#include <memory>
#include <mutex>
#include <stdexcept>

#include <fmt/format.h>
#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>

#include "stepgate/core/error.hpp"
#include "stepgate/problems/linear_common.hpp"
#include "stepgate/problems/linear_models.hpp"
#include "stepgate/problems/newton.hpp"

namespace stepgate {
namespace {

Index class_count(const Dataset& data, Index classes) {
  Index top = -1;
  for (Index i = 0; i < data.y.size(); ++i) {
    const double c = data.y[i];
    if (!(c >= 0.0) || c != std::floor(c) || (classes > 0 && c >= double(classes)))
      throw InputError(data.row_location(i),
                       fmt::format("found the label {}{} of data set '{}'; expected a class id "
                                   "(a whole number >= 0{}), as a softmax problem needs", c, detail::target_column(data),
                                   data.name, classes > 0 ? fmt::format(" and < {}", classes) : ""));
    top = std::max(top, Index(c));
  }
  return classes > 0 ? classes : top + 1;
}

class Softmax final : public detail::LinearModel {
 public:
  Softmax(Dataset&& data, const LinearModelOptions& opt, Index classes)
      : LinearModel(std::move(data), opt, class_count(data, classes)), label_(y_.size()) {
    for (Index i = 0; i < y_.size(); ++i) label_[i] = Index(y_[i]);
  }

  std::string_view kind() const override { return "softmax"; }

  void evaluate(const Mat& W, Evaluation& out, Scratch& s) const override {
    const Index K = W.cols(), C = outputs_, q = rows_per_output_, n = Xaug_.rows();
    out.cost.resize(K);
    out.grad.resize(dim(), K);
    // All lanes at once: W viewed as q x (C·K), so one product gives every logit. Chunks of
    // rows in parallel (sum_over_row_blocks); within a chunk, blocks of kBlock rows: the
    // block's logits, its loss and residuals, then its share of the gradient while the block
    // of X is still in cache.
    Eigen::Map<const Mat> Wv(W.data(), q, C * K);
    detail::sum_over_row_blocks(n, kBlock, data_weight(), out.cost, Eigen::Map<Mat>(out.grad.data(), q, C * K), s.chunks,
                                [&](Scratch::Rows& c, Index i0, Index m) {
      c.z.resize(kBlock, C * K);  // the same shape after the first call: no reallocation
      const auto X = Xaug_.middleRows(i0, m);
      c.z.topRows(m).noalias() = X * Wv;
      for (Index k = 0; k < K; ++k) c.cost[k] += residuals(c.z, 0, m, k, i0, nullptr, c.t);
      c.grad.noalias() += X.transpose() * c.z.topRows(m);
    });
    add_ridge(W, &out.cost, out.grad);
  }

  void gradient_rows(const Mat& W, std::span<const Index> rows, Mat& grad, Scratch& s) const override {
    if (rows.empty()) throw std::invalid_argument("softmax: empty mini-batch");
    const Index K = W.cols(), C = outputs_, n = Index(rows.size());
    detail::gather_rows(Xaug_, rows, s.c);
    Eigen::Map<const Mat> Wv(W.data(), rows_per_output_, C * K);
    s.a.resize(n, C * K);
    s.a.noalias() = s.c * Wv;
    for (Index k = 0; k < K; ++k)
      for (Index i0 = 0; i0 < n; i0 += kBlock) residuals(s.a, i0, std::min(kBlock, n - i0), k, i0, &rows, s.b);
    grad.resize(dim(), K);
    Eigen::Map<Mat> Gv(grad.data(), rows_per_output_, C * K);
    Gv.noalias() = batch_weight(n) * (s.c.transpose() * s.a);
    add_ridge(W, nullptr, grad);
  }

  void hessian_vector(const Vec& w, const Vec& v, Vec& out) const override {
    ProductScratch scratch;
    product(probabilities_at(w), v, out, scratch);
  }

  /// The probabilities at w once, for all the products there (Lanczos in the theory).
  std::function<void(const Vec& v, Vec& out)> hessian_at(const Vec& w) const override {
    auto P = std::make_shared<const Mat>(probabilities_at(w));
    auto scratch = std::make_shared<ProductScratch>();
    return [this, P, scratch](const Vec& v, Vec& out) { product(*P, v, out, *scratch); };
  }

  Mat hessian(const Vec& w) const override {
    const Index C = outputs_, q = rows_per_output_;
    const Mat P = probabilities_at(w);
    Mat H(dim(), dim()), block;
    Vec weight(Xaug_.rows());
    for (Index a = 0; a < C; ++a)
      for (Index b = 0; b <= a; ++b) {
        // Block (a, b): s·Xᵀ·diag(δ_ab·p_a − p_a·p_b)·X, in blocks of rows (weighted_gram).
        weight = -P.col(a).cwiseProduct(P.col(b));
        if (a == b) weight += P.col(a);
        detail::weighted_gram(Xaug_, [&](Index i0, const Eigen::Ref<const Mat>&, Eigen::Ref<Vec> c) {
          c = weight.segment(i0, c.size());
        }, data_weight(), block);
        H.block(a * q, b * q, q, q) = block;
        if (a != b) H.block(b * q, a * q, q, q) = block.transpose();
      }
    Vec ridge = Vec::Zero(dim());
    add_ridge(Vec::Ones(dim()), ridge);
    H.diagonal() += ridge;
    return H;
  }

  /// Newton's method from W = 0. The Hessian is singular: adding one number to every class's
  /// intercept (and, without l2, one vector to every class's weights) changes nothing.
  /// Minimum-norm Newton steps keep the iterates in its range, giving the minimum-norm
  /// minimiser (intercepts summing to 0; without l2 also weights summing to 0 over classes). Without l2 a minimiser may not exist at all (a class
  /// separable from the rest): then nullopt, noticed when the Newton steps stop shrinking.
  std::optional<Optimum> optimum() const override { return solved_once([this] { return solve(); }); }

  /// λ_max(diag(p) − ppᵀ) ≤ 1/2, so ∇²J ⪯ s·λ_max(XaugᵀXaug)/2 + l2.
  double smoothness_bound() const override { return data_weight() * gram_lambda_max() / 2.0 + opt_.l2; }

 private:
  /// Rows per block: a block's C columns of logits stay in L1/L2 through the passes below.
  static constexpr Index kBlock = 1024;

  /// Turns the logits of lane k in rows [z0, z0 + m) of Z (columns k·C..k·C+C−1) into
  /// residuals softmax(z) − e_y and returns their summed loss Σ logsumexp(z) − z_y. Row z0 + i
  /// holds sample first + i, or (*rows)[first + i] when `rows` is given. Each pass is a
  /// vectorised array expression down one column (Eigen's packet exp and log). One
  /// exponentiation per logit: p_c = exp(z_c − top) / total, and logsumexp = top + log(total).
  /// p_y − 1 is written as −Σ_{c≠y} p_c (of the rounded p_c), which keeps its digits when
  /// p_y ≈ 1. `tmp` is working memory (kBlock x 2 after the call); m <= kBlock.
  double residuals(Mat& Z, Index z0, Index m, Index k, Index first, const std::span<const Index>* rows, Mat& tmp) const {
    const Index C = outputs_;
    tmp.resize(kBlock, 2);  // m <= kBlock; the same shape after the first call
    double loss = 0.0;
    auto block = Z.block(z0, k * C, m, C);
    auto top = tmp.col(0).head(m).array();
    auto total = tmp.col(1).head(m).array();
    auto label = [&](Index i) { return label_[std::size_t(rows ? (*rows)[std::size_t(first + i)] : first + i)]; };
    top = block.col(0).array();
    for (Index c = 1; c < C; ++c) top = top.max(block.col(c).array());
    for (Index i = 0; i < m; ++i) loss += top[i] - block(i, label(i));
    total.setZero();
    for (Index c = 0; c < C; ++c) {
      block.col(c).array() = (block.col(c).array() - top).exp();
      total += block.col(c).array();
    }
    loss += total.log().sum();
    total = total.inverse();
    for (Index c = 0; c < C; ++c) block.col(c).array() *= total;
    for (Index i = 0; i < m; ++i) {
      const Index y = label(i);
      double sum = 0.0;
      for (Index c = 0; c < C; ++c) sum += c == y ? 0.0 : block(i, c);
      block(i, y) = -sum;
    }
    return loss;
  }

  /// softmax(Xaug·W) at w: n x C.
  /// By blocks of rows, in parallel (each block its own rows: the same bits for any number of
  /// threads). One product of all n rows would have Eigen pack n x 400 of X at once (192 MB on
  /// Fashion-MNIST, half the data set again).
  Mat probabilities_at(const Vec& w) const {
    const Eigen::Map<const Mat> W(w.data(), rows_per_output_, outputs_);
    const Index n = Xaug_.rows();
    Mat P(n, outputs_);
    tbb::this_task_arena::isolate([&] {
      tbb::parallel_for(Index{0}, (n + kBlock - 1) / kBlock, [&](Index b) {
        const Index i0 = b * kBlock, m = std::min(kBlock, n - i0);
        auto block = P.middleRows(i0, m);
        block.noalias() = Xaug_.middleRows(i0, m) * W;
        probabilities(block);
      });
    });
    return P;
  }

  /// Working memory of product(), reused over the products at one point.
  struct ProductScratch {
    std::vector<Scratch::Rows> chunks;
    Vec unused;  ///< product() sums no cost
  };

  /// out = ∇²J·v with the probabilities P at the point, by blocks of rows in parallel chunks
  /// (sum_over_row_blocks: the same bits for any number of threads). Per row:
  /// (diag(p) − p pᵀ) u = p ⊙ (u − pᵀu), u = Vᵀx.
  void product(const Mat& P, const Vec& v, Vec& out, ProductScratch& s) const {
    const Index C = outputs_, q = rows_per_output_;
    const Eigen::Map<const Mat> V(v.data(), q, C);
    out.resize(dim());
    detail::sum_over_row_blocks(Xaug_.rows(), kBlock, data_weight(), s.unused, Eigen::Map<Mat>(out.data(), q, C), s.chunks,
                                [&](Scratch::Rows& c, Index i0, Index m) {
      c.z.resize(kBlock, C);  // the same shape after the first call: no reallocation
      c.t.resize(kBlock, 1);
      const auto X = Xaug_.middleRows(i0, m);
      auto U = c.z.topRows(m);
      U.noalias() = X * V;
      const auto Pb = P.middleRows(i0, m);
      auto pu = c.t.col(0).head(m);
      pu.noalias() = Pb.cwiseProduct(U).rowwise().sum();
      U = Pb.cwiseProduct(U.colwise() - pu);
      c.grad.noalias() += X.transpose() * U;
    });
    add_ridge(v, out);
  }

  /// The Jacobi preconditioner of Newton-CG at the probabilities P: per feature j, s·Σᵢ xᵢⱼ²·qᵢ (+ l2 on weights) with
  /// qᵢ = mean over classes of pᵢc(1 − pᵢc), the same for every class. Being shared by the
  /// classes, it maps the Hessian's null space (one vector added to every class) into itself,
  /// as NewtonOracle::diagonal requires. A column of zeros without l2 gets 1 (any value does).
  Vec class_shared_diagonal(const Mat& P) const {
    const Vec q = (P.array() * (1.0 - P.array())).rowwise().mean();
    const Index m = rows_per_output_;
    Vec d(m);
    for (Index j = 0; j < m; ++j) d[j] = data_weight() * Xaug_.col(j).cwiseAbs2().dot(q);
    d.head(features_).array() += opt_.l2;  // l2 on the weights, none on the intercept
    for (Index j = 0; j < m; ++j)
      if (!(d[j] > 0.0)) d[j] = 1.0;
    return d.replicate(outputs_, 1);
  }

  /// Removes the Hessian's null space from v: one vector added to every class's parameters
  /// changes no probability, so on the rows that l2 does not hold in place (the intercept; every
  /// row without l2) v's mean over the classes goes.
  void remove_class_shift(Vec& v) const {
    Eigen::Map<Mat> V(v.data(), rows_per_output_, outputs_);
    const Index from = opt_.l2 > 0.0 ? features_ : 0;
    for (Index j = from; j < rows_per_output_; ++j) V.row(j).array() -= V.row(j).mean();
  }

  /// Logits to probabilities, row by row (log-sum-exp stabilised).
  template <class Rows>
  void probabilities(Rows&& Z) const {
    for (Index i = 0; i < Z.rows(); ++i) {
      auto z = Z.row(i);
      const double top = z.maxCoeff();
      z = (z.array() - top).exp();
      z /= z.sum();
    }
  }

  std::optional<Optimum> solve() const {
    detail::NewtonOracle oracle = newton_oracle([this](const Vec& w) { return hessian(w); });
    // Newton-CG (p > 256, NewtonOracle::dense_limit): the probabilities once per Newton step, for every product and the
    // preconditioner, not once per product.
    oracle.prepare = [this](const Vec& w) {
      auto P = std::make_shared<const Mat>(probabilities_at(w));
      auto scratch = std::make_shared<ProductScratch>();
      detail::PreparedHessian h;
      h.product = [this, P, scratch](const Vec& v, Vec& out) { product(*P, v, out, *scratch); };
      h.diagonal = class_shared_diagonal(*P);
      return h;
    };
    oracle.project = [this](Vec& v) { remove_class_shift(v); };
    oracle.min_norm = opt_.l2 == 0.0 || opt_.intercept;
    const detail::NewtonResult r = detail::newton_minimise(oracle, Vec::Zero(dim()));
    if (opt_.l2 == 0.0 && !r.settled) return std::nullopt;
    return Optimum{r.w, r.cost,
                   r.cg_iterations > 0
                       ? fmt::format("Newton-CG ({} steps, {} Hessian products, |grad| {:.2e})", r.steps,
                                     r.cg_iterations, r.grad_norm)
                       : fmt::format("Newton ({} steps, |grad| {:.2e})", r.steps, r.grad_norm)};
  }

  std::vector<Index> label_;
};

}  // namespace

std::unique_ptr<Problem> make_softmax(Dataset data, const LinearModelOptions& opt, Index classes) {
  return std::make_unique<Softmax>(std::move(data), opt, classes);
}

}  // namespace stepgate
