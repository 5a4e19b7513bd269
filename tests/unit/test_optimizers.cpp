// Update rules and rate schedules of harness/optimizers/. Expected values come from the
// published rules computed by hand (literals in the comments) or from recurrences written out
// separately here; none of them reuses the code under test.
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <stdexcept>
#include <vector>

#include "stepgate/optimizers/optimizer.hpp"
#include "stepgate/core/schedule.hpp"

using namespace stepgate;
using Catch::Matchers::Contains;

namespace {

const std::vector<OptimizerKind> kAllKinds = {
    OptimizerKind::gd,      OptimizerKind::sgd,     OptimizerKind::momentum,
    OptimizerKind::nesterov, OptimizerKind::adagrad, OptimizerKind::rmsprop,
    OptimizerKind::adam};

OptimizerSpec spec_of(OptimizerKind kind) {
  OptimizerSpec s;
  s.kind = kind;
  if (kind == OptimizerKind::sgd) s.batch_size = 32;
  return s;
}

/// G = A P column by column with a fixed summation order, so that a lane gets the same bits
/// whether it is alone or in a batch (a BLAS-like product may block differently).
void quad_grad(const Mat& A, const Mat& P, Mat& G) {
  G.resize(P.rows(), P.cols());
  for (Index k = 0; k < P.cols(); ++k)
    for (Index i = 0; i < A.rows(); ++i) {
      double s = 0.0;
      for (Index j = 0; j < A.cols(); ++j) s += A(i, j) * P(j, k);
      G(i, k) = s;
    }
}

/// A fixed symmetric positive definite 7 x 7 matrix (strictly diagonally dominant).
Mat test_matrix() {
  Mat A(7, 7);
  for (Index i = 0; i < 7; ++i)
    for (Index j = 0; j < 7; ++j) A(i, j) = i == j ? 2.0 + 0.5 * i : 0.1 / (1.0 + i + j);
  return A;
}

Mat start_point(Index p, Index lanes) {
  Mat P(p, lanes);
  for (Index k = 0; k < lanes; ++k)
    for (Index i = 0; i < p; ++i) P(i, k) = std::sin(1.0 + i + 0.3 * k) * (1.0 + 0.1 * i);
  return P;
}

Vec one(double x) { return Vec::Constant(1, x); }

}  // namespace

// ---------------------------------------------------------------------------------------------
// Adam: Kingma & Ba (2015), "Adam: A method for stochastic optimization", Algorithm 1.

TEST_CASE("adam: first three steps on f(x) = (x-3)^2/2 match Algorithm 1 by hand",
          "[optimizers]") {
  // α = 0.1, β1 = 0.9, β2 = 0.999, ε = 1e-8 (the defaults of Algorithm 1), x0 = 0, g = x − 3.
  // t=1: g0 = −3
  //   m1 = 0.1·(−3) = −0.3;  v1 = 0.001·9 = 0.009
  //   m̂1 = −0.3/(1 − 0.9) = −3;  v̂1 = 0.009/(1 − 0.999) = 9
  //   x1 = 0 − 0.1·(−3)/(3 + 1e-8) = 0.099999999666666668   (|Δ| ≈ α, sect. 2.1)
  // t=2: g1 = x1 − 3 = −2.9000000003333333
  //   m2 = 0.9·(−0.3) + 0.1·g1 = −0.56000000003333333
  //   v2 = 0.999·0.009 + 0.001·g1² = 0.017401000001933333
  //   m̂2 = m2/(1 − 0.81) = m2/0.19 = −2.9473684212280702
  //   v̂2 = v2/(1 − 0.998001) = v2/0.001999 = 8.7048524271802568
  //   x2 = x1 + 0.1·2.9473684212280702/(√8.7048524271802568 + 1e-8) = 0.19989729224944884
  // t=3: g2 = x2 − 3 = −2.8001027077505512
  //   m3 = 0.9·m2 + 0.1·g2 = −0.78401027080505512
  //   v3 = 0.999·v2 + 0.001·g2² = 0.025224174175883368
  //   m̂3 = m3/0.271 = −2.8930268295389488;  v̂3 = v3/0.002997001 = 8.4164717248620766
  //   x3 = x2 − 0.1·m̂3/(√v̂3 + 1e-8) = 0.29961847604217640
  const double expected[] = {0.099999999666666668, 0.19989729224944884, 0.29961847604217640};
  auto opt = make_optimizer(spec_of(OptimizerKind::adam));
  opt->reset(1, 1);
  Mat P = Mat::Zero(1, 1), G(1, 1);
  for (double x_expected : expected) {
    G(0, 0) = P(0, 0) - 3.0;
    opt->step(P, G, one(0.1));
    CHECK(P(0, 0) == Approx(x_expected).epsilon(1e-13));
  }
}

