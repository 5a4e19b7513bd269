// Row-split evaluation (problems/linear_common: sum_over_row_blocks): logistic and softmax
// split their rows into fixed chunks summed in parallel. Checked here on data of several chunks
// and a ragged last one: the sums equal the textbook formula summed plainly in long double, the
// bits do not depend on the number of threads, and a shared problem whose optimum is solved
// while other threads wait for it does not deadlock.
#include <catch2/catch.hpp>

#include <atomic>
#include <cmath>
#include <random>

#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>

#include "stepgate/data/generate.hpp"
#include "stepgate/problems/linear_common.hpp"
#include "stepgate/problems/linear_models.hpp"

using namespace stepgate;

namespace {

// 2 full chunks and a ragged third, so that a block inside the last chunk is ragged too.
const Index kRows = 2 * detail::kChunkRows + 777;

Dataset logistic_data() {
  GeneratedSpec g;
  g.kind = GeneratedSpec::logistic;
  g.rows = long(kRows);
  g.features = 6;
  g.seed = 7;
  g.intercept = 0.4;
  return generate_dataset(g, "chunks");
}

Dataset softmax_data(Index classes) {
  Dataset d = logistic_data();
  std::mt19937_64 rng(11);
  std::uniform_int_distribution<int> label(0, int(classes) - 1);
  for (Index i = 0; i < d.y.size(); ++i) d.y[i] = double(label(rng));
  return d;
}

Mat lanes(Index p, Index K, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> z(0.0, 0.7);
  Mat W(p, K);
  for (Index i = 0; i < W.size(); ++i) W.data()[i] = z(rng);
  return W;
}

Evaluation evaluate_on(const Problem& p, const Mat& W, int threads) {
  Evaluation e;
  tbb::task_arena arena(threads);
  arena.execute([&] {
    Scratch s;
    p.evaluate(W, e, s);
    p.evaluate(W, e, s);  // twice on one scratch: the second reuses its chunks
  });
  return e;
}

void check_same_bits(const Evaluation& a, const Evaluation& b) {
  REQUIRE(a.cost.size() == b.cost.size());
  for (Index k = 0; k < a.cost.size(); ++k) CHECK(a.cost[k] == b.cost[k]);
  CHECK((a.grad.array() == b.grad.array()).all());
}

double relative(const Vec& got, const Vec& want) { return (got - want).norm() / want.norm(); }

}  // namespace

TEST_CASE("logistic over several chunks of rows equals the plain sum, with the same bits on 1 and 2 threads", "[problems]") {
  const Dataset d = logistic_data();
  LinearModelOptions o;
  o.l2 = 0.01;
  const auto p = make_logistic(d, o);
  const Mat W = lanes(p->dim(), 5, 3);
  const Evaluation one = evaluate_on(*p, W, 1), two = evaluate_on(*p, W, 2);
  check_same_bits(one, two);
  // J = (1/n) Σ [log(1 + e^z) − y z] + (l2/2)‖w‖² (intercept last, not penalised), in long double.
  for (Index k = 0; k < W.cols(); ++k) {
    long double cost = 0;
    Eigen::Matrix<long double, Eigen::Dynamic, 1> g = Eigen::Matrix<long double, Eigen::Dynamic, 1>::Zero(p->dim());
    for (Index i = 0; i < d.X.rows(); ++i) {
      long double z = W(d.X.cols(), k);
      for (Index j = 0; j < d.X.cols(); ++j) z += (long double)d.X(i, j) * W(j, k);
      cost += (z > 0 ? z + std::log1p(std::exp(-z)) : std::log1p(std::exp(z))) - d.y[i] * z;
      const long double r = 1.0L / (1.0L + std::exp(-z)) - d.y[i];
      for (Index j = 0; j < d.X.cols(); ++j) g[j] += r * d.X(i, j);
      g[d.X.cols()] += r;
    }
    cost /= kRows;
    g /= kRows;
    for (Index j = 0; j < d.X.cols(); ++j) {
      cost += 0.5L * o.l2 * W(j, k) * W(j, k);
      g[j] += o.l2 * W(j, k);
    }
    CHECK(one.cost[k] == Approx(double(cost)).epsilon(1e-13));
    CHECK(relative(one.grad.col(k), g.cast<double>()) <= 1e-12);
  }
}

