#include "stepgate/core/gate_tolerances_json.hpp"

#include "stepgate/core/names.hpp"

namespace stepgate {

std::optional<Severity> severity_from_string(std::string_view s) {
  static const std::vector<Severity> all = {Severity::pass, Severity::warn, Severity::fail};
  return value_named(all, s);
}

nlohmann::json to_json(const GateTolerances& g) {
  nlohmann::json out = nlohmann::json::object();
  for (const ToleranceField& f : tolerance_fields()) out[std::string(f.key)] = g.*f.member;
  for (const SeverityField& f : severity_fields()) out[std::string(f.key)] = std::string(to_string(g.*f.member));
  return out;
}

GateTolerances gate_tolerances_from_json(const JsonField& f) {
  GateTolerances g;
  if (!f.exists() || f.is_null()) return g;
  for (const ToleranceField& t : tolerance_fields()) {
    if (!f.has(std::string(t.key))) continue;
    const JsonField v = f[std::string(t.key)];
    // The same ranges as in a suite: a results file whose gate a suite could not have set is
    // damaged, and its rules would compare against nothing (null) or pass everything (< 0).
    if (v.is_null() || !v.json().is_number() || !t.range.admits(v.number_or_missing())) v.expected(t.range.expected());
    g.*t.member = v.number_or_missing();
  }
  for (const SeverityField& s : severity_fields()) {
    if (!f.has(std::string(s.key))) continue;
    const JsonField v = f[std::string(s.key)];
    auto parsed = severity_from_string(v.string());
    if (!parsed) v.expected("\"pass\", \"warn\" or \"fail\"");
    g.*s.member = *parsed;
  }
  return g;
}

}  // namespace stepgate
