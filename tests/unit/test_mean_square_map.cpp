// The mean-square map of mini-batch SGD (analysis/mean_square_limit) against exhaustive averages
// over every possible batch, the problem's sample curvature against its own mini-batch gradient,
// the batch samplings (run/minibatch), and where the limit enters a case's theory
// (run/step_rule). The Monte-Carlo check in numpy and the measured blow-ups on open data are in
// tests/reference/test_mean_square_limit.cpp.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <numeric>
#include <random>
#include <set>
#include <vector>

#include "stepgate/analysis/mean_square_limit.hpp"
#include "stepgate/core/seed.hpp"
#include "stepgate/problems/linear_models.hpp"
#include "stepgate/problems/quadratic.hpp"
#include "stepgate/run/minibatch.hpp"
#include "stepgate/run/step_rule.hpp"

using namespace stepgate;

namespace {

Dataset regression(int n, int d, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> z;
  Dataset ds;
  ds.name = "msq";
  ds.X.resize(n, d);
  ds.y.resize(n);
  for (int i = 0; i < n; ++i) {
    ds.y[i] = 0.5;
    for (int j = 0; j < d; ++j) ds.X(i, j) = z(rng) * (1.0 + j) + 0.3 * j, ds.y[i] += ds.X(i, j) * (1.0 - 0.4 * j);
    ds.y[i] += 0.2 * z(rng);
  }
  for (int j = 0; j < d; ++j) ds.features.push_back("x" + std::to_string(j));
  ds.target = "y";
  ds.map = FeatureMap::identity(d);
  return ds;
}

// The same rows with 0/1 labels (above or below 0.5), for a logistic problem.
Dataset classification(int n, int d, std::uint64_t seed) {
  Dataset ds = regression(n, d, seed);
  for (Index i = 0; i < ds.y.size(); ++i) ds.y[i] = ds.y[i] > 0.5 ? 1.0 : 0.0;
  return ds;
}

// The Hessian of the problem's mini-batch gradient over `rows`, column by column: for a quadratic
// cost g_B(w + e_k) − g_B(w) = H_B e_k exactly (up to rounding).
Mat batch_hessian(const Problem& problem, std::span<const Index> rows) {
  const Index p = problem.dim();
  Mat W = Mat::Zero(p, p + 1);
  for (Index k = 0; k < p; ++k) W(k, k + 1) = 1.0;
  Mat G;
  Scratch s;
  problem.gradient_rows(W, rows, G, s);
  Mat H(p, p);
  for (Index k = 0; k < p; ++k) H.col(k) = G.col(k + 1) - G.col(0);
  return 0.5 * (H + H.transpose());
}

Mat random_symmetric(Index p, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> z;
  Mat A(p, p);
  for (Index j = 0; j < p; ++j)
    for (Index i = 0; i < p; ++i) A(i, j) = z(rng);
  return A * A.transpose() + 0.5 * (A + A.transpose());  // symmetric, not PSD in general
}

// Calls f(rows) for every b-subset of 0..n-1 (in lexicographic order).
template <class F>
void each_subset(Index n, Index b, F f) {
  std::vector<bool> pick(static_cast<std::size_t>(n), false);
  std::fill(pick.begin(), pick.begin() + b, true);
  std::vector<Index> rows;
  do {
    rows.clear();
    for (Index i = 0; i < n; ++i)
      if (pick[static_cast<std::size_t>(i)]) rows.push_back(i);
    f(rows);
  } while (std::prev_permutation(pick.begin(), pick.end()));
}

// Calls f(rows) for every ordered b-tuple of 0..n-1 (repeats allowed).
template <class F>
void each_tuple(Index n, Index b, F f) {
  std::vector<Index> rows(static_cast<std::size_t>(b), 0);
  for (;;) {
    f(rows);
    std::size_t k = 0;
    while (k < rows.size() && ++rows[k] == n) rows[k++] = 0;
    if (k == rows.size()) return;
  }
}

double relative(const Mat& a, const Mat& b) { return (a - b).norm() / std::max(b.norm(), 1e-300); }

}  // namespace

