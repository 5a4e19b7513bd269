// Tests of harness/data/ column statistics, scalings and generated data sets.
#include <catch2/catch.hpp>
#include <cmath>
#include <cstring>
#include <sstream>

#include <tbb/task_arena.h>

#include "stepgate/core/error.hpp"
#include "stepgate/core/seed.hpp"
#include "stepgate/core/feature_map.hpp"
#include "stepgate/data/column_stats.hpp"
#include "stepgate/data/generate.hpp"
#include "stepgate/data/random_draws.hpp"
#include "stepgate/data/scaling.hpp"
#include "data_test_support.hpp"

using namespace stepgate;
using namespace data_test;

namespace {

ScalingSpec spec_of(ScalingSpec::Kind kind) {
  ScalingSpec spec;
  spec.kind = kind;
  return spec;
}

Dataset small_table() {  // 6 x 3, mixed signs and magnitudes
  Dataset data;
  data.name = "small";
  data.X.resize(6, 3);
  data.X << 1.5, -200, 0.001, 2.5, 100, 0.004, -3.0, 50, 0.002, 4.25, -25, 0.010, 0.0, 75, 0.007,
      7.5, 300, 0.003;
  data.y = Vec::LinSpaced(6, 0, 5);
  data.features = {"a", "b", "c"};
  data.target = "y";
  data.map = FeatureMap::identity(3);
  return data;
}


}  // namespace

TEST_CASE("column_stats: mean and population sd (n), the sd that standardize divides by", "[data]") {
  Dataset d = small_table();
  const std::vector<ColumnStats> stats = column_stats(d);
  REQUIRE(stats.size() == 3);
  CHECK(stats[0].name == "a");
  // By formula: a = {1.5, 2.5, -3, 4.25, 0, 7.5}, sum 12.75.
  const double mean = 12.75 / 6;
  double ss = 0;
  for (double v : {1.5, 2.5, -3.0, 4.25, 0.0, 7.5}) ss += (v - mean) * (v - mean);
  CHECK(stats[0].mean == Approx(mean).epsilon(1e-15));
  CHECK(stats[0].sd == Approx(std::sqrt(ss / 6)).epsilon(1e-15));
  d.X.conservativeResize(1, Eigen::NoChange);
  CHECK(column_stats(d)[0].sd == 0.0);
  d.X.conservativeResize(0, Eigen::NoChange);
  CHECK(std::isnan(column_stats(d)[0].sd));
}

TEST_CASE("scalings match sklearn 1.2.1 StandardScaler, MinMaxScaler, MaxAbsScaler", "[data]") {
  const Dataset raw = small_table();
  std::vector<Dataset> scaled;
  for (ScalingSpec::Kind kind : {ScalingSpec::standardize, ScalingSpec::minmax, ScalingSpec::maxabs}) {
    Dataset d = raw;
    ScalingSpec spec;
    spec.kind = kind;
    apply_scaling(d, spec);
    scaled.push_back(d);
  }
  // By formula: standardized columns have mean 0 and population sd 1; minmax spans [0, 1];
  // maxabs has max |x| = 1.
  const Mat& z = scaled[0].X;
  CHECK(z.colwise().mean().cwiseAbs().maxCoeff() < 1e-15);
  CHECK((z.colwise().squaredNorm() / 6.0).array().sqrt().isApprox(Eigen::Array3d::Ones().transpose()));
  CHECK(scaled[1].X.colwise().minCoeff().isZero());
  CHECK(scaled[1].X.colwise().maxCoeff() == Eigen::RowVector3d::Ones());
  CHECK(scaled[2].X.cwiseAbs().colwise().maxCoeff() == Eigen::RowVector3d::Ones());
  CHECK(scaled[2].map.shift.isZero());

  std::string script = "import numpy as np, sklearn\nfrom sklearn.preprocessing import "
                       "StandardScaler, MinMaxScaler, MaxAbsScaler\nX = np.array([";
  for (Index i = 0; i < raw.rows(); ++i)
    script += "[" + std::to_string(raw.X(i, 0)) + "," + std::to_string(raw.X(i, 1)) + "," +
              std::to_string(raw.X(i, 2)) + "],";
  script += "])\nprint(sklearn.__version__)\nfor s in (StandardScaler(), MinMaxScaler(), "
            "MaxAbsScaler()):\n  print(' '.join(repr(float(v)) for v in s.fit_transform(X).ravel()))\n";
  const std::string out = run_python(script);
  if (out.empty()) {
    WARN("python3 with sklearn unavailable; reference comparison skipped");
    return;
  }
  std::istringstream in(out);
  std::string version;
  in >> version;
  INFO("sklearn " << version);
  for (const Dataset& d : scaled)
    for (Index i = 0; i < d.rows(); ++i)
      for (Index j = 0; j < d.cols(); ++j) {
        double expected = 0;
        REQUIRE(in >> expected);
        CHECK(d.X(i, j) == Approx(expected).margin(1e-13));
      }
}