TEST_CASE("adam: first three steps in 2-D with gradient scales 1e4 apart match Algorithm 1",
          "[optimizers]") {
  // f(x) = ½·100·(x_a − 1)² + ½·0.01·(x_b − 1)², x0 = (0, 0), α = 0.1, default β1, β2, ε.
  // t=1: g0 = (−100, −0.01)
  //   m1 = (−10, −0.001);  v1 = (10, 1e-7);  m̂1 = (−100, −0.01);  v̂1 = (10000, 1e-4)
  //   x1 = (0.1·100/(100 + 1e-8), 0.1·0.01/(0.01 + 1e-8))
  //      = (0.099999999990000000, 0.099999900000100000)   both ≈ α despite the scales
  // t=2: g1 = (−90.000000001, −0.009000000999999)
  //   m2 = (−18.0000000001, −0.0018000000999999);  v2 = (18.09000000018, 1.80900017999983e-7)
  //   m̂2 = m2/0.19 = (−94.736842105789474, −0.0094736847368415789)
  //   v̂2 = v2/0.001999 = (9049.5247624712356, 9.0495256628305653e-5)
  //   x2 = (0.19958777230834221, 0.19958756821991462)
  // t=3: g2 = (−80.041222769165779, −0.0080041243178008538)
  //   m3 = (−24.204122277006578, −0.0024204125217799954)
  //   v3 = (24.478507342563042, 2.4478512407679400e-7)
  //   m̂3 = m3/0.271 = (−89.314104343197705, −0.0089314115194833778)
  //   v̂3 = v3/0.002997001 = (8167.6673923575743, 8.1676690824191917e-5)
  //   x3 = (0.29841372858118745, 0.29841341693575787)
  const double expected[3][2] = {{0.099999999990000000, 0.099999900000100000},
                                 {0.19958777230834221, 0.19958756821991462},
                                 {0.29841372858118745, 0.29841341693575787}};
  auto opt = make_optimizer(spec_of(OptimizerKind::adam));
  opt->reset(2, 1);
  Mat P = Mat::Zero(2, 1), G(2, 1);
  for (const auto& x : expected) {
    G(0, 0) = 100.0 * (P(0, 0) - 1.0);
    G(1, 0) = 0.01 * (P(1, 0) - 1.0);
    opt->step(P, G, one(0.1));
    CHECK(P(0, 0) == Approx(x[0]).epsilon(1e-13));
    CHECK(P(1, 0) == Approx(x[1]).epsilon(1e-12));
  }
}

TEST_CASE("adam: the first step moves every coordinate by almost exactly alpha*sign(g)",
          "[optimizers]") {
  // Kingma & Ba (2015), sect. 2.1: at t = 1, m̂1/√v̂1 = g/|g|, so Δ = α·g/(|g| + ε).
  // For |g| >= 1e-2 and ε = 1e-8 that is α within a relative 1e-6, whatever the scale of g.
  const Index p = 9, K = 3;
  Mat G(p, K);
  for (Index k = 0; k < K; ++k)
    for (Index i = 0; i < p; ++i) G(i, k) = (i % 2 ? -1.0 : 1.0) * std::pow(10.0, i - 2.0 + k);
  const Vec rates = (Vec(K) << 0.1, 0.01, 1.0).finished();
  auto opt = make_optimizer(spec_of(OptimizerKind::adam));
  opt->reset(p, K);
  Mat P = Mat::Zero(p, K);
  opt->step(P, G, rates);
  for (Index k = 0; k < K; ++k)
    for (Index i = 0; i < p; ++i) {
      CHECK(std::signbit(P(i, k)) != std::signbit(G(i, k)));
      CHECK(std::abs(P(i, k)) == Approx(rates(k)).epsilon(1e-6));
      CHECK(std::abs(P(i, k)) < rates(k));
    }
}

// ---------------------------------------------------------------------------------------------
// Gradient descent and heavy ball on f(x) = λ x²/2, g = λ x.