TEST_CASE("mean-square map: c_b for batches without and with replacement", "[mean_square]") {
  // The variance of a mean of b draws from n values: σ²/b with replacement, σ²/b·(n − b)/(n − 1)
  // without (the finite-population correction; Cochran, "Sampling Techniques", 3rd ed., 1977,
  // Theorem 2.2, recalled from memory). The exhaustive averages below check it numerically.
  CHECK(batch_variance_factor(10, 1, BatchSampling::independent) == 1.0);
  CHECK(batch_variance_factor(10, 10, BatchSampling::independent) == 0.0);
  CHECK(batch_variance_factor(10, 4, BatchSampling::independent) == Approx(6.0 / 36.0).epsilon(1e-15));
  CHECK(batch_variance_factor(10, 4, BatchSampling::epochs) == batch_variance_factor(10, 4, BatchSampling::independent));
  CHECK(batch_variance_factor(10, 4, BatchSampling::replacement) == 0.25);
  CHECK(batch_variance_factor(10, 10, BatchSampling::replacement) == 0.1);
  CHECK(batch_variance_factor(10, 50, BatchSampling::independent) == 0.0);  // clamped to n
  CHECK(batch_variance_factor(1, 1, BatchSampling::independent) == 0.0);
  CHECK_THROWS_AS(batch_variance_factor(0, 1, BatchSampling::independent), std::invalid_argument);
}

TEST_CASE("mean-square map: sample curvature equals the problem's Hessian and its mini-batch gradient's",
          "[mean_square]") {
  const Dataset ds = regression(9, 3, 5);
  for (const bool gram : {false, true})
    for (const Reduction reduction : {Reduction::mean, Reduction::sum})
      for (const bool intercept : {false, true}) {
        LinearModelOptions opt;
        opt.l2 = 0.3;
        opt.intercept = intercept;
        opt.reduction = reduction;
        opt.gram_ratio = gram ? 1.0 : 0.0;
        const auto problem = make_least_squares(ds, opt);
        const auto c = problem->sample_curvature();
        REQUIRE(c.has_value());
        INFO("gram " << gram << " sum " << (reduction == Reduction::sum) << " intercept " << intercept);
        const Index n = c->rows.rows(), p = problem->dim();
        REQUIRE(n == 9);
        REQUIRE(c->rows.cols() == p);
        CHECK(c->ridge.head(3).isConstant(0.3));
        if (intercept) CHECK(c->ridge[3] == 0.0);
        Mat H = c->rows.transpose() * c->rows / double(n);
        H.diagonal() += c->ridge;
        CHECK(relative(H, problem->hessian(problem->start(0))) < 1e-13);
        const std::vector<Index> rows = {2, 7, 4};
        Mat HB = Mat(c->ridge.asDiagonal());
        for (Index i : rows) HB += c->rows.row(i).transpose() * c->rows.row(i) / 3.0;
        CHECK(relative(HB, batch_hessian(*problem, rows)) < 1e-12);
      }
  // Problems that are not least squares have none.
  CHECK_FALSE(make_logistic(classification(9, 3, 5), {})->sample_curvature().has_value());
  CHECK_FALSE(make_quadratic(QuadraticOptions{})->sample_curvature().has_value());
}

