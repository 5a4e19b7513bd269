#include "stepgate/problems/linear_common.hpp"

#include <algorithm>
#include <cmath>
#include <random>
#include <stdexcept>
#include <string>
#include <vector>

#include <tbb/blocked_range.h>
#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>

#include "stepgate/problems/normal_draws.hpp"

namespace stepgate::detail {

Mat augment_with_ones(Mat X, bool intercept) {
  if (!intercept) return X;
  // Column-major with the rows unchanged: Eigen's conservativeResize keeps the columns where
  // they are and reallocates the block (realloc, which moves a large mapping's pages instead of
  // copying them), so no second copy of the features is held.
  const Index d = X.cols();
  X.conservativeResize(Eigen::NoChange, d + 1);
  X.col(d).setOnes();
  return X;
}

void weighted_gram(const Mat& X, const RowWeights& row_weights, double weight, Mat& out) {
  const Index n = X.rows(), p = X.cols();
  constexpr Index kBlock = 1024;  // rows per block: its scaled copy (1024 x p) stays in L2 for p ~ 50
  const Index blocks = std::max<Index>(1, (n + kBlock - 1) / kBlock);
  const Index by_memory = std::max<Index>(1, Index(8'000'000) / std::max<Index>(1, p * p));  // 64 MB of partial sums
  const Index groups = std::min<Index>({8, blocks, by_memory});
  std::vector<Mat> partial(static_cast<std::size_t>(groups));
  auto one = [&](Index g) {
    Mat& S = partial[std::size_t(g)];
    S.setZero(p, p);
    Mat scaled;
    Vec c;
    if (row_weights) scaled.resize(std::min(kBlock, n), p), c.resize(std::min(kBlock, n));
    for (Index b = g * blocks / groups; b < (g + 1) * blocks / groups; ++b) {
      const Index i0 = b * kBlock, m = std::min(kBlock, n - i0);
      if (m <= 0) break;
      const auto Xb = X.middleRows(i0, m);
      if (row_weights) {
        row_weights(i0, Xb, c.head(m));
        scaled.topRows(m).noalias() = c.head(m).asDiagonal() * Xb;
        S.noalias() += Xb.transpose() * scaled.topRows(m);
      } else {
        S.noalias() += Xb.transpose() * Xb;
      }
    }
  };
  if (groups == 1) {
    one(0);
  } else {
    tbb::this_task_arena::isolate([&] {
      tbb::parallel_for(tbb::blocked_range<Index>(0, groups, 1),
                        [&](const tbb::blocked_range<Index>& r) {
                          for (Index g = r.begin(); g < r.end(); ++g) one(g);
                        },
                        tbb::simple_partitioner());
    });
  }
  out = std::move(partial[0]);
  for (Index g = 1; g < groups; ++g) out += partial[std::size_t(g)];
  out *= weight;
  out.triangularView<Eigen::StrictlyUpper>() = out.transpose();  // the lower triangle, mirrored: exactly symmetric
}

void gather_rows(const Mat& X, std::span<const Index> rows, Mat& out) {
  out.resize(Index(rows.size()), X.cols());
  for (std::size_t i = 0; i < rows.size(); ++i) {
    if (rows[i] < 0 || rows[i] >= X.rows())
      throw std::out_of_range("mini-batch row " + std::to_string(rows[i]) + " outside 0.." +
                              std::to_string(X.rows() - 1));
    out.row(Index(i)) = X.row(rows[i]);
  }
}

LinearModel::LinearModel(Dataset&& data, const LinearModelOptions& opt, Index outputs)
    : Xaug_(augment_with_ones(std::move(data.X), opt.intercept)),
      y_(data.y),
      opt_(opt),
      features_(Xaug_.cols() - (opt.intercept ? 1 : 0)),
      outputs_(outputs),
      rows_per_output_(Xaug_.cols()),
      data_weight_(opt.reduction == Reduction::mean ? 1.0 / double(Xaug_.rows()) : 1.0) {
  data.X.resize(0, 0);  // moved from: say so, whatever the moved-from state
  const std::string who = "data set '" + data.name + "': ";
  if (Xaug_.rows() == 0) throw std::invalid_argument(who + "has no rows");
  if (data.y.size() != Xaug_.rows())
    throw std::invalid_argument(who + std::to_string(data.y.size()) + " targets for " +
                                std::to_string(Xaug_.rows()) + " rows");
  if (!(opt.l2 >= 0.0) || !std::isfinite(opt.l2))
    throw std::invalid_argument(who + "l2 must be finite and >= 0");
  if (!(opt.init_scale >= 0.0)) throw std::invalid_argument(who + "init_scale must be >= 0");
  if (!Xaug_.allFinite() || !y_.allFinite())
    throw std::invalid_argument(who + "features and targets must be finite");
}

Vec LinearModel::start(std::uint64_t seed) const {
  if (opt_.init_scale == 0.0) return Vec::Zero(dim());
  std::mt19937_64 rng(seed);
  return opt_.init_scale * standard_normal(rng, dim());
}

void sum_over_row_blocks(Index n, Index block, double weight, Vec& cost, Eigen::Map<Mat> grad,
                         std::vector<Scratch::Rows>& chunks, const std::function<void(Scratch::Rows&, Index, Index)>& body) {
  const Index count = std::max<Index>(1, (n + kChunkRows - 1) / kChunkRows);
  if (Index(chunks.size()) < count) chunks.resize(std::size_t(count));
  auto one = [&](Index c) {
    Scratch::Rows& rows = chunks[std::size_t(c)];
    rows.cost.setZero(cost.size());
    rows.grad.setZero(grad.rows(), grad.cols());
    const Index end = std::min(n, (c + 1) * kChunkRows);
    for (Index i0 = c * kChunkRows; i0 < end; i0 += block) body(rows, i0, std::min(block, end - i0));
  };
  if (count == 1) {
    one(0);
  } else {
    tbb::this_task_arena::isolate([&] {
      tbb::parallel_for(tbb::blocked_range<Index>(0, count, 1),
                        [&](const tbb::blocked_range<Index>& r) {
                          for (Index c = r.begin(); c < r.end(); ++c) one(c);
                        },
                        tbb::simple_partitioner());
    });
  }
  cost = chunks[0].cost;
  grad = chunks[0].grad;
  for (Index c = 1; c < count; ++c) {
    cost += chunks[std::size_t(c)].cost;
    grad += chunks[std::size_t(c)].grad;
  }
  cost *= weight;
  grad *= weight;
}

void LinearModel::add_ridge(const Mat& W, Vec* cost, Mat& grad) const {
  if (opt_.l2 == 0.0) return;
  const Index K = W.cols();
  // View every (output, lane) column as one column of weights; its top `features_` rows are
  // the regularised ones (the intercept, if any, is the last row).
  Eigen::Map<const Mat> Wv(W.data(), rows_per_output_, outputs_ * K);
  Eigen::Map<Mat> Gv(grad.data(), rows_per_output_, outputs_ * K);
  Gv.topRows(features_) += opt_.l2 * Wv.topRows(features_);
  if (cost == nullptr) return;
  for (Index k = 0; k < K; ++k)
    (*cost)[k] += 0.5 * opt_.l2 * Wv.middleCols(k * outputs_, outputs_).topRows(features_).squaredNorm();
}

void LinearModel::add_ridge(const Vec& v, Vec& out) const {
  if (opt_.l2 == 0.0) return;
  Eigen::Map<const Mat> Vv(v.data(), rows_per_output_, outputs_);
  Eigen::Map<Mat> Ov(out.data(), rows_per_output_, outputs_);
  Ov.topRows(features_) += opt_.l2 * Vv.topRows(features_);
}

double LinearModel::gram_lambda_max() const {
  std::call_once(gram_once_, [this] {
    const Index p = Xaug_.cols();
    if (p <= 4000) {
      Mat G;
      weighted_gram(Xaug_, {}, 1.0, G);
      gram_lambda_max_ = Eigen::SelfAdjointEigenSolver<Mat>(G, Eigen::EigenvaluesOnly)
                             .eigenvalues()
                             .maxCoeff();
      return;
    }
    // Power iteration on XᵀX without forming it; a start from the seedless all-ones vector
    // keeps it deterministic.
    Vec v = Vec::Ones(p).normalized(), Xv(Xaug_.rows());
    double lambda = 0.0;
    for (int it = 0; it < 500; ++it) {
      Xv.noalias() = Xaug_ * v;
      v.noalias() = Xaug_.transpose() * Xv;
      const double next = v.norm();
      if (next == 0.0) break;
      v /= next;
      if (std::abs(next - lambda) <= 1e-10 * next) { lambda = next; break; }
      lambda = next;
    }
    gram_lambda_max_ = lambda;
  });
  return gram_lambda_max_;
}

}  // namespace stepgate::detail
