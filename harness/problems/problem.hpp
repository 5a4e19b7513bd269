// The objective interface. Every built-in problem (least squares, logistic, softmax,
// quadratic, test functions) and every user-registered objective implements it.
//
// Lanes: the parameters of K runs of one case are the K columns of a p x K matrix W, so that a
// problem computes all K costs and gradients with matrix-matrix products. Implementations
// must be const and thread-safe: one Problem object is shared by all threads of a sweep; all
// mutable working memory lives in the caller's Scratch.
#pragma once
#include <cstdint>
#include <functional>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "stepgate/core/types.hpp"

namespace stepgate {

/// The known minimiser of a problem.
struct Optimum {
  Vec w;               ///< minimiser, size dim()
  double cost = 0.0;   ///< J* = J(w*)
  std::string method;  ///< how it was obtained, e.g. "column-pivoting QR", "Newton (9 steps)", "exact"
};

/// Where the parameters of a linear model sit in the parameter vector, so that a solution can be
/// mapped back through a scaling: the vector is a (features + intercept) x outputs matrix stored
/// column-major; column c holds the weights of output c, followed by its intercept if any.
struct LinearLayout {
  Index features = 0;
  Index outputs = 1;
  bool intercept = false;
};

/// The curvature of a cost that is a mean of per-sample quadratics plus a fixed ridge (least
/// squares): ∇²J = (1/n) Σᵢ uᵢuᵢᵀ + diag(ridge) everywhere, and the Hessian of the mini-batch
/// gradient over rows B (Problem::gradient_rows) is (1/|B|) Σ_{i∈B} uᵢuᵢᵀ + diag(ridge): the ridge
/// is the same in every batch, only the data part varies. Used by the mean-square stability
/// limit of mini-batch methods (analysis/mean_square_limit.hpp).
struct SampleCurvature {
  /// n x p: row i is uᵢ = √(n·w)·x̃ᵢ, x̃ᵢ the sample's features as the problem sees them (after
  /// the suite's scaling) followed by 1 for the intercept, w the data weight (1/n for a mean
  /// loss, 1 for a sum): so that uᵢuᵢᵀ is sample i's Hessian scaled to a mean.
  Mat rows;
  Vec ridge;  ///< p entries >= 0: l2 on the weights, 0 on intercepts
};

/// Caller-owned working memory for evaluations. A problem resizes the members it needs;
/// Eigen's resize to the same shape does not reallocate, so the steady state allocates nothing.
struct Scratch {
  /// Working memory of one chunk of rows, for problems that split their rows across threads.
  struct Rows {
    Mat z, t;   ///< a block of margins or logits, and element-wise temporaries
    Mat grad;   ///< the chunk's partial gradient
    Vec cost;   ///< the chunk's partial costs, one per lane
  };
  Mat a, b, c;
  Vec v;
  std::vector<Index> rows;
  std::vector<Rows> chunks;  ///< one per chunk of rows (see detail::sum_over_row_blocks)
};

/// Result buffers of a batched evaluation (sized by the problem to K lanes).
struct Evaluation {
  Vec cost;  ///< J(W.col(k))
  Mat grad;  ///< ∇J(W.col(k)), p x K
  Vec gap;   ///< J(W.col(k)) - J*, filled only when has_exact_gap(); otherwise left empty
};

class Problem {
 public:
  virtual ~Problem() = default;

  /// "least_squares", "logistic", "softmax", "quadratic", "test_function", or a user's name.
  virtual std::string_view kind() const = 0;
  /// Number of parameters p.
  virtual Index dim() const = 0;
  /// Number of samples that mini-batches draw from; 0 when the problem has none.
  virtual Index samples() const { return 0; }

  /// Starting point of a run. `seed` comes from the run's coordinates; problems with a
  /// published start (test functions) or a zero start ignore it.
  virtual Vec start(std::uint64_t seed) const = 0;

  /// Full-data cost and gradient of every column of W (p x K).
  virtual void evaluate(const Mat& W, Evaluation& out, Scratch& scratch) const = 0;

  /// True when evaluate() fills Evaluation::gap in closed form (quadratics and least squares:
  /// gap = ½ (w - w*)ᵀ ∇J(w), which is better conditioned than J(w) - J*).
  virtual bool has_exact_gap() const { return false; }

  /// Mini-batch gradient: mean loss over `rows` plus the full regulariser. Problems without
  /// samples throw std::logic_error.
  virtual void gradient_rows(const Mat& W, std::span<const Index> rows, Mat& grad,
                             Scratch& scratch) const;

  /// Hessian-vector product ∇²J(w) v.
  virtual void hessian_vector(const Vec& w, const Vec& v, Vec& out) const = 0;

  /// v ↦ ∇²J(w)·v at one fixed w, for many products there (Lanczos): what every product at w
  /// shares (softmax's class probabilities) is computed once. Default: hessian_vector.
  virtual std::function<void(const Vec& v, Vec& out)> hessian_at(const Vec& w) const;

  /// Dense Hessian at w. Default: p Hessian-vector products with unit vectors (symmetrised).
  virtual Mat hessian(const Vec& w) const;

  /// The reference optimum, or nullopt when none is known. May be expensive the first time
  /// (Newton's method); implementations cache it (thread-safely).
  virtual std::optional<Optimum> optimum() const = 0;

  /// A global bound on the Lipschitz constant of ∇J where one is known in closed form; NaN otherwise.
  virtual double smoothness_bound() const { return kMissing; }

  /// For a problem whose cost is exactly a convex quadratic, J(w) = J* + ½(w − w*)ᵀH(w − w*)
  /// with H constant and positive semi-definite (quadratics, least squares): a proven upper bound
  /// on λ_max(H), never below it (rounding included). NaN for every other problem. It admits the
  /// proven early `slow` verdict of gd (docs/design.md, "A proven early slow verdict").
  virtual double quadratic_curvature_bound() const { return kMissing; }

  /// For a cost made of per-sample quadratics plus a fixed ridge (least squares): its samples'
  /// curvature (a copy, n x p); nullopt for every other problem.
  virtual std::optional<SampleCurvature> sample_curvature() const { return std::nullopt; }

  /// Layout of a linear model's parameters; nullopt for problems that are not linear models.
  virtual std::optional<LinearLayout> linear_layout() const { return std::nullopt; }
};

}  // namespace stepgate