TEST_CASE("mean-square map: E(H_B M H_B) and T(M) equal their averages over every possible batch",
          "[mean_square]") {
  // n = 7 rows, 2 features, an intercept and a ridge: the ridge enters every H_B alike, so only
  // the data part carries variance; a mistake in where it enters shows here.
  LinearModelOptions opt;
  opt.l2 = 0.7;
  const auto problem = make_least_squares(regression(7, 2, 11), opt);
  const SampleCurvature c = *problem->sample_curvature();
  const Index n = 7, p = problem->dim();
  const Mat M = random_symmetric(p, 3);
  const double eta = 0.05;
  const Mat I = Mat::Identity(p, p);
  for (Index b = 1; b <= n; ++b) {
    INFO("b = " << b);
    Mat expect_b = Mat::Zero(p, p), expect_t = Mat::Zero(p, p);
    long count = 0;
    each_subset(n, b, [&](const std::vector<Index>& rows) {
      const Mat HB = batch_hessian(*problem, rows);
      expect_b += HB * M * HB;
      expect_t += (I - eta * HB) * M * (I - eta * HB);
      ++count;
    });
    SecondMomentMap map(c, batch_variance_factor(n, b, BatchSampling::independent));
    Mat got;
    map.batch_product(M, got);
    CHECK(relative(got, expect_b / double(count)) < 1e-12);
    map.apply(eta, M, got);
    CHECK(relative(got, expect_t / double(count)) < 1e-12);
  }
  for (Index b = 1; b <= 3; ++b) {
    INFO("with replacement, b = " << b);
    Mat expect = Mat::Zero(p, p);
    long count = 0;
    each_tuple(n, b, [&](const std::vector<Index>& rows) {
      const Mat HB = batch_hessian(*problem, rows);
      expect += HB * M * HB;
      ++count;
    });
    SecondMomentMap map(c, batch_variance_factor(n, b, BatchSampling::replacement));
    Mat got;
    map.batch_product(M, got);
    CHECK(relative(got, expect / double(count)) < 1e-12);
  }
}

TEST_CASE("mean-square limit: gd's 2/lambda_max at b = n and rho(T) crossing 1 at the limit", "[mean_square]") {
  for (const double l2 : {0.0, 0.4}) {
    LinearModelOptions opt;
    opt.l2 = l2;
    const auto problem = make_least_squares(regression(40, 4, 17), opt);
    const SampleCurvature c = *problem->sample_curvature();
    const double lmax = Eigen::SelfAdjointEigenSolver<Mat>(problem->hessian(problem->start(0))).eigenvalues().maxCoeff();
    INFO("l2 = " << l2);
    const MeanSquareLimit full = mean_square_limit(c, 40, BatchSampling::independent);
    CHECK(full.variance_factor == 0.0);
    CHECK(full.rate == Approx(2.0 / lmax).epsilon(1e-10));
    CHECK(full.lambda_max == Approx(lmax).epsilon(1e-12));
    // With replacement even b = n has variance (c_b = 1/n): a lower limit.
    CHECK(mean_square_limit(c, 40, BatchSampling::replacement).rate < full.rate * (1.0 - 1e-3));
    double previous = 0.0;
    for (const Index b : {1, 2, 4, 8, 16, 32}) {
      const MeanSquareLimit lim = mean_square_limit(c, b, BatchSampling::independent);
      INFO("b = " << b << ": limit " << lim.rate << " after " << lim.iterations << " iterations");
      CHECK(lim.converged);
      CHECK(lim.rate > previous);      // more rows per batch, less variance, a larger limit
      CHECK(lim.rate <= full.rate * (1.0 + 1e-12));  // never above gd's
      previous = lim.rate;
      // The definition: the largest rate with ρ(T) < 1, here checked with ρ(T) itself.
      SecondMomentMap map(c, lim.variance_factor);
      CHECK(map.radius(lim.rate * 0.999) < 1.0);
      CHECK(map.radius(lim.rate * 1.001) > 1.0);
      CHECK(map.radius(lim.rate) == Approx(1.0).epsilon(1e-6));
    }
  }
}

TEST_CASE("mean-square map: bad input is refused", "[mean_square]") {
  SampleCurvature c;
  c.rows = Mat::Ones(3, 2);
  c.ridge = Vec::Zero(3);
  CHECK_THROWS_AS(SecondMomentMap(c, 0.5), std::invalid_argument);
  c.ridge = Vec::Constant(2, -1.0);
  CHECK_THROWS_AS(SecondMomentMap(c, 0.5), std::invalid_argument);
  c.ridge = Vec::Zero(2);
  CHECK_THROWS_AS(SecondMomentMap(c, 1.5), std::invalid_argument);
  c.rows(0, 0) = std::nan("");
  CHECK_THROWS_AS(SecondMomentMap(c, 0.5), std::invalid_argument);
  // A singular H (two equal columns): the null direction is left out, the limit is that of the rest.
  c.rows = Mat::Ones(3, 2);
  c.rows(1, 0) = c.rows(1, 1) = 2.0;
  const MeanSquareLimit lim = mean_square_limit(c, 3, BatchSampling::independent);
  CHECK(lim.rate == Approx(2.0 / lim.lambda_max).epsilon(1e-10));
}

