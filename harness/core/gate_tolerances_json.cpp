#include "stepgate/core/gate_tolerances_json.hpp"

namespace stepgate {

std::optional<Severity> severity_from_string(std::string_view s) {
  for (Severity v : {Severity::pass, Severity::warn, Severity::fail})
    if (to_string(v) == s) return v;
  return std::nullopt;
}

nlohmann::json to_json(const GateTolerances& g) {
  return {{"edge_moved", g.edge_moved},
          {"floor_moved", g.floor_moved},
          {"best_moved_factor", g.best_moved_factor},
          {"min_headroom", g.min_headroom},
          {"iterations_grew", g.iterations_grew},
          {"min_reference_digits", g.min_reference_digits},
          {"theory_factor", g.theory_factor},
          {"theory_slack", g.theory_slack},
          {"case_added", std::string(to_string(g.case_added))},
          {"case_missing", std::string(to_string(g.case_missing))},
          {"data_changed", std::string(to_string(g.data_changed))}};
}

GateTolerances gate_tolerances_from_json(const JsonField& f) {
  GateTolerances g;
  if (!f.exists() || f.is_null()) return g;
  auto number = [&](const char* key, double& v) {
    if (f.has(key)) v = f[key].number_or_missing();
  };
  auto severity = [&](const char* key, Severity& v) {
    if (!f.has(key)) return;
    const JsonField s = f[key];
    auto parsed = severity_from_string(s.string());
    if (!parsed) s.fail("\"pass\", \"warn\" or \"fail\"");
    v = *parsed;
  };
  number("edge_moved", g.edge_moved);
  number("floor_moved", g.floor_moved);
  number("best_moved_factor", g.best_moved_factor);
  number("min_headroom", g.min_headroom);
  number("iterations_grew", g.iterations_grew);
  number("min_reference_digits", g.min_reference_digits);
  number("theory_factor", g.theory_factor);
  number("theory_slack", g.theory_slack);
  severity("case_added", g.case_added);
  severity("case_missing", g.case_missing);
  severity("data_changed", g.data_changed);
  return g;
}

}  // namespace stepgate
