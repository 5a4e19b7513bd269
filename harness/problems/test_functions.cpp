// Moré, Garbow & Hillstrom (1981), "Testing Unconstrained Optimization Software", ACM TOMS
// 7(1):17-41: each function is a sum of squares f(x) = Σ r_i(x)², with the published
// starting point x0 and minimiser x* (f* = 0). Numbers (#1 ...) are the paper's.
#include "stepgate/problems/test_functions.hpp"

#include <cmath>
#include <numbers>
#include <stdexcept>
#include <string>

namespace stepgate {
namespace {

/// Residuals r and Jacobian J at x; and S = Σ_i r_i ∇²r_i, the second-order part of ∇²f / 2.
struct SumOfSquares {
  std::string_view name;
  int n, m;
  std::vector<double> x0, x_star;
  void (*residuals)(const double* x, Vec& r, Mat& J);
  Mat (*curvature)(const double* x, const Vec& r);
};

const double kSqrt5 = std::sqrt(5.0), kSqrt10 = std::sqrt(10.0), kSqrt90 = std::sqrt(90.0);
constexpr double kTwoPi = 2.0 * std::numbers::pi;

// #1 Rosenbrock: r = (10(x2 − x1²), 1 − x1).
void rosenbrock(const double* x, Vec& r, Mat& J) {
  r << 10.0 * (x[1] - x[0] * x[0]), 1.0 - x[0];
  J << -20.0 * x[0], 10.0, -1.0, 0.0;
}
Mat rosenbrock_s(const double*, const Vec& r) { return Mat{{-20.0 * r[0], 0.0}, {0.0, 0.0}}; }

// #2 Freudenstein and Roth: a local minimiser (11.41..., −0.8968...) with f = 48.9842... as well.
void freudenstein_roth(const double* x, Vec& r, Mat& J) {
  const double t = x[1];
  r << -13.0 + x[0] + ((5.0 - t) * t - 2.0) * t, -29.0 + x[0] + ((t + 1.0) * t - 14.0) * t;
  J << 1.0, 10.0 * t - 3.0 * t * t - 2.0, 1.0, 3.0 * t * t + 2.0 * t - 14.0;
}
Mat freudenstein_roth_s(const double* x, const Vec& r) {
  return Mat{{0.0, 0.0}, {0.0, r[0] * (10.0 - 6.0 * x[1]) + r[1] * (6.0 * x[1] + 2.0)}};
}

// #5 Beale: r_i = y_i − x1(1 − x2^i), y = (1.5, 2.25, 2.625).
void beale(const double* x, Vec& r, Mat& J) {
  const double y[3] = {1.5, 2.25, 2.625};
  for (int i = 0; i < 3; ++i) {
    const int e = i + 1;
    r[i] = y[i] - x[0] * (1.0 - std::pow(x[1], e));
    J(i, 0) = -(1.0 - std::pow(x[1], e));
    J(i, 1) = x[0] * e * std::pow(x[1], e - 1);
  }
}
Mat beale_s(const double* x, const Vec& r) {
  Mat S = Mat::Zero(2, 2);
  for (int i = 0; i < 3; ++i) {
    const int e = i + 1;
    S(0, 1) += r[i] * e * std::pow(x[1], e - 1);
    S(1, 1) += r[i] * x[0] * e * (e - 1) * (e >= 2 ? std::pow(x[1], e - 2) : 0.0);
  }
  S(1, 0) = S(0, 1);
  return S;
}

// #7 Helical valley: θ = atan(x2/x1)/2π, + 1/2 when x1 < 0 (so θ in (−1/4, 3/4)).
double helix_angle(double x1, double x2) {
  double t = std::atan2(x2, x1) / kTwoPi;
  return t < -0.25 ? t + 1.0 : t;
}
void helical_valley(const double* x, Vec& r, Mat& J) {
  const double rho2 = x[0] * x[0] + x[1] * x[1], rho = std::sqrt(rho2);
  r << 10.0 * (x[2] - 10.0 * helix_angle(x[0], x[1])), 10.0 * (rho - 1.0), x[2];
  J << 100.0 * x[1] / (kTwoPi * rho2), -100.0 * x[0] / (kTwoPi * rho2), 10.0,
      10.0 * x[0] / rho, 10.0 * x[1] / rho, 0.0,
      0.0, 0.0, 1.0;
}
Mat helical_valley_s(const double* x, const Vec& r) {
  const double a = x[0], b = x[1], rho2 = a * a + b * b, rho = std::sqrt(rho2), rho4 = rho2 * rho2;
  // ∇²θ = (1/2π)[[2ab, b² − a²], [b² − a², −2ab]]/ρ⁴;  ∇²ρ = [[b², −ab], [−ab, a²]]/ρ³.
  const double t11 = 2.0 * a * b / (kTwoPi * rho4), t12 = (b * b - a * a) / (kTwoPi * rho4);
  const double p11 = b * b / (rho2 * rho), p12 = -a * b / (rho2 * rho), p22 = a * a / (rho2 * rho);
  Mat S = Mat::Zero(3, 3);
  S(0, 0) = -100.0 * r[0] * t11 + 10.0 * r[1] * p11;
  S(0, 1) = S(1, 0) = -100.0 * r[0] * t12 + 10.0 * r[1] * p12;
  S(1, 1) = 100.0 * r[0] * t11 + 10.0 * r[1] * p22;
  return S;
}

// #13 Powell singular: the Hessian at x* = 0 is singular.
void powell_singular(const double* x, Vec& r, Mat& J) {
  const double u = x[1] - 2.0 * x[2], v = x[0] - x[3];
  r << x[0] + 10.0 * x[1], kSqrt5 * (x[2] - x[3]), u * u, kSqrt10 * v * v;
  J << 1.0, 10.0, 0.0, 0.0,
      0.0, 0.0, kSqrt5, -kSqrt5,
      0.0, 2.0 * u, -4.0 * u, 0.0,
      2.0 * kSqrt10 * v, 0.0, 0.0, -2.0 * kSqrt10 * v;
}
Mat powell_singular_s(const double*, const Vec& r) {
  const Eigen::Vector4d a(0.0, 1.0, -2.0, 0.0), b(1.0, 0.0, 0.0, -1.0);
  return 2.0 * r[2] * a * a.transpose() + 2.0 * kSqrt10 * r[3] * b * b.transpose();
}

// #14 Wood.
void wood(const double* x, Vec& r, Mat& J) {
  r << 10.0 * (x[1] - x[0] * x[0]), 1.0 - x[0], kSqrt90 * (x[3] - x[2] * x[2]), 1.0 - x[2],
      kSqrt10 * (x[1] + x[3] - 2.0), (x[1] - x[3]) / kSqrt10;
  J.setZero();
  J(0, 0) = -20.0 * x[0];
  J(0, 1) = 10.0;
  J(1, 0) = -1.0;
  J(2, 2) = -2.0 * kSqrt90 * x[2];
  J(2, 3) = kSqrt90;
  J(3, 2) = -1.0;
  J(4, 1) = J(4, 3) = kSqrt10;
  J(5, 1) = 1.0 / kSqrt10;
  J(5, 3) = -1.0 / kSqrt10;
}
Mat wood_s(const double*, const Vec& r) {
  Mat S = Mat::Zero(4, 4);
  S(0, 0) = -20.0 * r[0];
  S(2, 2) = -2.0 * kSqrt90 * r[2];
  return S;
}

const std::vector<SumOfSquares>& table() {
  static const std::vector<SumOfSquares> t = {
      {"rosenbrock", 2, 2, {-1.2, 1.0}, {1.0, 1.0}, rosenbrock, rosenbrock_s},
      {"freudenstein_roth", 2, 2, {0.5, -2.0}, {5.0, 4.0}, freudenstein_roth, freudenstein_roth_s},
      {"beale", 2, 3, {1.0, 1.0}, {3.0, 0.5}, beale, beale_s},
      {"helical_valley", 3, 3, {-1.0, 0.0, 0.0}, {1.0, 0.0, 0.0}, helical_valley, helical_valley_s},
      {"powell_singular", 4, 4, {3.0, -1.0, 0.0, 1.0}, {0.0, 0.0, 0.0, 0.0}, powell_singular, powell_singular_s},
      {"wood", 4, 6, {-3.0, -1.0, -3.0, -1.0}, {1.0, 1.0, 1.0, 1.0}, wood, wood_s},
  };
  return t;
}

Vec to_vec(const std::vector<double>& v) { return Eigen::Map<const Vec>(v.data(), Index(v.size())); }

class TestFunction final : public Problem {
 public:
  explicit TestFunction(const SumOfSquares& f) : f_(f) {}

