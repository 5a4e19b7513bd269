// What least squares, logistic and softmax regression share: the feature matrix with a ones
// column for the intercept, the reduction weight, the ridge term that skips intercepts, the
// seeded start, mini-batch row gathering and the largest eigenvalue of XaugᵀXaug.
#pragma once
#include <functional>
#include <mutex>
#include <optional>
#include <span>
#include <vector>

#include "stepgate/core/dataset.hpp"
#include "stepgate/problems/linear_models.hpp"
#include "stepgate/problems/newton.hpp"
#include "stepgate/problems/problem.hpp"

namespace stepgate::detail {

/// [X 1] when `intercept`, else X: n x (d + intercept). Takes X over (pass std::move(X) to
/// avoid a copy): the ones column is appended in place, growing X's block by realloc, so a
/// moved-in data set is never held twice.
Mat augment_with_ones(Mat X, bool intercept);

/// Fills c (m entries) with the weights of rows [i0, i0 + m) of X, whose block is X_block
/// (read while it is in cache).
using RowWeights = std::function<void(Index i0, const Eigen::Ref<const Mat>& X_block, Eigen::Ref<Vec> c)>;

/// out = weight · Xᵀ·diag(c)·X (p x p, both triangles), c_i from `row_weights` (null: all 1,
/// XᵀX): the dense Hessian of a linear model, Σ_i c_i x_i x_iᵀ. Blocks of rows, each scaled in
/// a small reused buffer (never an n x p temporary), summed in a fixed number of row groups in
/// parallel on the caller's task arena and then in group order: the same bits for any number
/// of threads. The groups depend only on n and p (at most 8, fewer when p x p partial sums
/// would pass 64 MB).
void weighted_gram(const Mat& X, const RowWeights& row_weights, double weight, Mat& out);

/// out = the rows `rows` of X, in that order (resized to |rows| x X.cols()).
void gather_rows(const Mat& X, std::span<const Index> rows, Mat& out);

/// Rows per chunk of a row-split evaluation. Fixed, so that the chunks, and the order in which
/// their partial sums are added, never depend on the number of threads.
inline constexpr Index kChunkRows = 4096;

/// Splits n rows into chunks of kChunkRows, and each chunk into blocks of at most `block` rows,
/// and calls body(chunk scratch, first row, rows) for each block, the
/// blocks of a chunk in order. The chunks run in parallel on the caller's task arena (isolated:
/// a thread waiting for its chunks takes no unrelated task, so one inside a call_once never
/// re-enters it). Each chunk's `cost` (K) and `grad` (the shape of `grad`) start at 0 and the
/// body adds its block's share to them; the chunks' sums are then added in chunk order:
/// cost = weight·Σ cost_c, grad = weight·Σ grad_c, the same bits for any number of threads.
/// One chunk (n ≤ kChunkRows) runs inline.
void sum_over_row_blocks(Index n, Index block, double weight, Vec& cost, Eigen::Map<Mat> grad,
                         std::vector<Scratch::Rows>& chunks, const std::function<void(Scratch::Rows&, Index, Index)>& body);

/// Base of the three linear models. Parameters: a (d [+1]) x outputs matrix, column-major.
class LinearModel : public Problem {
 public:
  /// Takes the features over from `data` (data.X is left empty; its targets, name and row
  /// locations stay for the derived model's messages): a data set passed by move to a make_*
  /// factory is never copied.
  LinearModel(Dataset&& data, const LinearModelOptions& opt, Index outputs);

  Index dim() const override { return rows_per_output_ * outputs_; }
  Index samples() const override { return Xaug_.rows(); }
  /// w = 0, or N(0, init_scale²) entries drawn from `seed` when init_scale > 0.
  Vec start(std::uint64_t seed) const override;
  std::optional<LinearLayout> linear_layout() const override {
    return LinearLayout{features_, outputs_, opt_.intercept};
  }

 protected:
  /// Weight of the data term: 1/n for Reduction::mean, 1 for Reduction::sum.
  double data_weight() const { return data_weight_; }
  /// Weight of a mini-batch of m rows, so that the batch gradient estimates the full one
  /// without bias: data_weight · n / m (mean: 1/m; sum: n/m).
  double batch_weight(Index m) const { return data_weight_ * double(samples()) / double(m); }
  /// grad += l2·w and, when `cost` is given, cost += (l2/2)‖w‖², per column of W, skipping
  /// intercept entries.
  void add_ridge(const Mat& W, Vec* cost, Mat& grad) const;
  /// out += l2·v, skipping intercept entries.
  void add_ridge(const Vec& v, Vec& out) const;
  /// λ_max(XaugᵀXaug), computed on first use (thread-safe). Exact (dense symmetric eigen-
  /// solver) up to 4000 columns; beyond, a power-iteration estimate.
  double gram_lambda_max() const;
  /// The Newton oracle of this model: cost and gradient by evaluate(), products by
  /// hessian_vector(), the dense Hessian by `hessian` (the model's own); the rest is the caller's.
  template <class Hessian>
  NewtonOracle newton_oracle(Hessian hessian) const {
    NewtonOracle oracle;
    oracle.cost_grad = [this](const Vec& w, Vec& g) {
      Evaluation e;
      Scratch s;
      evaluate(w, e, s);
      g = e.grad.col(0);
      return e.cost[0];
    };
    oracle.hessian = std::move(hessian);
    oracle.hvp = [this](const Vec& w, const Vec& v, Vec& out) { hessian_vector(w, v, out); };
    return oracle;
  }
  /// The optimum that solve() finds, solved on first use (thread-safe) and kept: the
  /// optimum() of a model whose minimiser may not exist (logistic, softmax: nullopt).
  template <class Solve>
  std::optional<Optimum> solved_once(Solve solve) const {
    std::call_once(solution_once_, [&] { solution_ = solve(); });
    return solution_;
  }

  Mat Xaug_;
  Vec y_;
  LinearModelOptions opt_;
  Index features_;
  Index outputs_;
  Index rows_per_output_;

 private:
  double data_weight_;
  mutable std::once_flag gram_once_;
  mutable double gram_lambda_max_ = 0.0;
  mutable std::once_flag solution_once_;
  mutable std::optional<Optimum> solution_;
};

/// " in column 'y'" for a message about a label, or "" when the target column has no name.
inline std::string target_column(const Dataset& data) {
  return data.target.empty() ? std::string() : " in column '" + data.target + "'";
}

}  // namespace stepgate::detail
