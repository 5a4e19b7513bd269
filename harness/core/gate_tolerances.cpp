#include "stepgate/core/gate_tolerances.hpp"

#include <limits>

namespace stepgate {

std::string_view to_string(Severity s) {
  switch (s) {
    case Severity::pass: return "pass";
    case Severity::warn: return "warn";
    case Severity::fail: return "fail";
  }
  return "fail";
}

const std::array<ToleranceField, 8>& tolerance_fields() {
  constexpr double kNoLimit = std::numeric_limits<double>::max();
  using G = GateTolerances;
  static const std::array<ToleranceField, 8> fields = {{
      {"edge_moved", &G::edge_moved, 0.0, kNoLimit, "a number >= 0"},
      {"floor_moved", &G::floor_moved, 0.0, kNoLimit, "a number >= 0"},
      {"best_moved", &G::best_moved, 1.0, kNoLimit, "a number >= 1"},
      {"pinned_headroom", &G::pinned_headroom, 1.0, kNoLimit, "a number >= 1"},
      {"pinned_iterations", &G::pinned_iterations, 0.0, kNoLimit, "a number >= 0"},
      {"min_lre", &G::min_lre, 0.0, 17.0, "a number in [0, 17]"},
      {"theory", &G::theory, 1.0, kNoLimit, "a number >= 1"},
      {"theory_slack", &G::theory_slack, 0.0, 1.0, "a number in [0, 1]"},
  }};
  return fields;
}

const std::array<SeverityField, 3>& severity_fields() {
  using G = GateTolerances;
  static const std::array<SeverityField, 3> fields = {{
      {"case_added", &G::case_added},
      {"case_missing", &G::case_missing},
      {"data_changed", &G::data_changed},
  }};
  return fields;
}

const std::vector<std::string>& gate_keys() {
  static const std::vector<std::string> keys = [] {
    std::vector<std::string> out;
    for (const ToleranceField& f : tolerance_fields()) out.emplace_back(f.key);
    for (const SeverityField& f : severity_fields()) out.emplace_back(f.key);
    return out;
  }();
  return keys;
}

const std::vector<std::pair<std::string_view, std::string_view>>& renamed_gate_keys() {
  static const std::vector<std::pair<std::string_view, std::string_view>> renamed = {
      {"best_moved_factor", "best_moved"},
      {"min_headroom", "pinned_headroom"},
      {"iterations_grew", "pinned_iterations"},
      {"min_reference_digits", "min_lre"},
      {"theory_factor", "theory"},
  };
  return renamed;
}

}  // namespace stepgate
