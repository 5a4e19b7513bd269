#include "stepgate/core/outcome_settings.hpp"

#include <cmath>

namespace stepgate {

std::string_view to_string(Criterion c) {
  switch (c) {
    case Criterion::automatic: return "auto";
    case Criterion::gap: return "gap";
    case Criterion::grad: return "grad";
    case Criterion::cost: return "cost";
    case Criterion::plateau: return "plateau";
  }
  return "auto";
}

std::optional<Criterion> criterion_from_string(std::string_view s) {
  for (Criterion c : {Criterion::automatic, Criterion::gap, Criterion::grad, Criterion::cost,
                      Criterion::plateau})
    if (to_string(c) == s) return c;
  return std::nullopt;
}

double OutcomeSettings::tolerance(Criterion resolved) const {
  if (!std::isnan(tol)) return tol;
  switch (resolved) {
    case Criterion::grad: return 1e-3;
    case Criterion::plateau: return 1e-8;
    default: return 1e-6;
  }
}

}  // namespace stepgate
