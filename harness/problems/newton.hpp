// Newton's method with a backtracking line search, run to the limit of double precision:
// the reference optimum of logistic and softmax regression.
#pragma once
#include <functional>

#include "stepgate/core/types.hpp"

namespace stepgate::detail {

/// The Hessian at one point, for Newton-CG.
struct PreparedHessian {
  std::function<void(const Vec& v, Vec& out)> product;  ///< v ↦ H(w)·v
  /// Optional (empty: plain CG): a positive diagonal M ≈ diag H(w), for Jacobi-preconditioned
  /// CG. It must map H's null space into itself (then CG from 0 stays in H's range, which
  /// keeps the minimum-norm property); a diagonal shared by all classes of softmax does.
  Vec diagonal;
};

struct NewtonOracle {
  std::function<double(const Vec& w, Vec& grad)> cost_grad;
  std::function<Mat(const Vec& w)> hessian;                         ///< dense, used when p <= dense_limit
  std::function<void(const Vec& w, const Vec& v, Vec& out)> hvp;    ///< used by Newton-CG otherwise
  /// Newton-CG, optional: the Hessian at w prepared once per Newton step (what every product
  /// at w shares, such as the class probabilities). Empty: `hvp`, unpreconditioned.
  std::function<PreparedHessian(const Vec& w)> prepare;
  /// Newton-CG, optional: removes from a vector its part in H's null space (known in closed
  /// form, the same at every w). In exact arithmetic CG from 0 never leaves H's range; over
  /// thousands of iterations rounding feeds the null space, which H never damps, so the
  /// minimum-norm iterate drifts. Applied to every preconditioned residual and to the step.
  std::function<void(Vec& v)> project;
  /// Parameters up to which a Newton step forms the dense Hessian (about 2·n·p² flops, then a
  /// p³/3 Cholesky); above, Newton-CG (about 4·n·p flops per Hessian product, and a step takes
  /// tens of products). The two cost the same near p = 2 x products, so dense pays only for a
  /// few hundred parameters: logistic on 50 features is dense, softmax on 784 pixels x 10 classes
  /// is Newton-CG.
  Index dense_limit = 256;
  /// Solve the Newton system for its minimum-norm solution (complete orthogonal decomposition;
  /// CG from zero has the same property): keeps iterates in the range of a singular Hessian.
  bool min_norm = false;
  int max_steps = 100;
};

struct NewtonResult {
  Vec w;
  double cost = 0.0;
  double grad_norm = 0.0;
  double last_step = 0.0;  ///< norm of the last accepted step
  int steps = 0;
  long cg_iterations = 0;  ///< Hessian-vector products of Newton-CG over all steps (0: dense)
  /// The steps collapsed (last ≤ 1e-6·(1 + ‖w‖)), as they do when Newton converges
  /// quadratically, and the cost rises when one moves far (by max(1, ‖w‖)) along the drift of
  /// the last five steps. When the infimum is not attained (separable data without l2) the
  /// steps stay of constant size while ‖w‖ grows, or collapse only because the curvature along
  /// the separating direction underflows; then the cost does not rise along that drift, and
  /// this is false (even if the gradient underflows to 0 on the way).
  bool settled = false;
};

/// Iterates from w0 until no step lowers the cost (or, once the cost no longer resolves the
/// progress, the gradient norm), the gradient is 0, or max_steps.
NewtonResult newton_minimise(const NewtonOracle& oracle, Vec w0);

}  // namespace stepgate::detail