TEST_CASE("scalings: mapped-back weights on raw X predict as on scaled X", "[data]") {
  GeneratedSpec g;
  g.rows = 200;
  g.features = 4;
  g.feature_scales = {1.0, 1000.0, 0.01, 5.0};
  Dataset raw = generate_dataset(g, "raw");
  raw.X.col(3).array() += 40.0;  // a shifted column, so that shifts matter
  std::vector<std::vector<ScalingSpec>> chains(6);
  const ScalingSpec::Kind kinds[] = {ScalingSpec::standardize, ScalingSpec::minmax, ScalingSpec::maxabs,
                                     ScalingSpec::units, ScalingSpec::jitter};
  for (int k = 0; k < 5; ++k) chains[k].push_back(spec_of(kinds[k]));
  chains[5] = {spec_of(ScalingSpec::units), spec_of(ScalingSpec::standardize)};
  chains[5][0].factor = 1e3;
  for (const auto& chain : chains) {
    Dataset d = raw;
    for (const ScalingSpec& spec : chain) apply_scaling(d, spec);
    INFO("first scaling " << to_string(chain.front().kind) << ", steps " << chain.size());
    Mat w = (Mat(4, 1) << 0.7, -1.3, 2.1, 0.4).finished();
    Vec b = Vec::Constant(1, 0.3);
    const Vec on_scaled = (d.X * w).array() + b(0);
    map_back_linear(d.map, w, b);
    const Vec on_raw = (raw.X * w).array() + b(0);
    CHECK((on_raw - on_scaled).cwiseAbs().maxCoeff() <= 1e-9 * (1 + on_scaled.cwiseAbs().maxCoeff()));
    // And the map reproduces the scaled features from the raw ones.
    const Mat rebuilt = (raw.X.rowwise() - d.map.shift.transpose()).array().rowwise() /
                        d.map.scale.transpose().array();
    CHECK(rebuilt.isApprox(d.X, 1e-12));
  }
}

TEST_CASE("scalings: constant columns, drop_constant, units and jitter", "[data]") {
  Dataset d = small_table();
  d.X.col(1).setConstant(2.0);
  for (ScalingSpec::Kind kind : {ScalingSpec::standardize, ScalingSpec::minmax}) {
    Dataset copy = d;
    CHECK_THROWS_WITH(apply_scaling(copy, spec_of(kind)), Catch::Contains("column 'b' is constant"));
  }
  Dataset zero = d;
  zero.X.col(2).setZero();
  CHECK_THROWS_WITH(apply_scaling(zero, spec_of(ScalingSpec::maxabs)), Catch::Contains("'c' is all zero"));
  ScalingSpec drop = spec_of(ScalingSpec::standardize);
  drop.drop_constant = true;
  Dataset dropped = d;
  apply_scaling(dropped, drop);
  CHECK(dropped.features == std::vector<std::string>{"a", "c"});
  CHECK(dropped.cols() == 2);
  CHECK(dropped.map.size() == 2);
  CHECK(dropped.map.shift(1) == Approx(d.X.col(2).mean()));

  ScalingSpec units = spec_of(ScalingSpec::units);
  units.factor = 1000;
  units.columns = {"c"};
  Dataset u = small_table();
  apply_scaling(u, units);
  CHECK(u.X.col(2) == small_table().X.col(2) * 1000.0);
  CHECK(u.X.col(0) == small_table().X.col(0));
  CHECK(u.map.scale == (Vec(3) << 1, 1, 1.0 / 1000).finished());
  units.columns = {"nope"};
  CHECK_THROWS_WITH(apply_scaling(u, units), Catch::Contains("expected one of: 'a', 'b', 'c'"));

  ScalingSpec jitter = spec_of(ScalingSpec::jitter);
  jitter.seed = 7;
  Dataset j1 = small_table(), j2 = small_table(), j3 = small_table();
  apply_scaling(j1, jitter);
  apply_scaling(j2, jitter);
  jitter.seed = 8;
  apply_scaling(j3, jitter);
  CHECK(j1.X == j2.X);
  CHECK(j1.map.scale != j3.map.scale);
  CHECK(j1.map.scale.maxCoeff() <= 10.0);  // span 100: factors in [0.1, 10]
  CHECK(j1.map.scale.minCoeff() >= 0.1);
  CHECK(scaling_kind_from_string("maxabs") == ScalingSpec::maxabs);
  CHECK_FALSE(scaling_kind_from_string("MaxAbs").has_value());
}