TEST_CASE("softmax over several chunks of rows equals the plain sum, with the same bits on 1 and 2 threads", "[problems]") {
  const Index C = 4;
  const Dataset d = softmax_data(C);
  const auto p = make_softmax(d, {}, C);
  const Index q = d.X.cols() + 1, K = 3;
  const Mat W = lanes(p->dim(), K, 5);
  const Evaluation one = evaluate_on(*p, W, 1), two = evaluate_on(*p, W, 2);
  check_same_bits(one, two);
  for (Index k = 0; k < K; ++k) {
    const auto Wk = W.col(k).reshaped(q, C);
    long double cost = 0;
    Eigen::Matrix<long double, Eigen::Dynamic, Eigen::Dynamic> g =
        Eigen::Matrix<long double, Eigen::Dynamic, Eigen::Dynamic>::Zero(q, C);
    for (Index i = 0; i < d.X.rows(); ++i) {
      long double z[C], top = -INFINITY, total = 0;
      for (Index c = 0; c < C; ++c) {
        z[c] = Wk(q - 1, c);
        for (Index j = 0; j < q - 1; ++j) z[c] += (long double)d.X(i, j) * Wk(j, c);
        top = std::max(top, z[c]);
      }
      for (Index c = 0; c < C; ++c) total += std::exp(z[c] - top);
      const Index y = Index(d.y[i]);
      cost += top + std::log(total) - z[y];
      for (Index c = 0; c < C; ++c) {
        const long double r = std::exp(z[c] - top) / total - (c == y ? 1.0L : 0.0L);
        for (Index j = 0; j < q - 1; ++j) g(j, c) += r * d.X(i, j);
        g(q - 1, c) += r;
      }
    }
    cost /= kRows;
    g /= kRows;
    CHECK(one.cost[k] == Approx(double(cost)).epsilon(1e-13));
    const Vec want = g.cast<double>().reshaped();
    CHECK(relative(one.grad.col(k), want) <= 1e-12);
  }
}

TEST_CASE("a shared problem solving its optimum over chunks of rows while other threads ask for it does not deadlock", "[problems]") {
  // The Newton solve runs inside a call_once and evaluates over parallel chunks. A thread
  // waiting for its chunks must not pick up another task that asks for the same optimum (it
  // would re-enter the call_once): the chunks run isolated. 8 tasks on 2 threads.
  const auto p = make_logistic(logistic_data());
  std::atomic<int> solved{0};
  tbb::task_arena arena(2);
  arena.execute([&] {
    tbb::parallel_for(0, 8, [&](int) {
      if (p->optimum().has_value()) ++solved;
    });
  });
  CHECK(solved.load() == 8);
  // The optimum is a stationary point of the chunked gradient.
  Evaluation e;
  Scratch s;
  p->evaluate(p->optimum()->w, e, s);
  CHECK(e.grad.norm() <= 1e-9);
}

