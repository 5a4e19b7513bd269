#include "stepgate/problems/newton.hpp"

#include <cmath>
#include <deque>

namespace stepgate::detail {
namespace {

/// Truncated conjugate gradients for H d = -g from d = 0 (stops at negative curvature),
/// preconditioned by the prepared Hessian's diagonal when it has one (Jacobi). Features on very
/// different scales (pixels that are almost always 0 next to busy ones) make H's diagonal span
/// decades; dividing by it removes that part of the condition number, which is what plain CG
/// pays for in iterations. The stopping rule is on the unpreconditioned residual, as before.
Vec newton_cg_direction(const NewtonOracle& o, const Vec& w, const Vec& g, long& products) {
  const Index p = g.size();
  PreparedHessian prepared;
  if (o.prepare) prepared = o.prepare(w);
  else prepared.product = [&](const Vec& v, Vec& out) { o.hvp(w, v, out); };
  const auto& H = prepared.product;
  Vec inverse_diagonal;
  if (prepared.diagonal.size() == p && (prepared.diagonal.array() > 0.0).all() && prepared.diagonal.allFinite())
    inverse_diagonal = prepared.diagonal.cwiseInverse();  // else not usable: plain CG
  const bool preconditioned = inverse_diagonal.size() == p;
  auto precondition = [&](const Vec& r, Vec& z) {
    if (preconditioned) z = inverse_diagonal.cwiseProduct(r);
    else z = r;
    if (o.project) o.project(z);
  };
  Vec d = Vec::Zero(p), r = -g, z(p), Hs(p);
  precondition(r, z);
  Vec s = z;
  double rz = r.dot(z);
  const double tol = std::min(1e-2, std::sqrt(g.norm())) * g.norm();
  for (Index it = 0; it < 2 * p + 50 && r.norm() > tol; ++it) {
    H(s, Hs);
    ++products;
    const double curvature = s.dot(Hs);
    if (!(curvature > 0.0)) break;
    const double alpha = rz / curvature;
    d += alpha * s;
    r -= alpha * Hs;
    precondition(r, z);
    const double next = r.dot(z);
    s = z + (next / rz) * s;
    rz = next;
  }
  if (d.isZero()) d = -g;
  if (o.project) o.project(d);
  return d;
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
  std::deque<Vec> recent;  // the iterates of the last kDrift accepted steps, oldest first
  constexpr std::size_t kDrift = 5;
  Vec g(res.w.size()), g_try(res.w.size());
  res.cost = o.cost_grad(res.w, g);
  res.grad_norm = g.norm();
  for (res.steps = 0; res.steps < o.max_steps && res.grad_norm > 0.0;) {
    const Vec d = res.w.size() <= o.dense_limit ? dense_direction(o, res.w, g)
                                                : newton_cg_direction(o, res.w, g, res.cg_iterations);
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
        if (recent.size() == kDrift) recent.pop_front();
        recent.push_back(res.w);
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
  // The steps can also collapse where no minimiser exists: on separable data the curvature
  // along the separating direction underflows, and Newton's steps shrink although the iterates
  // were drifting along it. A convex function whose minimum is attained rises when one moves
  // far from the minimiser; if it does not rise along the recent drift (a recession
  // direction), the infimum is not attained.
  if (res.settled && !recent.empty()) {
    const Vec drift = res.w - recent.front();
    if (const double size = drift.norm(); size > 0.0) {
      Vec far = res.w + (std::max(1.0, res.w.norm()) / size) * drift, g_far(res.w.size());
      const double cost_far = o.cost_grad(far, g_far);
      if (!(cost_far > res.cost + 1e-12 * std::max(std::abs(res.cost), 1e-300))) res.settled = false;
    }
  }
  return res;
}

}  // namespace stepgate::detail