TEST_CASE("gd on lambda*x^2/2: x_{k+1} = (1 - alpha*lambda) x_k", "[optimizers]") {
  // x_{k+1} = x_k − α λ x_k = (1 − αλ) x_k, so x_k = (1 − αλ)^k x_0.
  SECTION("dyadic numbers: exact bits") {
    // λ = 2, α = 0.25: αλx = x/2 exactly, so x_k = 0.5^k with no rounding at all.
    auto opt = make_optimizer(spec_of(OptimizerKind::gd));
    opt->reset(1, 1);
    Mat P = Mat::Constant(1, 1, 1.0), G(1, 1);
    for (int k = 1; k <= 30; ++k) {
      G(0, 0) = 2.0 * P(0, 0);
      opt->step(P, G, one(0.25));
      REQUIRE(P(0, 0) == std::ldexp(1.0, -k));
    }
  }
  SECTION("three lanes, contracting, oscillating and diverging") {
    // λ = 3, α = (0.1, 0.5, 0.7): factors 0.7, −0.5, −1.1.
    const double lambda = 3.0;
    const Vec rates = (Vec(3) << 0.1, 0.5, 0.7).finished();
    auto opt = make_optimizer(spec_of(OptimizerKind::sgd));
    opt->reset(1, 3);
    Mat P = Mat::Constant(1, 3, 1.5), G(1, 3);
    for (int k = 1; k <= 40; ++k) {
      G = lambda * P;
      opt->step(P, G, rates);
      for (Index l = 0; l < 3; ++l)
        CHECK(P(0, l) == Approx(1.5 * std::pow(1.0 - rates(l) * lambda, k)).epsilon(1e-13));
    }
  }
}

TEST_CASE("momentum matches Polyak's two-term recurrence on lambda*x^2/2", "[optimizers]") {
  // Polyak (1964): x_{k+1} = x_k − α λ x_k + β (x_k − x_{k−1}), x_{−1} = x_0 (zero velocity).
  const double lambda = 4.0, beta = 0.9;
  // Up to 0.9, just below the heavy-ball limit 2(1 + β)/λ = 0.95, so the last lane rings.
  const Vec rates = (Vec(3) << 0.05, 0.4, 0.9).finished();
  OptimizerSpec spec = spec_of(OptimizerKind::momentum);
  spec.beta = beta;
  auto opt = make_optimizer(spec);
  opt->reset(1, 3);
  Mat P = Mat::Constant(1, 3, -2.0), G(1, 3);
  std::vector<double> x(3, -2.0), x_prev(3, -2.0);
  for (int k = 0; k < 60; ++k) {
    G = lambda * P;
    opt->step(P, G, rates);
    for (Index l = 0; l < 3; ++l) {
      const double next = x[l] - rates(l) * lambda * x[l] + beta * (x[l] - x_prev[l]);
      x_prev[l] = x[l];
      x[l] = next;
      CHECK(P(0, l) == Approx(x[l]).epsilon(1e-12).margin(1e-14));
    }
  }
}

// ---------------------------------------------------------------------------------------------
// Nesterov: Bengio, Boulanger-Lewandowski & Pascanu (2013) eq. (7)/(8) against
// Sutskever, Martens, Dahl & Hinton (2013), "On the importance of initialization and momentum
// in deep learning", written out by hand.

