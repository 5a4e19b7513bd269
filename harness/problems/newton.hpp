// Newton's method with a backtracking line search, run to the limit of double precision:
// the reference optimum of logistic and softmax regression.
#pragma once
#include <functional>

#include "stepgate/core/types.hpp"

namespace stepgate::detail {

struct NewtonOracle {
  std::function<double(const Vec& w, Vec& grad)> cost_grad;
  std::function<Mat(const Vec& w)> hessian;                         ///< dense, used when p <= dense_limit
  std::function<void(const Vec& w, const Vec& v, Vec& out)> hvp;    ///< used by Newton-CG otherwise
  Index dense_limit = 2000;
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
  /// The steps collapsed (last ≤ 1e-6·(1 + ‖w‖)), as they do when Newton converges
  /// quadratically. When the infimum is not attained (separable data without l2) the steps
  /// stay of constant size while ‖w‖ grows, and this stays false (even if the gradient
  /// underflows to 0 on the way).
  bool settled = false;
};

/// Iterates from w0 until no step lowers the cost (or, once the cost no longer resolves the
/// progress, the gradient norm), the gradient is 0, or max_steps.
NewtonResult newton_minimise(const NewtonOracle& oracle, Vec w0);

}  // namespace stepgate::detail
