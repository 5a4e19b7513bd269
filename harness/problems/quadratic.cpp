// J(w) = ½ (w − w*)ᵀ A (w − w*), A = Q Λ Qᵀ with Q Haar-random orthogonal.
#include "stepgate/problems/quadratic.hpp"

#include <algorithm>
#include <cmath>
#include <random>
#include <stdexcept>

#include "stepgate/core/seed.hpp"
#include "stepgate/problems/normal_draws.hpp"

namespace stepgate {
namespace {

/// Eigenvalues in ascending order with λ_min = L/κ and λ_max = L exactly.
Vec make_spectrum(const QuadraticOptions& o, std::mt19937_64& rng) {
  const Index d = o.dim;
  const double mu = o.L / o.condition;
  Vec lambda(d);
  if (d == 1) {
    lambda[0] = o.L;
    return lambda;
  }
  switch (o.spectrum) {
    case Spectrum::linear:
      for (Index i = 0; i < d; ++i) lambda[i] = mu + (o.L - mu) * double(i) / double(d - 1);
      break;
    case Spectrum::log_uniform: {
      const double lo = std::log(mu), hi = std::log(o.L);
      for (Index i = 1; i + 1 < d; ++i) lambda[i] = std::exp(lo + (hi - lo) * detail::open_unit(rng));
      break;
    }
    case Spectrum::two_clusters: {
      const Index low = d / 2;
      for (Index i = 1; i + 1 < d; ++i) {
        const double u = detail::open_unit(rng);
        lambda[i] = i < low ? mu * (1.0 + u) : o.L * (0.5 + 0.5 * u);
      }
      break;
    }
  }
  lambda[0] = mu;
  lambda[d - 1] = o.L;
  std::sort(lambda.begin(), lambda.end());
  return lambda;
}

/// Haar-distributed orthogonal matrix: QR of a Gaussian matrix, with the columns' signs fixed
/// so that R has a positive diagonal (Mezzadri 2007, "How to generate random matrices from the
/// classical compact groups", Notices AMS 54(5)); without the fix Q is not uniform.
Mat haar_orthogonal(Index d, std::mt19937_64& rng) {
  Mat G(d, d);
  G.reshaped() = detail::standard_normal(rng, d * d);
  Eigen::HouseholderQR<Mat> qr(G);
  Mat Q = qr.householderQ();
  for (Index j = 0; j < d; ++j)
    if (qr.matrixQR()(j, j) < 0.0) Q.col(j) = -Q.col(j);
  return Q;
}

class Quadratic final : public Problem {
 public:
  explicit Quadratic(const QuadraticOptions& o) : opt_(o) {
    if (o.dim < 1) throw std::invalid_argument("quadratic: dim must be >= 1");
    if (!(o.L > 0.0) || !std::isfinite(o.L)) throw std::invalid_argument("quadratic: L must be finite and > 0");
    if (!(o.condition >= 1.0) || !std::isfinite(o.condition))
      throw std::invalid_argument("quadratic: condition must be finite and >= 1");
    if (o.dim == 1 && o.condition != 1.0)
      throw std::invalid_argument("quadratic: dim 1 has one eigenvalue, so condition must be 1");
    if (!(o.start_radius >= 0.0)) throw std::invalid_argument("quadratic: start_radius must be >= 0");
    // Independent streams for Q, the spectrum and w*, so that changing one option (e.g. the
    // spectrum shape) leaves the others' draws alone.
    std::mt19937_64 rng_q(derive_seed({std::string_view("quadratic.Q"), o.seed}));
    std::mt19937_64 rng_l(derive_seed({std::string_view("quadratic.spectrum"), o.seed}));
    std::mt19937_64 rng_w(derive_seed({std::string_view("quadratic.w_star"), o.seed}));
    lambda_ = make_spectrum(o, rng_l);
    const Mat Q = haar_orthogonal(o.dim, rng_q);
    A_.noalias() = Q * lambda_.asDiagonal() * Q.transpose();
    A_ = (0.5 * (A_ + A_.transpose())).eval();  // exactly symmetric
    w_star_ = detail::standard_normal(rng_w, o.dim);
  }

  std::string_view kind() const override { return "quadratic"; }
  Index dim() const override { return opt_.dim; }

  Vec start(std::uint64_t seed) const override {
    std::mt19937_64 rng(seed);
    Vec u = detail::standard_normal(rng, opt_.dim);
    u.normalize();
    return w_star_ + opt_.start_radius * u;
  }

  void evaluate(const Mat& W, Evaluation& out, Scratch& s) const override {
    const Index K = W.cols();
    s.a.resize(opt_.dim, K);
    s.a = W.colwise() - w_star_;
    out.grad.resize(opt_.dim, K);
    out.grad.noalias() = A_ * s.a;
    out.cost = 0.5 * s.a.cwiseProduct(out.grad).colwise().sum().transpose();
    out.gap = out.cost;  // J* = 0
  }

  bool has_exact_gap() const override { return true; }
  void hessian_vector(const Vec&, const Vec& v, Vec& out) const override { out.noalias() = A_ * v; }
  Mat hessian(const Vec&) const override { return A_; }
  std::optional<Optimum> optimum() const override { return Optimum{w_star_, 0.0, "exact"}; }
  double smoothness_bound() const override { return opt_.L; }
  // λ_max of the rounded A_ is within p·ε·L of the drawn spectrum's largest value (Weyl).
  double quadratic_curvature_bound() const override {
    return lambda_.maxCoeff() * (1.0 + 1e-10);
  }

 private:
  QuadraticOptions opt_;
  Vec lambda_;
  Mat A_;
  Vec w_star_;
};

}  // namespace

std::unique_ptr<Problem> make_quadratic(const QuadraticOptions& opt) { return std::make_unique<Quadratic>(opt); }

}  // namespace stepgate
