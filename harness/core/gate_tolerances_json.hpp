// JSON form of the gate tolerances (stored with every case in results.json, so that `check`
// needs no suite file).
#pragma once
#include <nlohmann/json.hpp>

#include "stepgate/core/gate_tolerances.hpp"
#include "stepgate/core/json_node.hpp"

namespace stepgate {

std::optional<Severity> severity_from_string(std::string_view s);
nlohmann::json to_json(const GateTolerances& g);
/// Missing members keep their defaults (older results files); wrong types are InputErrors.
GateTolerances gate_tolerances_from_json(const JsonField& f);

}  // namespace stepgate