  std::string_view kind() const override { return "test_function"; }
  Index dim() const override { return f_.n; }
  Vec start(std::uint64_t) const override { return to_vec(f_.x0); }

  void evaluate(const Mat& W, Evaluation& out, Scratch& s) const override {
    const Index K = W.cols();
    out.cost.resize(K);
    out.grad.resize(f_.n, K);
    s.v.resize(f_.m);
    s.a.resize(f_.m, f_.n);
    for (Index k = 0; k < K; ++k) {
      f_.residuals(W.col(k).data(), s.v, s.a);
      out.cost[k] = s.v.squaredNorm();
      out.grad.col(k).noalias() = 2.0 * s.a.transpose() * s.v;
    }
    out.gap = out.cost;  // f* = 0
  }

  bool has_exact_gap() const override { return true; }

  /// ∇²f = 2 (JᵀJ + Σ r_i ∇²r_i), analytic.
  Mat hessian(const Vec& x) const override {
    Vec r(f_.m);
    Mat J(f_.m, f_.n);
    f_.residuals(x.data(), r, J);
    return 2.0 * (J.transpose() * J + f_.curvature(x.data(), r));
  }
  void hessian_vector(const Vec& x, const Vec& v, Vec& out) const override { out.noalias() = hessian(x) * v; }

  std::optional<Optimum> optimum() const override {
    return Optimum{to_vec(f_.x_star), 0.0, "published (Moré, Garbow & Hillstrom 1981)"};
  }

 private:
  const SumOfSquares& f_;
};

}  // namespace

std::vector<std::string_view> test_function_names() {
  std::vector<std::string_view> names;
  for (const SumOfSquares& f : table()) names.push_back(f.name);
  return names;
}

std::unique_ptr<Problem> make_test_function(std::string_view name) {
  for (const SumOfSquares& f : table())
    if (f.name == name) return std::make_unique<TestFunction>(f);
  std::string known;
  for (std::string_view n : test_function_names()) known += (known.empty() ? "" : ", ") + std::string(n);
  throw std::invalid_argument("unknown test function '" + std::string(name) + "' (known: " + known + ")");
}

}  // namespace stepgate