TEST_CASE("generated data: same seed, same bytes, and more rows keep the earlier ones", "[data]") {
  GeneratedSpec spec;
  spec.seed = 42;
  const Generated a = generate(spec, "g"), b = generate(spec, "g");
  CHECK(std::memcmp(a.data.X.data(), b.data.X.data(), sizeof(double) * a.data.X.size()) == 0);
  CHECK(std::memcmp(a.data.y.data(), b.data.y.data(), sizeof(double) * a.data.y.size()) == 0);
  CHECK(a.weights == b.weights);
  spec.rows = 1500;
  const Generated longer = generate(spec, "g");
  CHECK(longer.data.X.topRows(1000) == a.data.X);
  CHECK(longer.weights == a.weights);
  spec.seed = 43;
  CHECK(generate(spec, "g").data.X.row(0) != a.data.X.row(0));
  spec.weights = {1.0, 2.0};
  CHECK_THROWS_WITH(generate(spec, "g"), Catch::Contains("found 2 weights; expected 5"));
  spec.weights.clear();
  spec.rows = 0;
  CHECK_THROWS_AS(generate(spec, "g"), InputError);
}

TEST_CASE("generated linear data: OLS recovers the weights within 5 standard errors", "[data]") {
  GeneratedSpec spec;
  spec.rows = 20000;
  spec.noise = 0.5;
  spec.intercept = 2.0;
  spec.seed = 3;
  spec.feature_scales = {1.0, 10.0, 0.1, 3.0, 1.0};
  const Generated g = generate(spec, "ols");
  Mat A(spec.rows, 6);
  A << g.data.X, Vec::Ones(spec.rows);
  const Vec beta = A.colPivHouseholderQr().solve(g.data.y);
  const double sigma = std::sqrt((A * beta - g.data.y).squaredNorm() / double(spec.rows - 6));
  CHECK(sigma == Approx(spec.noise).epsilon(0.05));
  const Vec se = sigma * (A.transpose() * A).inverse().diagonal().cwiseSqrt();
  Vec truth(6);
  truth << g.weights, g.intercept;
  for (Index j = 0; j < 6; ++j) {
    INFO("coefficient " << j << ": " << beta(j) << " vs " << truth(j) << " (se " << se(j) << ")");
    CHECK(std::abs(beta(j) - truth(j)) < 5 * se(j));
  }
}

TEST_CASE("generated logistic data: label rate matches the mean probability", "[data]") {
  GeneratedSpec spec;
  spec.kind = GeneratedSpec::logistic;
  spec.rows = 20000;
  spec.intercept = -0.5;
  spec.seed = 11;
  const Generated g = generate(spec, "logit");
  const Vec prob = (1.0 + (-((g.data.X * g.weights).array() + g.intercept)).exp()).inverse();
  CHECK(((g.data.y.array() == 0.0) || (g.data.y.array() == 1.0)).all());
  const double se = std::sqrt((prob.array() * (1 - prob.array())).sum()) / double(spec.rows);
  CHECK(std::abs(g.data.y.mean() - prob.mean()) < 5 * se);
}

TEST_CASE("generated data: drawn in parallel parts, the same bits as one stream on 1 and 2 threads", "[data]") {
  // generate() splits the rows into parts, each moving its own stream on (NormalDraws::skip);
  // the features must be exactly the draws of one stream in row order, for any split.
  GeneratedSpec spec;
  spec.kind = GeneratedSpec::logistic;
  spec.rows = 3 * 4096 + 17;  // several parts, an odd number of draws before each later part
  spec.features = 3;
  spec.seed = 9;
  NormalDraws stream(derive_seed({std::string_view("features"), spec.seed}));
  Mat want(spec.rows, spec.features);
  for (Index i = 0; i < want.rows(); ++i)
    for (Index j = 0; j < want.cols(); ++j) want(i, j) = stream.next();
  for (int threads : {1, 2}) {
    Generated g;
    tbb::task_arena(threads).execute([&] { g = generate(spec, "parts"); });
    INFO(threads << " threads");
    CHECK((g.data.X.array() == want.array()).all());
  }
  // skip(k) then next() is the k-th draw, for even and odd k.
  for (std::uint64_t k : {0u, 1u, 2u, 7u, 1000u}) {
    NormalDraws fresh(5), moved(5);
    for (std::uint64_t i = 0; i < k; ++i) (void)fresh.next();
    moved.skip(k);
    CHECK(moved.next() == fresh.next());
    CHECK(moved.next() == fresh.next());
  }
}
