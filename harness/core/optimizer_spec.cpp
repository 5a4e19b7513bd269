#include "stepgate/core/optimizer_spec.hpp"

#include <cmath>
#include <vector>

#include <fmt/format.h>

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

std::optional<OptimizerKind> optimizer_kind_from_string(std::string_view s) {
  for (OptimizerKind k : {OptimizerKind::gd, OptimizerKind::sgd, OptimizerKind::momentum,
                          OptimizerKind::nesterov, OptimizerKind::adagrad, OptimizerKind::rmsprop,
                          OptimizerKind::adam})
    if (to_string(k) == s) return k;
  return std::nullopt;
}

std::string validate(const OptimizerSpec& spec) {
  // Comparisons are written so that NaN fails them.
  std::vector<std::string> errors;
  const auto in_unit = [&](const char* field, double v) {
    if (!(v >= 0.0 && v < 1.0)) errors.push_back(fmt::format("{} = {} is outside [0, 1)", field, v));
  };
  in_unit("beta", spec.beta);
  in_unit("beta1", spec.beta1);
  in_unit("beta2", spec.beta2);
  in_unit("rho", spec.rho);
  if (!(spec.eps > 0.0 && std::isfinite(spec.eps)))
    errors.push_back(fmt::format("eps = {} must be finite and > 0", spec.eps));
  if (spec.batch_size < 0)
    errors.push_back(fmt::format("batch_size = {} must be >= 0 (0 = full batch)", spec.batch_size));
  else if (spec.kind == OptimizerKind::sgd && spec.batch_size == 0)
    errors.push_back("sgd needs batch_size > 0 (use gd for full batch)");
  if (std::string s = validate(spec.schedule); !s.empty()) errors.push_back("schedule: " + s);
  return fmt::format("{}", fmt::join(errors, "; "));
}

}  // namespace stepgate
