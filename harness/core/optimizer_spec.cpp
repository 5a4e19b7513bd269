#include "stepgate/core/optimizer_spec.hpp"

#include <algorithm>
#include <cmath>
#include <vector>

#include <fmt/format.h>

#include "stepgate/core/names.hpp"

namespace stepgate {

std::string OptimizerSpec::name() const {
  return label.empty() ? std::string(to_string(kind)) : label;
}

std::string_view to_string(OptimizerKind k) {
  switch (k) {
    case OptimizerKind::gd: return "gd";
    case OptimizerKind::sgd: return "sgd";
    case OptimizerKind::momentum: return "momentum";
    case OptimizerKind::nesterov: return "nesterov";
    case OptimizerKind::adagrad: return "adagrad";
    case OptimizerKind::rmsprop: return "rmsprop";
    case OptimizerKind::adam: return "adam";
  }
  return "gd";
}

const std::vector<OptimizerKind>& optimizer_kinds() {
  using K = OptimizerKind;
  static const std::vector<K> kinds = {K::gd, K::sgd, K::momentum, K::nesterov, K::adagrad, K::rmsprop, K::adam};
  return kinds;
}

const std::vector<std::string>& optimizer_kind_names() {
  static const std::vector<std::string> names = names_of(optimizer_kinds());
  return names;
}

std::optional<OptimizerKind> optimizer_kind_from_string(std::string_view s) { return value_named(optimizer_kinds(), s); }

std::string_view to_string(BatchSampling s) {
  switch (s) {
    case BatchSampling::epochs: return "epochs";
    case BatchSampling::independent: return "independent";
    case BatchSampling::replacement: return "replacement";
  }
  return "epochs";
}

const std::vector<BatchSampling>& batch_samplings() {
  using S = BatchSampling;
  static const std::vector<S> all = {S::epochs, S::independent, S::replacement};
  return all;
}

const std::vector<std::string>& batch_sampling_names() {
  static const std::vector<std::string> names = names_of(batch_samplings());
  return names;
}

std::optional<BatchSampling> batch_sampling_from_string(std::string_view s) { return value_named(batch_samplings(), s); }

const std::vector<OptimizerParam>& optimizer_params() {
  using K = OptimizerKind;
  using S = OptimizerSpec;
  static const std::vector<OptimizerParam> params = {
      {"beta", &S::beta, Range::half_open(0, 1), {K::momentum, K::nesterov}},
      {"beta1", &S::beta1, Range::half_open(0, 1), {K::adam}},
      {"beta2", &S::beta2, Range::half_open(0, 1), {K::adam}},
      {"rho", &S::rho, Range::half_open(0, 1), {K::rmsprop}},
      {"eps", &S::eps, Range::above(0), {K::adagrad, K::rmsprop, K::adam}},
  };
  return params;
}

bool OptimizerParam::used_by(OptimizerKind k) const { return std::find(kinds.begin(), kinds.end(), k) != kinds.end(); }

std::string validate(const OptimizerSpec& spec) {
  // Every parameter is checked whatever the kind (a value out of range would matter after a
  // change of kind).
  std::vector<std::string> errors;
  for (const OptimizerParam& p : optimizer_params())
    if (!p.range.admits(spec.*p.member))
      errors.push_back(fmt::format("{} = {}, expected {}", p.key, spec.*p.member, p.range.expected()));
  if (spec.batch_size < 0)
    errors.push_back(fmt::format("batch_size = {}, expected a whole number >= 0 (0 = full batch)", spec.batch_size));
  else if (spec.kind == OptimizerKind::sgd && spec.batch_size == 0)
    errors.push_back("sgd needs batch_size > 0 (use gd for full batch)");
  if (spec.sampling != BatchSampling::epochs && spec.batch_size == 0)
    errors.push_back(fmt::format("sampling = {} applies to mini-batches, expected batch_size > 0", to_string(spec.sampling)));
  if (std::string s = validate(spec.schedule); !s.empty()) errors.push_back("schedule: " + s);
  return fmt::format("{}", fmt::join(errors, "; "));
}

}  // namespace stepgate