TEST_CASE("nesterov look-ahead form equals Sutskever et al. shifted by beta*v", "[optimizers]") {
  // f(x) = ½ xᵀAx, A = [[3, 1], [1, 2]] (eigenvalues (5 ± √5)/2), x0 = (1, −1), β = 0.9.
  // Sutskever: v_{t+1} = β v_t − α A(x_t + β v_t), x_{t+1} = x_t + v_{t+1};
  // the optimizer holds Θ_t = x_t + β v_t. Three lanes with different rates, all below the
  // stability limit (2 + 2β)/((1 + 2β)L) ≈ 0.375.
  const double beta = 0.9;
  const double A[2][2] = {{3.0, 1.0}, {1.0, 2.0}};
  const Vec rates = (Vec(3) << 0.05, 0.1, 0.2).finished();
  OptimizerSpec spec = spec_of(OptimizerKind::nesterov);
  spec.beta = beta;
  auto opt = make_optimizer(spec);
  opt->reset(2, 3);
  Mat P(2, 3), G(2, 3);
  P.row(0).setConstant(1.0);
  P.row(1).setConstant(-1.0);
  double x[3][2], v[3][2];
  for (int l = 0; l < 3; ++l) x[l][0] = 1.0, x[l][1] = -1.0, v[l][0] = v[l][1] = 0.0;
  for (int t = 0; t < 200; ++t) {
    for (Index l = 0; l < 3; ++l) {
      G(0, l) = A[0][0] * P(0, l) + A[0][1] * P(1, l);
      G(1, l) = A[1][0] * P(0, l) + A[1][1] * P(1, l);
    }
    opt->step(P, G, rates);
    for (int l = 0; l < 3; ++l) {
      const double y0 = x[l][0] + beta * v[l][0], y1 = x[l][1] + beta * v[l][1];
      const double g0 = A[0][0] * y0 + A[0][1] * y1, g1 = A[1][0] * y0 + A[1][1] * y1;
      v[l][0] = beta * v[l][0] - rates(l) * g0;
      v[l][1] = beta * v[l][1] - rates(l) * g1;
      x[l][0] += v[l][0];
      x[l][1] += v[l][1];
      CHECK(std::abs(P(0, l) - (x[l][0] + beta * v[l][0])) < 1e-12);
      CHECK(std::abs(P(1, l) - (x[l][1] + beta * v[l][1])) < 1e-12);
    }
  }
  // And it did converge (so the comparison above was not of two blow-ups).
  CHECK(P.cwiseAbs().maxCoeff() < 1e-6);
}

// ---------------------------------------------------------------------------------------------
// AdaGrad and RMSProp, two steps by hand on f(x) = ½(2 x_a² + 0.5 x_b²), x0 = (1, −2),
// α = 0.1, ε = 1e-8; g = (2 x_a, 0.5 x_b).

// Two steps from x = (1, −2) on J = x₀² + x₁²/4 (g = (2x₀, x₁/2)) at α = 0.1, each
// coordinate checked against the values worked out by hand beside the test.
static void two_steps_by_hand(OptimizerKind kind, const double (&expected)[2][2]) {
  auto opt = make_optimizer(spec_of(kind));
  opt->reset(2, 1);
  Mat P = (Mat(2, 1) << 1.0, -2.0).finished(), G(2, 1);
  for (const auto& x : expected) {
    G << 2.0 * P(0, 0), 0.5 * P(1, 0);
    opt->step(P, G, one(0.1));
    CHECK(P(0, 0) == Approx(x[0]).epsilon(1e-14));
    CHECK(P(1, 0) == Approx(x[1]).epsilon(1e-14));
  }
}

TEST_CASE("adagrad: two steps by hand", "[optimizers]") {
  // Duchi, Hazan & Singer (2011), diagonal AdaGrad: S += g²; x −= α g/(√S + ε).
  // step 1: g0 = (2, −1); S1 = (4, 1); x1 = (1 − 0.2/(2 + 1e-8), −2 + 0.1/(1 + 1e-8))
  //         = (0.90000000050000000, −1.9000000010000000)
  // step 2: g1 = (1.800000001, −0.9500000005); S2 = (7.2400000036, 1.90250000095)
  //         x2 = x1 − 0.1·g1/(√S2 + 1e-8) = (0.83310352756584083, −1.8311250552888198)
  const double expected[2][2] = {{0.90000000050000000, -1.9000000010000000},
                                 {0.83310352756584083, -1.8311250552888198}};
  two_steps_by_hand(OptimizerKind::adagrad, expected);
}

TEST_CASE("rmsprop: two steps by hand", "[optimizers]") {
  // Tieleman & Hinton (2012): S = ρ S + (1 − ρ) g²; x −= α g/(√S + ε), ρ = 0.9.
  // step 1: g0 = (2, −1); S1 = 0.1·g0² = (0.4, 0.1); √S1 = (0.63245553203367587,
  //         0.31622776601683793); each coordinate moves by α/√(1 − ρ) = 0.316227766...:
  //         x1 = (0.68377223898316199, −1.6837722439831618)
  // step 2: g1 = (1.3675444779663240, −0.84188612199158088)
  //         S2 = 0.9·S1 + 0.1·g1² = (0.54701778992161856, 0.16087722424020230)
  //         √S2 = (0.73960651019418329, 0.40109503143295393)
  //         x2 = (0.49887061350705397, −1.4738753280342997)
  const double expected[2][2] = {{0.68377223898316199, -1.6837722439831618},
                                 {0.49887061350705397, -1.4738753280342997}};
  two_steps_by_hand(OptimizerKind::rmsprop, expected);
}