TEST_CASE("dense Hessians by blocks of rows equal the plain formula, with the same bits on 1 and 2 threads", "[problems]") {
  // weighted_gram sums Xᵀ·diag(c)·X over blocks of rows in a fixed number of groups; the
  // logistic Hessian is s·Xᵀ·diag(σ'(z))·X + l2 on the weights (Newton's dense steps).
  const Dataset d = logistic_data();
  LinearModelOptions o;
  o.l2 = 0.01;
  const auto p = make_logistic(d, o);
  const Vec w = lanes(p->dim(), 1, 9).col(0);
  Mat one, two;
  tbb::task_arena(1).execute([&] { one = p->hessian(w); });
  tbb::task_arena(2).execute([&] { two = p->hessian(w); });
  CHECK((one.array() == two.array()).all());
  Mat Xaug(d.X.rows(), d.X.cols() + 1);
  Xaug << d.X, Vec::Ones(d.X.rows());
  const Vec z = Xaug * w;
  const Vec c = z.unaryExpr([](double t) { const double s = 1.0 / (1.0 + std::exp(-t)); return s * (1.0 - s); });
  Mat want = (Xaug.transpose() * c.asDiagonal() * Xaug) / double(kRows);
  want.diagonal().head(d.X.cols()).array() += o.l2;
  CHECK((one - want).norm() <= 1e-13 * want.norm());
  CHECK((one.array() == one.transpose().array()).all());  // exactly symmetric, as Cholesky and COD expect
  // The same through the generic helper, weights all 1: XᵀX.
  Mat gram;
  detail::weighted_gram(Xaug, {}, 1.0, gram);
  const Mat plain = Xaug.transpose() * Xaug;
  CHECK((gram - plain).norm() <= 1e-13 * plain.norm());
  // Softmax's blocks (a, b): δ_ab·p_a − p_a·p_b; against a Hessian-vector product.
  const auto sm = make_softmax(softmax_data(3), {}, 3);
  const Vec ws = lanes(sm->dim(), 1, 4).col(0), v = lanes(sm->dim(), 1, 6).col(0);
  Vec hv(sm->dim());
  sm->hessian_vector(ws, v, hv);
  CHECK((sm->hessian(ws) * v - hv).norm() <= 1e-12 * hv.norm());
}

TEST_CASE("a data set moved into a linear model is taken over, not copied", "[problems]") {
  Dataset d = logistic_data();
  const Dataset copy = d;
  const auto p = make_logistic(std::move(d), {});
  CHECK(d.X.size() == 0);  // taken over: nothing left behind to hold a second copy
  // The model computes on the same data as one given a copy.
  const auto q = make_logistic(copy, {});
  const Mat W = lanes(p->dim(), 2, 3);
  check_same_bits(evaluate_on(*p, W, 1), evaluate_on(*q, W, 1));
}

TEST_CASE("logistic on many rows: Newton started from a row sample's optimum reaches the optimum Newton from 0 reaches", "[problems]") {
  // From 65,536 rows Newton first solves on every 8th row (problems/logistic.cpp). The answer
  // must be the full data's optimum: compared with Newton run from w = 0 by hand (the oracle
  // of the same model), for mean with l2, and for sum (l2 rescaled on the sample).
  GeneratedSpec g;
  g.kind = GeneratedSpec::logistic;
  g.rows = 70000;
  g.features = 4;
  g.seed = 31;
  g.intercept = 0.7;
  const Dataset d = generate_dataset(g, "many-rows");
  for (Reduction reduction : {Reduction::mean, Reduction::sum}) {
    LinearModelOptions o;
    o.l2 = 1e-3;
    o.reduction = reduction;
    const auto p = make_logistic(d, o);
    const auto opt = p->optimum();
    REQUIRE(opt.has_value());
    INFO(opt->method);
    CHECK(opt->method.find("from the optimum on every 8th row") != std::string::npos);
    detail::NewtonOracle cold;
    cold.cost_grad = [&](const Vec& w, Vec& grad) {
      Evaluation e;
      Scratch s;
      p->evaluate(w, e, s);
      grad = e.grad.col(0);
      return e.cost[0];
    };
    cold.hessian = [&](const Vec& w) { return p->hessian(w); };
    const detail::NewtonResult r = detail::newton_minimise(cold, Vec::Zero(p->dim()));
    CHECK(r.settled);
    CHECK(opt->cost == Approx(r.cost).epsilon(1e-14));
    CHECK((opt->w - r.w).norm() <= 1e-9 * r.w.norm());
    Vec grad;
    CHECK(std::abs(cold.cost_grad(opt->w, grad) - opt->cost) == 0.0);
    CHECK(grad.norm() <= 1e-12 * (reduction == Reduction::sum ? double(g.rows) : 1.0));
  }
}