TEST_CASE("mini-batches: independent sampling draws uniform subsets independently of earlier steps", "[batch]") {
  const Index n = 10, b = 3;
  MiniBatches batches(n, b, 77, BatchSampling::independent);
  MiniBatches again(n, b, 77, BatchSampling::independent);
  const int steps = 30000;
  std::vector<double> single(n, 0.0), pair(n * n, 0.0);
  double overlap = 0.0;
  std::set<Index> previous;
  for (int t = 0; t < steps; ++t) {
    const auto rows = batches.next();
    const auto same = again.next();
    REQUIRE(rows.size() == std::size_t(b));
    REQUIRE(std::equal(rows.begin(), rows.end(), same.begin()));  // the seed fixes every draw
    const std::set<Index> set(rows.begin(), rows.end());
    REQUIRE(set.size() == std::size_t(b));  // distinct rows
    for (Index i : set) {
      single[i] += 1.0;
      overlap += previous.count(i);
      for (Index j : set) pair[i * n + j] += 1.0;
    }
    previous = set;
  }
  // Each row with probability b/n, each pair b(b−1)/(n(n−1)); consecutive batches share b²/n
  // rows on average (independent steps), where epochs of disjoint batches share far fewer.
  // Bounds: 5 binomial standard deviations.
  for (Index i = 0; i < n; ++i) {
    const double p = double(b) / n, sd = std::sqrt(steps * p * (1 - p));
    CHECK(std::abs(single[i] - steps * p) < 5 * sd);
    for (Index j = 0; j < n; ++j) {
      if (i == j) continue;
      const double q = double(b * (b - 1)) / double(n * (n - 1)), sdq = std::sqrt(steps * q * (1 - q));
      CHECK(std::abs(pair[i * n + j] - steps * q) < 5 * sdq);
    }
  }
  const double mean_overlap = overlap / (steps - 1);
  CHECK(mean_overlap == Approx(double(b * b) / n).epsilon(0.03));
  MiniBatches other(n, b, 78, BatchSampling::independent);
  MiniBatches first(n, b, 77, BatchSampling::independent);
  bool differs = false;
  for (int t = 0; t < 10; ++t) {
    const auto x = first.next();
    const std::vector<Index> a(x.begin(), x.end());
    const auto y = other.next();
    differs = differs || !std::equal(a.begin(), a.end(), y.begin());
  }
  CHECK(differs);
}

TEST_CASE("mini-batches: sampling with replacement repeats rows as often as chance says", "[batch]") {
  const Index n = 10, b = 3;
  MiniBatches batches(n, b, 5, BatchSampling::replacement);
  const int steps = 30000;
  int all_distinct = 0;
  std::vector<double> count(n, 0.0);
  for (int t = 0; t < steps; ++t) {
    const auto rows = batches.next();
    REQUIRE(rows.size() == std::size_t(b));
    for (Index i : rows) {
      REQUIRE((i >= 0 && i < n));
      count[i] += 1.0;
    }
    all_distinct += std::set<Index>(rows.begin(), rows.end()).size() == std::size_t(b);
  }
  const double p = 10.0 * 9.0 * 8.0 / 1000.0;  // P(3 draws from 10 distinct) = 0.72
  CHECK(std::abs(all_distinct - steps * p) < 5 * std::sqrt(steps * p * (1 - p)));
  for (double c : count) CHECK(std::abs(c - steps * 0.3) < 5 * std::sqrt(steps * 3 * 0.1 * 0.9));
}