// ---------------------------------------------------------------------------------------------
// Lanes: a batch is K independent runs.

TEST_CASE("lanes: K=4 lanes with different rates equal each lane run alone, bit for bit",
          "[optimizers]") {
  const Mat A = test_matrix();
  const Index p = A.rows(), K = 4;  // p = 7: odd, so vectorised and scalar tails both occur
  const Vec rates = (Vec(K) << 0.01, 0.05, 0.1, 0.3).finished();
  for (OptimizerKind kind : kAllKinds) {
    CAPTURE(to_string(kind));
    auto batch = make_optimizer(spec_of(kind));
    batch->reset(p, K);
    Mat P = start_point(p, K), G;
    for (int t = 0; t < 25; ++t) {
      quad_grad(A, P, G);
      batch->step(P, G, rates);
    }
    for (Index k = 0; k < K; ++k) {
      auto alone = make_optimizer(spec_of(kind));
      alone->reset(p, 1);
      Mat x = start_point(p, K).col(k), g;
      for (int t = 0; t < 25; ++t) {
        quad_grad(A, x, g);
        alone->step(x, g, one(rates(k)));
      }
      CHECK((P.col(k) - x.col(0)).cwiseAbs().maxCoeff() == 0.0);
    }
  }
}

TEST_CASE("lanes: keep_lanes then continuing equals the uncompacted lanes continuing",
          "[optimizers]") {
  const Mat A = test_matrix();
  const Index p = A.rows(), K = 5;
  const Vec rates = (Vec(K) << 0.01, 0.02, 0.05, 0.1, 0.2).finished();
  const std::vector<Index> keep = {0, 2, 3};
  for (OptimizerKind kind : kAllKinds) {
    CAPTURE(to_string(kind));
    auto full = make_optimizer(spec_of(kind));
    auto compact = make_optimizer(spec_of(kind));
    full->reset(p, K);
    compact->reset(p, K);
    Mat Pf = start_point(p, K), Pc = Pf, Gf, Gc;
    for (int t = 0; t < 6; ++t) {
      quad_grad(A, Pf, Gf);
      full->step(Pf, Gf, rates);
      quad_grad(A, Pc, Gc);
      compact->step(Pc, Gc, rates);
    }
    compact->keep_lanes(keep);
    Vec rates_c(3);
    Mat Pk(p, 3);
    for (Index j = 0; j < 3; ++j) {
      rates_c(j) = rates(keep[j]);
      Pk.col(j) = Pc.col(keep[j]);
    }
    for (int t = 0; t < 15; ++t) {
      quad_grad(A, Pf, Gf);
      full->step(Pf, Gf, rates);
      quad_grad(A, Pk, Gc);
      compact->step(Pk, Gc, rates_c);
    }
    for (Index j = 0; j < 3; ++j)
      CHECK((Pk.col(j) - Pf.col(keep[j])).cwiseAbs().maxCoeff() == 0.0);
    // Dropping every lane leaves a valid, empty optimizer.
    compact->keep_lanes({});
    Mat empty(p, 0), gempty(p, 0);
    CHECK_NOTHROW(compact->step(empty, gempty, Vec(0)));
  }
}

