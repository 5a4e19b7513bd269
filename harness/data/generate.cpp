#include "stepgate/data/generate.hpp"

#include <algorithm>
#include <cmath>

#include "stepgate/core/error.hpp"
#include "stepgate/core/seed.hpp"
#include "stepgate/data/random_draws.hpp"

#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>

namespace stepgate {
namespace {

void check_spec(const GeneratedSpec& spec, const std::string& where) {
  auto fail = [&](const std::string& message) { throw InputError(where, message); };
  if (spec.rows < 1) fail("found rows = " + std::to_string(spec.rows) + "; expected at least 1");
  if (spec.features < 1)
    fail("found features = " + std::to_string(spec.features) + "; expected at least 1");
  if (!(spec.noise >= 0.0) || !std::isfinite(spec.noise))
    fail("found a noise sd that is negative or not finite; expected a finite value >= 0");
  if (!std::isfinite(spec.intercept)) fail("found a non-finite intercept; expected a finite one");
  const auto d = static_cast<std::size_t>(spec.features);
  if (!spec.weights.empty() && spec.weights.size() != d)
    fail("found " + std::to_string(spec.weights.size()) + " weights; expected " +
         std::to_string(d) + ", one per feature");
  for (double w : spec.weights)
    if (!std::isfinite(w)) fail("found a non-finite weight; expected finite weights");
  if (!spec.feature_scales.empty() && spec.feature_scales.size() != d)
    fail("found " + std::to_string(spec.feature_scales.size()) + " feature scales; expected " +
         std::to_string(d) + ", one per feature");
  for (double s : spec.feature_scales)
    if (!(s > 0.0) || !std::isfinite(s))
      fail("found a feature scale that is not a positive finite number; expected sds > 0");
}

double sigmoid(double z) {  // without overflow for large |z|
  return z >= 0 ? 1.0 / (1.0 + std::exp(-z)) : std::exp(z) / (1.0 + std::exp(z));
}

}  // namespace

Generated generate(const GeneratedSpec& spec, std::string name) {
  check_spec(spec, "generated dataset '" + name + "'");
  const Index n = spec.rows, d = spec.features;

  Generated out{Dataset{}, Vec(d), spec.intercept};
  if (spec.weights.empty()) {
    NormalDraws draws(derive_seed({std::string_view("weights"), spec.seed}));
    for (Index j = 0; j < d; ++j) out.weights(j) = draws.next();
  } else {
    out.weights = Eigen::Map<const Vec>(spec.weights.data(), d);
  }
  const Vec sds = spec.feature_scales.empty() ? Vec::Ones(d).eval()
                                              : Eigen::Map<const Vec>(spec.feature_scales.data(), d).eval();

  Dataset& data = out.data;
  data.name = std::move(name);
  data.X.resize(n, d);
  // Row by row from one stream (more rows keep the earlier ones), drawn in parts of rows in
  // parallel, each part's stream moved on to its first draw: the same bits for any split.
  const std::uint64_t feature_seed = derive_seed({std::string_view("features"), spec.seed});
  // One part per thread: moving a stream on costs its raw draws, so fewer parts cost less.
  const Index parts = std::clamp<Index>(n / 4096, 1, tbb::this_task_arena::max_concurrency());
  tbb::parallel_for(Index{0}, parts, [&](Index part) {
    NormalDraws feature_draws(feature_seed);
    const Index first = part * n / parts, last = (part + 1) * n / parts;
    feature_draws.skip(std::uint64_t(first) * std::uint64_t(d));
    for (Index i = first; i < last; ++i)
      for (Index j = 0; j < d; ++j) data.X(i, j) = sds(j) * feature_draws.next();
  });

  data.y.noalias() = data.X * out.weights;
  data.y.array() += spec.intercept;
  NormalDraws outcome_draws(derive_seed({std::string_view("outcomes"), spec.seed}));
  for (Index i = 0; i < n; ++i) {
    if (spec.kind == GeneratedSpec::linear)
      data.y(i) += spec.noise * outcome_draws.next();
    else
      data.y(i) = uniform01(outcome_draws.engine()) < sigmoid(data.y(i)) ? 1.0 : 0.0;
  }

  for (Index j = 0; j < d; ++j) {
    // Built by appending: GCC 12 warns falsely (-Wrestrict, PR 105329) on "x" + to_string().
    std::string feature(1, 'x');
    feature += std::to_string(j + 1);
    data.features.push_back(std::move(feature));
  }
  data.target = std::string(1, 'y');  // not = "y": GCC 12 false -Wrestrict (PR 105329)
  data.map = FeatureMap::identity(d);
  return out;
}

Dataset generate_dataset(const GeneratedSpec& spec, std::string name) {
  return generate(spec, std::move(name)).data;
}

}  // namespace stepgate
