#include "stepgate/problems/newton.hpp"

#include <cmath>

namespace stepgate::detail {
namespace {

/// Truncated conjugate gradients for H d = -g from d = 0 (stops at negative curvature).
Vec newton_cg_direction(const NewtonOracle& o, const Vec& w, const Vec& g) {
  const Index p = g.size();
  Vec d = Vec::Zero(p), r = -g, s = r, Hs(p);
  double rr = r.squaredNorm();
  const double tol = std::min(1e-2, std::sqrt(g.norm())) * g.norm();
  for (Index it = 0; it < 2 * p + 50 && std::sqrt(rr) > tol; ++it) {
    o.hvp(w, s, Hs);
    const double curvature = s.dot(Hs);
    if (!(curvature > 0.0)) break;
    const double alpha = rr / curvature;
    d += alpha * s;
    r -= alpha * Hs;
    const double next = r.squaredNorm();
    s = r + (next / rr) * s;
    rr = next;
  }
  return d.isZero() ? Vec(-g) : d;
}

Vec dense_direction(const NewtonOracle& o, const Vec& w, const Vec& g) {
  const Mat H = o.hessian(w);
  if (!o.min_norm) {
    Eigen::LLT<Mat> llt(H);
    if (llt.info() == Eigen::Success) {
      Vec d = llt.solve(-g);
      if (d.allFinite()) return d;
    }
  }
  return Eigen::CompleteOrthogonalDecomposition<Mat>(H).solve(-g);
}

}  // namespace

NewtonResult newton_minimise(const NewtonOracle& o, Vec w0) {
  NewtonResult res;
  res.w = std::move(w0);
  Vec g(res.w.size()), g_try(res.w.size());
  res.cost = o.cost_grad(res.w, g);
  res.grad_norm = g.norm();
  for (res.steps = 0; res.steps < o.max_steps && res.grad_norm > 0.0;) {
    const Vec d = res.w.size() <= o.dense_limit ? dense_direction(o, res.w, g)
                                                : newton_cg_direction(o, res.w, g);
    const double slope = g.dot(d);
    if (!d.allFinite() || !(slope < 0.0)) break;
    // Armijo backtracking while the cost resolves the decrease. Once the change in cost is
    // within rounding, the cost says nothing: a step is then taken only if it lowers the
    // gradient norm, and the iteration ends when it does not.
    const double rounding = 1e-13 * std::max(std::abs(res.cost), 1e-300);
    bool accepted = false, done = false;
    for (double t = 1.0; t > 1e-12 && !accepted && !done; t *= 0.5) {
      Vec w_try = res.w + t * d;
      const double cost_try = o.cost_grad(w_try, g_try);
      if (!std::isfinite(cost_try)) continue;
      const double g_try_norm = g_try.norm();
      if (std::abs(cost_try - res.cost) <= rounding) {
        accepted = g_try_norm < res.grad_norm;
        done = !accepted;
      } else {
        accepted = cost_try <= res.cost + 1e-4 * t * slope;
      }
      if (accepted) {
        res.last_step = t * d.norm();
        res.w = std::move(w_try);
        res.cost = cost_try;
        res.grad_norm = g_try_norm;
        g.swap(g_try);
        ++res.steps;
      }
    }
    if (!accepted) break;
  }
  res.settled = res.last_step <= 1e-6 * (1.0 + res.w.norm());
  return res;
}

}  // namespace stepgate::detail