TEST_CASE("lanes: reset restarts the state, and shapes and keep indices are checked",
          "[optimizers]") {
  const Mat A = test_matrix();
  const Index p = A.rows();
  for (OptimizerKind kind : kAllKinds) {
    CAPTURE(to_string(kind));
    auto used = make_optimizer(spec_of(kind));
    auto fresh = make_optimizer(spec_of(kind));
    used->reset(p, 2);
    Mat P = start_point(p, 2), G;
    for (int t = 0; t < 5; ++t) {
      quad_grad(A, P, G);
      used->step(P, G, Vec::Constant(2, 0.1));
    }
    used->reset(p, 2);
    fresh->reset(p, 2);
    Mat Pu = start_point(p, 2), Pf = Pu;
    for (int t = 0; t < 5; ++t) {
      quad_grad(A, Pu, G);
      used->step(Pu, G, Vec::Constant(2, 0.1));
      quad_grad(A, Pf, G);
      fresh->step(Pf, G, Vec::Constant(2, 0.1));
    }
    CHECK((Pu - Pf).cwiseAbs().maxCoeff() == 0.0);

    Mat wrong = Mat::Zero(p, 3);
    CHECK_THROWS_AS(used->step(wrong, wrong, Vec::Constant(3, 0.1)), std::invalid_argument);
    CHECK_THROWS_AS(used->step(Pu, G, Vec::Constant(1, 0.1)), std::invalid_argument);
    const std::vector<Index> not_increasing = {1, 1}, out_of_range = {0, 2};
    CHECK_THROWS_AS(used->keep_lanes(not_increasing), std::invalid_argument);
    CHECK_THROWS_AS(used->keep_lanes(out_of_range), std::invalid_argument);
    auto never_reset = make_optimizer(spec_of(kind));
    CHECK_THROWS_AS(never_reset->step(Pu, G, Vec::Constant(2, 0.1)), std::invalid_argument);
  }
}

// ---------------------------------------------------------------------------------------------
// Specs: names and validation.

TEST_CASE("optimizer spec: names, parsing and validation", "[optimizers]") {
  for (OptimizerKind kind : kAllKinds) {
    CHECK(optimizer_kind_from_string(to_string(kind)) == kind);
    CHECK(spec_of(kind).name() == to_string(kind));
    CHECK(validate(spec_of(kind)).empty());
    CHECK_NOTHROW(make_optimizer(spec_of(kind)));
  }
  CHECK_FALSE(optimizer_kind_from_string("Adam").has_value());
  OptimizerSpec labelled = spec_of(OptimizerKind::momentum);
  labelled.label = "hb-0.9";
  CHECK(labelled.name() == "hb-0.9");

  struct Bad {
    const char* field;
    void (*set)(OptimizerSpec&);
  };
  const Bad bad[] = {
      {"beta", [](OptimizerSpec& s) { s.beta = 1.0; }},
      {"beta", [](OptimizerSpec& s) { s.beta = -0.1; }},
      {"beta", [](OptimizerSpec& s) { s.beta = std::nan(""); }},
      {"beta1", [](OptimizerSpec& s) { s.beta1 = 1.0; }},
      {"beta2", [](OptimizerSpec& s) { s.beta2 = 1.5; }},
      {"rho", [](OptimizerSpec& s) { s.rho = 1.0; }},
      {"eps", [](OptimizerSpec& s) { s.eps = 0.0; }},
      {"eps", [](OptimizerSpec& s) { s.eps = -1e-8; }},
      {"batch_size", [](OptimizerSpec& s) { s.batch_size = -1; }},
      {"schedule: factor", [](OptimizerSpec& s) { s.schedule.factor = 0.0; }},
  };
  for (const Bad& b : bad) {
    CAPTURE(b.field);
    OptimizerSpec s = spec_of(OptimizerKind::adam);
    b.set(s);
    const std::string message = validate(s);
    CHECK_THAT(message, Contains(b.field));
    CHECK_THROWS_WITH(make_optimizer(s), Contains(message));
    CHECK_THROWS_AS(make_optimizer(s), std::invalid_argument);
  }
  OptimizerSpec sgd_full_batch = spec_of(OptimizerKind::sgd);
  sgd_full_batch.batch_size = 0;
  CHECK_THAT(validate(sgd_full_batch), Contains("batch_size > 0"));
  CHECK_THROWS_AS(make_optimizer(sgd_full_batch), std::invalid_argument);
  OptimizerSpec sampled_full_batch = spec_of(OptimizerKind::gd);
  sampled_full_batch.sampling = BatchSampling::independent;  // batches to draw, but no batch size
  CHECK_THAT(validate(sampled_full_batch), Contains("sampling = independent applies to mini-batches"));
  sampled_full_batch.batch_size = 4;
  CHECK(validate(sampled_full_batch).empty());
  OptimizerSpec two_errors = spec_of(OptimizerKind::gd);
  two_errors.beta = 2.0;
  two_errors.eps = 0.0;
  CHECK_THAT(validate(two_errors), Contains("beta") && Contains("eps") && Contains("; "));
}

// ---------------------------------------------------------------------------------------------
// Schedules, by hand from the formulas documented in schedule.hpp.

