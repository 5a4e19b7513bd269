#include "stepgate/optimizers/optimizer.hpp"

#include <cmath>
#include <stdexcept>
#include <vector>

#include <fmt/format.h>

#include "stepgate/optimizers/update_rules.hpp"

namespace stepgate {

std::unique_ptr<Optimizer> make_optimizer(const OptimizerSpec& spec) {
  if (std::string error = validate(spec); !error.empty())
    throw std::invalid_argument("optimizer '" + spec.name() + "': " + error);
  switch (spec.kind) {
    case OptimizerKind::gd:
    case OptimizerKind::sgd: return std::make_unique<detail::GradientDescent>();
    case OptimizerKind::momentum: return std::make_unique<detail::HeavyBall>(spec.beta);
    case OptimizerKind::nesterov: return std::make_unique<detail::Nesterov>(spec.beta);
    case OptimizerKind::adagrad: return std::make_unique<detail::AdaGrad>(spec.eps);
    case OptimizerKind::rmsprop: return std::make_unique<detail::RMSProp>(spec.rho, spec.eps);
    case OptimizerKind::adam:
      return std::make_unique<detail::Adam>(spec.beta1, spec.beta2, spec.eps);
  }
  throw std::invalid_argument("unknown optimizer kind");
}

}  // namespace stepgate
