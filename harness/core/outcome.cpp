#include "stepgate/core/outcome.hpp"

#include "stepgate/core/names.hpp"

namespace stepgate {

std::string_view to_string(Outcome o) {
  switch (o) {
    case Outcome::converged: return "converged";
    case Outcome::slow: return "slow";
    case Outcome::oscillating: return "oscillating";
    case Outcome::diverged: return "diverged";
    case Outcome::failed: return "failed";
  }
  return "failed";
}

const std::vector<Outcome>& outcomes() {
  using O = Outcome;
  static const std::vector<O> all = {O::converged, O::slow, O::oscillating, O::diverged, O::failed};
  return all;
}

std::optional<Outcome> outcome_from_string(std::string_view s) { return value_named(outcomes(), s); }

}  // namespace stepgate
