#include "stepgate/data/scaling.hpp"

#include <array>
#include <cmath>
#include <cstdio>
#include <random>

#include "stepgate/core/error.hpp"
#include "stepgate/core/quote_text.hpp"
#include "stepgate/data/random_draws.hpp"

namespace stepgate {
namespace {

constexpr std::array<std::string_view, 6> kKindNames = {"none",  "standardize", "minmax",
                                                        "maxabs", "units",      "jitter"};

std::string where_of(const Dataset& data, const ScalingSpec& spec) {
  return "dataset '" + data.name + "', scaling '" +
         (spec.name.empty() ? std::string(to_string(spec.kind)) : spec.name) + "'";
}

std::string feature_name(const Dataset& data, Index j) {
  const auto k = static_cast<std::size_t>(j);
  return k < data.features.size() ? data.features[k] : "column " + std::to_string(j + 1);
}

std::string number(double v) {
  char text[32];
  std::snprintf(text, sizeof text, "%.17g", v);
  return text;
}

// Keeps the columns with keep[j]; X, features and map shrink together.
void keep_columns(Dataset& data, const std::vector<bool>& keep) {
  Index kept = 0;
  for (Index j = 0; j < data.X.cols(); ++j) {
    if (!keep[static_cast<std::size_t>(j)]) continue;
    if (kept != j) {
      data.X.col(kept) = data.X.col(j);
      data.map.shift(kept) = data.map.shift(j);
      data.map.scale(kept) = data.map.scale(j);
      if (static_cast<std::size_t>(j) < data.features.size())
        data.features[static_cast<std::size_t>(kept)] = data.features[static_cast<std::size_t>(j)];
    }
    ++kept;
  }
  data.X.conservativeResize(Eigen::NoChange, kept);
  data.map.shift.conservativeResize(kept);
  data.map.scale.conservativeResize(kept);
  if (data.features.size() > static_cast<std::size_t>(kept))
    data.features.resize(static_cast<std::size_t>(kept));
}

// One scaling step per column: x_scaled = (x − shift) / scale, or for units and jitter
// x_scaled = x · multiplier (scale = 1 / multiplier), so that x · 1000 is computed exactly
// as the product and not as a division by 0.001.
struct Step {
  Vec shift, scale, multiplier;
};

Step step_for(const Dataset& data, const ScalingSpec& spec) {
  const Index d = data.X.cols();
  Step step{Vec::Zero(d), Vec::Ones(d), Vec()};
  Vec& shift = step.shift;
  Vec& scale = step.scale;
  const std::string where = where_of(data, spec);
  auto constant = [&](Index j, const char* problem) {
    throw InputError(where, "column '" + feature_name(data, j) + "' " + problem + " (every value is " +
                                number(data.X(0, j)) + "); expected a column that varies, or "
                                "drop_constant to remove it");
  };
  switch (spec.kind) {
    case ScalingSpec::none:
      return step;
    case ScalingSpec::standardize:
      for (Index j = 0; j < d; ++j) {
        const auto x = data.X.col(j);
        if (x.minCoeff() == x.maxCoeff()) constant(j, "is constant");
        shift(j) = x.mean();
        scale(j) = std::sqrt((x.array() - shift(j)).square().sum() / double(x.size()));
      }
      return step;
    case ScalingSpec::minmax:
      for (Index j = 0; j < d; ++j) {
        const auto x = data.X.col(j);
        shift(j) = x.minCoeff();
        scale(j) = x.maxCoeff() - shift(j);
        if (scale(j) == 0.0) constant(j, "is constant");
      }
      return step;
    case ScalingSpec::maxabs:
      for (Index j = 0; j < d; ++j) {
        scale(j) = data.X.col(j).cwiseAbs().maxCoeff();
        if (scale(j) == 0.0) constant(j, "is all zero");
      }
      return step;
    case ScalingSpec::units: {
      if (!std::isfinite(spec.factor) || spec.factor == 0.0)
        throw InputError(where, "found factor " + number(spec.factor) +
                                    "; expected a finite, non-zero multiplier");
      std::vector<bool> listed(static_cast<std::size_t>(d), spec.columns.empty());
      for (const std::string& column : spec.columns) {
        std::size_t k = 0;
        while (k < data.features.size() && data.features[k] != column) ++k;
        if (k >= data.features.size() || k >= listed.size()) {
          std::string available;
          for (const std::string& f : data.features) available += (available.empty() ? "" : ", ") + quote_text(f);
          throw InputError(where, "found no feature named " + quote_text(column, 200) +
                                      "; expected one of: " + available);
        }
        listed[k] = true;
      }
      step.multiplier = Vec::Ones(d);
      for (Index j = 0; j < d; ++j)
        if (listed[static_cast<std::size_t>(j)]) step.multiplier(j) = spec.factor;
      scale = step.multiplier.cwiseInverse();
      return step;
    }
    case ScalingSpec::jitter: {
      if (!(spec.span >= 1.0) || !std::isfinite(spec.span))
        throw InputError(where, "found span " + number(spec.span) +
                                    "; expected a finite ratio of at least 1");
      std::mt19937_64 rng(spec.seed);
      const double log_span = std::log(spec.span);
      step.multiplier.resize(d);
      for (Index j = 0; j < d; ++j) step.multiplier(j) = std::exp(log_span * (uniform01(rng) - 0.5));
      scale = step.multiplier.cwiseInverse();
      return step;
    }
  }
  return step;
}

}  // namespace

std::string_view to_string(ScalingSpec::Kind kind) {
  return kKindNames.at(static_cast<std::size_t>(kind));
}

std::optional<ScalingSpec::Kind> scaling_kind_from_string(std::string_view name) {
  for (std::size_t k = 0; k < kKindNames.size(); ++k)
    if (kKindNames[k] == name) return static_cast<ScalingSpec::Kind>(k);
  return std::nullopt;
}

void apply_scaling(Dataset& data, const ScalingSpec& spec) {
  const Index d = data.X.cols();
  if (data.map.size() != d) data.map = FeatureMap::identity(d);
  if (!data.X.allFinite())
    throw InputError(where_of(data, spec), "found non-finite values in the features; "
                                           "expected finite numbers");
  if (spec.drop_constant && data.X.rows() > 0) {
    std::vector<bool> keep(static_cast<std::size_t>(d));
    for (Index j = 0; j < d; ++j)
      keep[static_cast<std::size_t>(j)] = data.X.col(j).minCoeff() != data.X.col(j).maxCoeff();
    keep_columns(data, keep);
  }
  if (data.X.rows() == 0 || data.X.cols() == 0) return;
  const Step step = step_for(data, spec);
  if (step.multiplier.size() > 0) {
    data.X.array().rowwise() *= step.multiplier.transpose().array();
  } else if (spec.kind != ScalingSpec::none) {
    data.X.array().rowwise() -= step.shift.transpose().array();
    data.X.array().rowwise() /= step.scale.transpose().array();
  }
  // Compose with the map already applied: x2 = ((x − s1)/c1 − s2)/c2 = (x − (s1 + c1·s2))/(c1·c2).
  data.map.shift.array() += data.map.scale.array() * step.shift.array();
  data.map.scale.array() *= step.scale.array();
}

}  // namespace stepgate
