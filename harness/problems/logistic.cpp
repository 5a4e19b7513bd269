// Logistic regression: J(w) = s·Σ_i [log(1 + exp(z_i)) − y_i z_i] + (l2/2)‖w‖², z = Xaug w,
// s = 1/n (mean) or 1 (sum), labels y_i in {0, 1}.
#include <cmath>
#include <mutex>
#include <stdexcept>
#include <string>

#include <fmt/format.h>

#include "stepgate/core/error.hpp"
#include "stepgate/problems/linear_common.hpp"
#include "stepgate/problems/linear_models.hpp"
#include "stepgate/problems/newton.hpp"

namespace stepgate {
namespace {

/// 1 / (1 + exp(−z)) without overflow.
double sigmoid(double z) {
  if (z >= 0.0) return 1.0 / (1.0 + std::exp(-z));
  const double e = std::exp(z);
  return e / (1.0 + e);
}

/// σ(z) − y for y in {0, 1}; for y = 1 as −σ(−z), which keeps its digits when σ(z) ≈ 1.
double residual(double z, double y) { return y == 1.0 ? -sigmoid(-z) : sigmoid(z); }

class Logistic final : public detail::LinearModel {
 public:
  Logistic(Dataset&& data, const LinearModelOptions& opt) : LinearModel(std::move(data), opt, 1), sign_(1.0 - 2.0 * y_.array()) {
    for (Index i = 0; i < y_.size(); ++i)
      if (y_[i] != 0.0 && y_[i] != 1.0)
        throw InputError(data.row_location(i),
                         fmt::format("found the label {}{} of data set '{}'; expected 0 or 1, "
                                     "as a logistic problem needs", y_[i], detail::target_column(data), data.name));
  }

  std::string_view kind() const override { return "logistic"; }

  void evaluate(const Mat& W, Evaluation& out, Scratch& s) const override {
    const Index K = W.cols(), n = Xaug_.rows(), p = dim();
    out.cost.resize(K);
    out.grad.resize(p, K);
    // Chunks of rows in parallel (sum_over_row_blocks), and within a chunk blocks of kBlock
    // rows: a block's margins for all lanes in one product, its loss and residuals, then its
    // share of the gradient, while the block of X is still in cache, so X is read from memory
    // once per evaluation. Per lane and block, in vectorised array expressions (Eigen's
    // packet exp and log), the loss is summed and the margins are overwritten with the
    // residuals σ(z) − y. With t = (1 − 2y)·z (t = z for y = 0, −z for y = 1):
    //   loss_i = softplus(t) = max(t, 0) + log1p(e),   e = exp(−|t|) = E1·E3,
    //   σ(z) − y = (1 − 2y)·σ(t) = (1 − 2y)·E1 / (E1 + E3),
    // where E1 = exp(min(t, 0)) and E3 = exp(−max(t, 0)): one of the two is exactly 1, so
    // E1 + E3 = 1 + e as rounded, neither exponent overflows, and the residual of a label
    // predicted almost surely keeps its digits (no 1 − σ cancellation). log1p(e) is
    // log(u) − ((u − 1) − e)/u with u = 1 + e, which corrects the rounding of u (exact to
    // O(eps²)), since Eigen vectorises log but not log1p for doubles.
    constexpr Index kBlock = 512;  // rows per block: its X (512 x p), z, t, E1 and E3 stay in L2
    detail::sum_over_row_blocks(n, kBlock, data_weight(), out.cost, Eigen::Map<Mat>(out.grad.data(), p, K), s.chunks,
                                [&](Scratch::Rows& c, Index i0, Index m) {
      c.z.resize(kBlock, K);  // the same shape after the first call: no reallocation
      c.t.resize(kBlock, 3);
      const auto X = Xaug_.middleRows(i0, m);
      auto Z = c.z.topRows(m);
      Z.noalias() = X * W;
      const auto sign = sign_.segment(i0, m).array();
      auto t = c.t.col(0).head(m).array();
      auto e1 = c.t.col(1).head(m).array();
      auto e3 = c.t.col(2).head(m).array();
      for (Index k = 0; k < K; ++k) {
        auto z = Z.col(k).array();
        t = sign * z;
        e1 = t.min(0.0).exp();
        e3 = (-t.max(0.0)).exp();
        c.cost[k] += (t.max(0.0) + (e1 + e3).log() - (((e1 + e3) - 1.0) - e1 * e3) / (e1 + e3)).sum();
        z = sign * e1 / (e1 + e3);
      }
      c.grad.noalias() += X.transpose() * Z;
    });
    add_ridge(W, &out.cost, out.grad);
  }

