#include "stepgate/core/outcome.hpp"

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

std::optional<Outcome> outcome_from_string(std::string_view s) {
  for (Outcome o : {Outcome::converged, Outcome::slow, Outcome::oscillating, Outcome::diverged,
                    Outcome::failed})
    if (to_string(o) == s) return o;
  return std::nullopt;
}

}  // namespace stepgate
