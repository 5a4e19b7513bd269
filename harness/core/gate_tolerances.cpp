#include "stepgate/core/gate_tolerances.hpp"


namespace stepgate {

std::string_view to_string(Severity s) {
  switch (s) {
    case Severity::pass: return "pass";
    case Severity::warn: return "warn";
    case Severity::fail: return "fail";
  }
  return "fail";
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