  void gradient_rows(const Mat& W, std::span<const Index> rows, Mat& grad, Scratch& s) const override {
    if (rows.empty()) throw std::invalid_argument("logistic: empty mini-batch");
    detail::gather_rows(Xaug_, rows, s.c);
    s.a.resize(s.c.rows(), W.cols());
    s.a.noalias() = s.c * W;
    for (Index k = 0; k < W.cols(); ++k)
      for (std::size_t i = 0; i < rows.size(); ++i)
        s.a(Index(i), k) = residual(s.a(Index(i), k), y_[rows[i]]);
    grad.resize(dim(), W.cols());
    grad.noalias() = batch_weight(Index(rows.size())) * (s.c.transpose() * s.a);
    add_ridge(W, nullptr, grad);
  }

  void hessian_vector(const Vec& w, const Vec& v, Vec& out) const override {
    const Vec z = Xaug_ * w;
    Vec u = Xaug_ * v;
    for (Index i = 0; i < u.size(); ++i) {
      const double p = sigmoid(z[i]);
      u[i] *= p * (1.0 - p);
    }
    out.noalias() = data_weight() * (Xaug_.transpose() * u);
    add_ridge(v, out);
  }

  Mat hessian(const Vec& w) const override {
    // s·Xᵀ·diag(σ'(z))·X, z = X·w, block by block (weighted_gram): no n-sized temporary.
    Mat H;
    detail::weighted_gram(Xaug_, [&](Index, const Eigen::Ref<const Mat>& X, Eigen::Ref<Vec> c) {
      c.noalias() = X * w;
      for (Index i = 0; i < c.size(); ++i) {
        const double p = sigmoid(c[i]);
        c[i] = p * (1.0 - p);
      }
    }, data_weight(), H);
    H.diagonal().head(features_).array() += opt_.l2;
    return H;
  }

  /// Newton's method from w = 0. Without l2, separable data have no minimiser (the cost
  /// tends to 0 as ‖w‖ → ∞): then nullopt, noticed when the final w classifies every row
  /// strictly correctly or the Newton steps fail to shrink while ‖w‖ grows.
  std::optional<Optimum> optimum() const override { return solved_once([this] { return solve(); }); }

  /// σ' ≤ 1/4, so ∇²J ⪯ s·XaugᵀXaug/4 + l2·I.
  double smoothness_bound() const override { return data_weight() * gram_lambda_max() / 4.0 + opt_.l2; }

 private:
  /// Many rows: Newton's early steps, far from the optimum, need no full pass. From this many
  /// rows on, Newton runs first on every kSampleStride-th row (a stride-th of the work per
  /// step) and the full Newton starts from that sample's optimum, where it converges in a few
  /// quadratic steps. The answer is still the full data's Newton fixed point.
  static constexpr Index kSampleFrom = 65536, kSampleStride = 8;

  Vec newton_start() const {
    const Index n = Xaug_.rows();
    if (n < kSampleFrom) return Vec::Zero(dim());
    Dataset sample;
    sample.name = "every " + std::to_string(kSampleStride) + "th row";
    sample.X = Xaug_(Eigen::seq(0, n - 1, kSampleStride), Eigen::seqN(0, features_));
    sample.y = y_(Eigen::seq(0, n - 1, kSampleStride));
    LinearModelOptions o = opt_;
    // A summed loss over a stride-th of the rows: the same balance against l2 with l2/stride.
    if (o.reduction == Reduction::sum) o.l2 *= double(sample.X.rows()) / double(n);
    const Logistic sub(std::move(sample), o);
    const detail::NewtonResult r = detail::newton_minimise(sub.newton_oracle([&sub](const Vec& w) { return sub.hessian(w); }),
                                                           Vec::Zero(dim()));
    // No minimiser on the sample (separable without l2): start the full Newton from 0.
    return r.settled && r.w.allFinite() ? r.w : Vec::Zero(dim());
  }

  std::optional<Optimum> solve() const {
    detail::NewtonOracle oracle = newton_oracle([this](const Vec& w) { return hessian(w); });
    const detail::NewtonResult r = detail::newton_minimise(oracle, newton_start());
    if (opt_.l2 == 0.0) {
      const Vec z = Xaug_ * r.w;
      bool separated = true;
      for (Index i = 0; i < z.size() && separated; ++i) separated = y_[i] == 1.0 ? z[i] > 0.0 : z[i] < 0.0;
      if (separated || !r.settled) return std::nullopt;
    }
    return Optimum{r.w, r.cost,
                   fmt::format("Newton ({} steps{}, |grad| {:.2e})", r.steps,
                               Xaug_.rows() >= kSampleFrom ? fmt::format(" from the optimum on every {}th row", kSampleStride) : "",
                               r.grad_norm)};
  }

  Vec sign_;  ///< 1 − 2y: +1 for label 0, −1 for label 1
};

}  // namespace

std::unique_ptr<Problem> make_logistic(Dataset data, const LinearModelOptions& opt) {
  return std::make_unique<Logistic>(std::move(data), opt);
}

}  // namespace stepgate