TEST_CASE("mini-batches: epochs draw the same batches as before sampling was a setting", "[batch]") {
  // The epochs sampling as it was written before the setting existed (commit 854da3c): per epoch a
  // Fisher–Yates shuffle of 0..n-1 from derive_seed({seed, "epoch", epoch}), swaps i <-> r % (i+1)
  // with r drawn by rejection below the largest multiple of i + 1, cut into consecutive batches.
  const Index n = 11, b = 4;
  const std::uint64_t seed = 4242;
  std::vector<Index> expect;
  for (std::uint64_t epoch = 0; epoch < 4; ++epoch) {
    std::vector<Index> order(n);
    std::iota(order.begin(), order.end(), Index{0});
    std::mt19937_64 rng(derive_seed({seed, std::string_view("epoch"), epoch}));
    for (Index i = n - 1; i > 0; --i) {
      const std::uint64_t bound = static_cast<std::uint64_t>(i) + 1;
      const std::uint64_t limit = UINT64_MAX - UINT64_MAX % bound;
      std::uint64_t r;
      do r = rng(); while (r >= limit);
      std::swap(order[i], order[static_cast<Index>(r % bound)]);
    }
    expect.insert(expect.end(), order.begin(), order.end());
  }
  MiniBatches batches(n, b, seed);  // the default
  std::vector<Index> got;
  for (int k = 0; k < 4 * batches.batches_per_epoch(); ++k) {
    const auto rows = batches.next();
    got.insert(got.end(), rows.begin(), rows.end());
  }
  CHECK(got == expect);
}

TEST_CASE("theory: sgd on least squares gets the mean-square limit and other cases keep theirs", "[mean_square]") {
  const auto problem = make_least_squares(regression(60, 3, 23), {});
  OptimizerSpec sgd;
  sgd.kind = OptimizerKind::sgd;
  sgd.batch_size = 8;
  sgd.sampling = BatchSampling::independent;
  const Vec start = problem->start(1);
  const Theory t = case_theory(*problem, sgd, start);
  const MeanSquareLimit lim = mean_square_limit(*problem->sample_curvature(), 8, BatchSampling::independent);
  CHECK(t.predicted_blowup == lim.rate);
  CHECK(t.threshold == "mean_square");
  CHECK_THAT(t.rule, Catch::Contains("b=8") && Catch::Contains("c_b=(n-b)/(b(n-1))") && Catch::Contains("independent"));
  CHECK_THAT(t.method, Catch::Contains("power iteration"));
  sgd.sampling = BatchSampling::replacement;
  const Theory r = case_theory(*problem, sgd, start);
  CHECK_THAT(r.rule, Catch::Contains("c_b=1/b") && Catch::Contains("replacement"));
  CHECK(r.predicted_blowup < t.predicted_blowup);
  sgd.sampling = BatchSampling::epochs;  // the approximation, said so
  const Theory e = case_theory(*problem, sgd, start);
  CHECK(e.predicted_blowup == t.predicted_blowup);
  CHECK_THAT(e.rule, Catch::Contains("epochs taken as independent"));
  CHECK_THAT(e.method, Catch::Contains("approximation"));
  // gd with a batch size is the same update: the same limit.
  OptimizerSpec gd_batch = sgd;
  gd_batch.kind = OptimizerKind::gd;
  CHECK(case_theory(*problem, gd_batch, start).predicted_blowup == e.predicted_blowup);
  // gd full batch: unchanged (2/L, quadratic).
  const Theory gd = case_theory(*problem, OptimizerSpec{}, start);
  CHECK(gd.rule == "2/L");
  CHECK(gd.threshold == "quadratic");
  CHECK(gd.predicted_blowup == Approx(2.0 / gd.L).epsilon(1e-15));
  CHECK(gd.method.empty());
  // No limit: momentum with batches, a schedule, a logistic loss, or the optimum skipped.
  OptimizerSpec momentum = sgd;
  momentum.kind = OptimizerKind::momentum;
  CHECK(std::isnan(case_theory(*problem, momentum, start).predicted_blowup));
  OptimizerSpec cosine = sgd;
  cosine.schedule.kind = ScheduleKind::cosine;
  CHECK(std::isnan(case_theory(*problem, cosine, start).predicted_blowup));
  CHECK(std::isnan(case_theory(*problem, sgd, start, {}, false).predicted_blowup));
  const auto logit = make_logistic(classification(60, 3, 23), {});
  const Theory lt = case_theory(*logit, sgd, logit->start(1));
  CHECK(std::isnan(lt.predicted_blowup));
  CHECK(lt.threshold.empty());
}
