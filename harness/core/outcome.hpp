// The five outcomes of a run (definitions: docs/design.md, "Runs and outcomes").
#pragma once
#include <optional>
#include <string_view>

namespace stepgate {

enum class Outcome { converged, slow, oscillating, diverged, failed };

std::string_view to_string(Outcome o);
/// Parses the lower-case name; nullopt for anything else.
std::optional<Outcome> outcome_from_string(std::string_view s);

}  // namespace stepgate