TEST_CASE("schedules: values at a few t by hand", "[optimizers]") {
  Schedule s;
  SECTION("constant") {
    for (long t : {0L, 1L, 999L}) CHECK(s.multiplier(t, 1000) == 1.0);
  }
  SECTION("step: factor 0.5 every 10") {
    s.kind = ScheduleKind::step;
    s.factor = 0.5;
    s.every = 10;
    CHECK(s.multiplier(0, 100) == 1.0);
    CHECK(s.multiplier(9, 100) == 1.0);
    CHECK(s.multiplier(10, 100) == 0.5);
    CHECK(s.multiplier(25, 100) == 0.25);
  }
  SECTION("exponential: decay 0.01") {
    s.kind = ScheduleKind::exponential;
    s.decay = 0.01;
    CHECK(s.multiplier(0, 1000) == 1.0);
    CHECK(s.multiplier(100, 1000) == Approx(0.36787944117144233));  // e^-1
  }
  SECTION("inverse time: decay 0.1") {
    s.kind = ScheduleKind::inverse_time;
    s.decay = 0.1;
    CHECK(s.multiplier(0, 1000) == 1.0);
    CHECK(s.multiplier(10, 1000) == Approx(0.5));  // 1/(1 + 1)
    CHECK(s.multiplier(30, 1000) == Approx(0.25));
  }
  SECTION("cosine: floor 0.1 over 100 iterations") {
    s.kind = ScheduleKind::cosine;
    s.floor = 0.1;
    CHECK(s.multiplier(0, 100) == Approx(1.0));
    CHECK(s.multiplier(50, 100) == Approx(0.55));  // (1 + floor)/2
    // 0.1 + 0.9·½(1 + cos(π/4)) = 0.1 + 0.45·1.7071067811865475
    CHECK(s.multiplier(25, 100) == Approx(0.8681980515339464));
    CHECK(s.multiplier(100, 100) == Approx(0.1));
    CHECK(s.multiplier(150, 100) == Approx(0.1));  // past the horizon: stays at the floor
  }
  SECTION("warm-up 4, then cosine over the remaining 100 of a budget of 104") {
    s.kind = ScheduleKind::cosine;
    s.floor = 0.1;
    s.warmup = 4;
    CHECK(s.multiplier(0, 104) == Approx(0.25));  // 1/warmup
    CHECK(s.multiplier(1, 104) == Approx(0.5));
    CHECK(s.multiplier(3, 104) == Approx(1.0));
    CHECK(s.multiplier(4, 104) == Approx(1.0));   // the cosine's clock starts here
    CHECK(s.multiplier(54, 104) == Approx(0.55));  // base(50) over a horizon of 100
  }
  SECTION("warm-up 4, then step: the drop comes 10 iterations after warm-up") {
    s.kind = ScheduleKind::step;
    s.factor = 0.5;
    s.every = 10;
    s.warmup = 4;
    CHECK(s.multiplier(13, 1000) == 1.0);
    CHECK(s.multiplier(14, 1000) == 0.5);
  }
}

TEST_CASE("schedules: names, parsing and validate() errors", "[optimizers]") {
  for (ScheduleKind k : {ScheduleKind::constant, ScheduleKind::step, ScheduleKind::exponential,
                         ScheduleKind::inverse_time, ScheduleKind::cosine})
    CHECK(schedule_kind_from_string(to_string(k)) == k);
  CHECK_FALSE(schedule_kind_from_string("linear").has_value());
  CHECK(validate(Schedule{}).empty());

  struct Bad {
    const char* field;
    void (*set)(Schedule&);
  };
  const Bad bad[] = {
      {"factor", [](Schedule& s) { s.factor = 0.0; }},
      {"factor", [](Schedule& s) { s.factor = 1.5; }},
      {"every", [](Schedule& s) { s.every = 0; }},
      {"decay", [](Schedule& s) { s.decay = -1e-3; }},
      {"decay", [](Schedule& s) { s.decay = std::nan(""); }},
      {"floor", [](Schedule& s) { s.floor = 1.5; }},
      {"floor", [](Schedule& s) { s.floor = -0.1; }},
      {"warmup", [](Schedule& s) { s.warmup = -1; }},
  };
  for (const Bad& b : bad) {
    CAPTURE(b.field);
    Schedule s;
    b.set(s);
    CHECK_THAT(validate(s), Contains(b.field));
  }
}
