// Generated data sets with known true weights, for demos and tests. Every draw comes from the
// spec's seed through separate streams (derive_seed): weights, features, then noise/labels,
// so the same spec gives the same bits, and more rows extend the data without changing the
// rows already there.
#pragma once
#include <cstdint>
#include <string>
#include <vector>

#include "stepgate/core/dataset.hpp"

namespace stepgate {

struct GeneratedSpec {
  enum Kind {
    linear,    ///< y = X·w + b + noise·N(0, 1)
    logistic,  ///< y ~ Bernoulli(sigmoid(X·w + b)), labels 0/1 (noise is unused)
  } kind = linear;
  long rows = 1000;                     ///< n >= 1
  long features = 5;                    ///< d >= 1
  double noise = 0.1;                   ///< linear: sd of the additive noise, >= 0
  std::uint64_t seed = 0;
  std::vector<double> weights;          ///< d true weights; empty = drawn N(0, 1) from the seed
  double intercept = 0.0;               ///< true intercept b
  std::vector<double> feature_scales;   ///< d per-feature sds of X (> 0); empty = all 1
};

struct Generated {
  Dataset data;     ///< features "x1".."xd", target "y", identity map, sha256 ""
  Vec weights;      ///< the true w
  double intercept; ///< the true b
};

/// X(i, j) ~ N(0, feature_scales[j]²), drawn row by row (hand-written Box–Muller on
/// mt19937_64, data/random_draws.hpp). Errors (InputError, `where` = "generated dataset
/// 'NAME'"): rows or features < 1, noise < 0, weights or feature_scales of the wrong length,
/// non-positive or non-finite scales, non-finite weights.
Generated generate(const GeneratedSpec& spec, std::string name);

/// generate(spec, name).data.
Dataset generate_dataset(const GeneratedSpec& spec, std::string name);

}  // namespace stepgate
