#include "stepgate/analysis/problem_checks.hpp"

#include <cmath>
#include <random>

#include <fmt/format.h>

#include "stepgate/problems/normal_draws.hpp"

namespace stepgate {

namespace {

Evaluation evaluate(const Problem& p, const Mat& W) {
  Evaluation e;
  Scratch s;
  p.evaluate(W, e, s);
  return e;
}

// Keeps the worst error; a NaN error is the worst of all and stays.
struct Worst {
  double error = 0.0;
  Index point = -1;
  void add(double e, Index k) {
    if (std::isnan(error)) return;
    if (std::isnan(e) || e > error || point < 0) error = e, point = k;
  }
};

ProblemCheck finish(std::string name, const Worst& worst, double tolerance, std::string note = "") {
  ProblemCheck c;
  c.name = std::move(name);
  c.worst_error = worst.error;
  c.worst_point = worst.point;
  c.tolerance = tolerance;
  c.note = std::move(note);
  if (c.note.empty() && !std::isfinite(c.worst_error))
    c.note = fmt::format("a non-finite value at point {}", c.worst_point);
  c.pass = c.note.empty() && c.worst_error <= tolerance;
  return c;
}

ProblemCheck shape_failure(std::string name, double tolerance, Index point, std::string note) {
  Worst w;
  w.add(kInf, point);
  return finish(std::move(name), w, tolerance, std::move(note));
}

// Cost and gradient of one column; the note says what was wrong with the shape.
bool evaluate_one(const Problem& p, const Vec& w, double& cost, Vec& grad, std::string& note) {
  const Evaluation e = evaluate(p, w);
  if (e.cost.size() != 1 || e.grad.rows() != p.dim() || e.grad.cols() != 1) {
    note = fmt::format("evaluate() of one column returned {} costs and a {} x {} gradient; expected 1 and {} x 1",
                       e.cost.size(), e.grad.rows(), e.grad.cols(), p.dim());
    return false;
  }
  cost = e.cost[0];
  grad = e.grad.col(0);
  return true;
}

// |a − b| / |b|, with 0/0 = 0.
double relative(double a, double b) {
  const double d = std::abs(a - b);
  return d == 0.0 ? 0.0 : d / std::abs(b);
}

}  // namespace

std::string to_string(const ProblemCheck& c) {
  std::string s = fmt::format("{}: worst relative error {:.3g}", c.name, c.worst_error);
  if (c.worst_point >= 0) s += fmt::format(" at point {}", c.worst_point);
  s += fmt::format(" (tolerance {:.3g}): {}", c.tolerance, c.pass ? "pass" : "FAIL");
  if (!c.note.empty()) s += " (" + c.note + ")";
  return s;
}

ProblemCheck check_gradient(const Problem& p, const Mat& points, const FiniteDifferenceOptions& o) {
  const char* name = "gradient";
  if (points.rows() != p.dim())
    return shape_failure(name, o.tolerance, -1,
                         fmt::format("points have {} rows; the problem has {} parameters", points.rows(), p.dim()));
  Worst worst;
  for (Index k = 0; k < points.cols(); ++k) {
    const Vec w = points.col(k);
    double c0 = 0, ca = 0, cb = 0;
    Vec g, scratch;
    std::string note;
    if (!evaluate_one(p, w, c0, g, note)) return shape_failure(name, o.tolerance, k, note);
    Vec fd(w.size());
    for (Index j = 0; j < w.size(); ++j) {
      const double h = o.step * std::max(1.0, std::abs(w[j]));
      Vec a = w, b = w;
      a[j] += h;
      b[j] -= h;
      if (!evaluate_one(p, a, ca, scratch, note) || !evaluate_one(p, b, cb, scratch, note))
        return shape_failure(name, o.tolerance, k, note);
      fd[j] = (ca - cb) / (a[j] - b[j]);  // the step actually taken, after rounding of w ± h
    }
    worst.add((fd - g).norm() / std::max(1.0, g.norm()), k);
  }
  return finish(name, worst, o.tolerance);
}

ProblemCheck check_hessian_vector(const Problem& p, const Mat& points, const Mat& directions,
                                  const FiniteDifferenceOptions& o) {
  const char* name = "hessian_vector";
  if (points.rows() != p.dim() || directions.rows() != p.dim() || directions.cols() != points.cols())
    return shape_failure(name, o.tolerance, -1,
                         fmt::format("points are {} x {} and directions {} x {}; expected both {} x n",
                                     points.rows(), points.cols(), directions.rows(), directions.cols(), p.dim()));
  Worst worst;
  for (Index k = 0; k < points.cols(); ++k) {
    const Vec w = points.col(k), v = directions.col(k);
    const double vn = v.norm();
    Vec hv;
    p.hessian_vector(w, v, hv);
    if (hv.size() != p.dim())
      return shape_failure(name, o.tolerance, k,
                           fmt::format("hessian_vector() returned {} values; expected {}", hv.size(), p.dim()));
    if (vn == 0.0) {  // H·0 = 0
      worst.add(hv.norm(), k);
      continue;
    }
    const double h = o.step * std::max(1.0, w.norm()) / vn;
    double ca = 0, cb = 0;
    Vec ga, gb;
    std::string note;
    if (!evaluate_one(p, w + h * v, ca, ga, note) || !evaluate_one(p, w - h * v, cb, gb, note))
      return shape_failure(name, o.tolerance, k, note);
    const Vec fd = (ga - gb) / (2.0 * h);
    worst.add((fd - hv).norm() / std::max(1.0, hv.norm()), k);
  }
  return finish(name, worst, o.tolerance);
}

ProblemCheck check_lanes(const Problem& p, const Mat& W, double tolerance) {
  const char* name = "lanes";
  const Index K = W.cols();
  if (W.rows() != p.dim())
    return shape_failure(name, tolerance, -1,
                         fmt::format("lanes have {} rows; the problem has {} parameters", W.rows(), p.dim()));
  const Evaluation all = evaluate(p, W);
  if (all.cost.size() != K || all.grad.rows() != p.dim() || all.grad.cols() != K ||
      (p.has_exact_gap() && all.gap.size() != K))
    return shape_failure(name, tolerance, -1,
                         fmt::format("evaluate() of {} lanes returned {} costs, a {} x {} gradient and {} gaps; "
                                     "expected {}, {} x {} and {}",
                                     K, all.cost.size(), all.grad.rows(), all.grad.cols(), all.gap.size(), K,
                                     p.dim(), K, p.has_exact_gap() ? K : all.gap.size()));
  Worst worst;
  for (Index k = 0; k < K; ++k) {
    const Evaluation one = evaluate(p, W.col(k));
    if (one.cost.size() != 1 || one.grad.rows() != p.dim() || one.grad.cols() != 1 ||
        (p.has_exact_gap() && one.gap.size() != 1))
      return shape_failure(name, tolerance, k, "evaluate() of one lane returned results of the wrong shape");
    const double gd = (all.grad.col(k) - one.grad.col(0)).norm();
    double e = std::max(relative(all.cost[k], one.cost[0]), gd == 0.0 ? 0.0 : gd / one.grad.col(0).norm());
    if (p.has_exact_gap()) e = std::max(e, relative(all.gap[k], one.gap[0]));
    if (!std::isfinite(all.cost[k]) || !std::isfinite(one.cost[0]) || !all.grad.col(k).allFinite() ||
        !one.grad.allFinite())
      e = kMissing;
    worst.add(e, k);
  }
  return finish(name, worst, tolerance);
}

Mat sample_points(const Problem& p, const ProblemCheckOptions& o) {
  std::mt19937_64 rng(o.seed);
  const Index n = p.dim();
  Mat points(n, std::max<Index>(o.points, 0));
  for (Index k = 0; k < points.cols(); ++k) {
    const Vec w0 = p.start(o.seed + static_cast<std::uint64_t>(k));
    const double r = o.spread * std::max(1.0, w0.norm() / std::sqrt(static_cast<double>(n)));
    points.col(k) = w0 + r * detail::standard_normal(rng, n);
  }
  return points;
}

ProblemCheckReport check_problem(const Problem& p, const ProblemCheckOptions& o) {
  const Mat points = sample_points(p, o);
  std::mt19937_64 rng(o.seed ^ 0x9e3779b97f4a7c15ull);
  Mat directions(points.rows(), points.cols());
  for (Index k = 0; k < points.cols(); ++k) {
    const Vec w0 = p.start(o.seed + static_cast<std::uint64_t>(k));
    const double r = o.spread * std::max(1.0, w0.norm() / std::sqrt(static_cast<double>(p.dim())));
    directions.col(k) = r * detail::standard_normal(rng, p.dim());
  }
  ProblemCheckReport report;
  report.gradient = check_gradient(p, points, o.finite_differences);
  report.hessian_vector = check_hessian_vector(p, points, directions, o.finite_differences);
  report.lanes = check_lanes(p, points, o.lane_tolerance);
  return report;
}

}  // namespace stepgate
