// Placeholders in a command's argv ("{rate}", "{optimizer.beta}", "{schedule.warmup}", ...): one
// expansion used by suite validation (which names exist) and by run/ (their values).
#pragma once
#include <functional>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace stepgate {

/// Replaces every {NAME} in `arg` by lookup(NAME). Throws std::invalid_argument naming the
/// placeholder when lookup gives nullopt, or when a '{' has no matching '}'. "{{" and "}}"
/// stand for literal braces.
std::string expand_placeholders(std::string_view arg,
                                const std::function<std::optional<std::string>(std::string_view)>& lookup);

/// What the placeholders of a command's argv stand for in one run (docs/design.md, "External
/// commands"): the one list of their names.
struct PlaceholderValues {
  std::string rate, seed, budget, optimizer, scaling, case_id, out;
  /// {optimizer.FIELD} and {schedule.FIELD}: "optimizer.beta" -> "0.9", ... (trainer_placeholders,
  /// core/trainer_fields.hpp): exactly the fields of the optimizer's kind and schedule's kind.
  const std::map<std::string, std::string>* fields = nullptr;
};

/// The value of placeholder `name`, or nullopt when there is no such placeholder.
std::optional<std::string> placeholder_value(std::string_view name, const PlaceholderValues& v);

/// True when some element of `argv` uses placeholder `name` (as a whole argument or inside one).
/// Malformed elements (a '{' without '}') count as not using it.
bool uses_placeholder(const std::vector<std::string>& argv, std::string_view name);

/// Placeholders that differ from run to run, so a serving program (started once for many runs)
/// cannot take them in its argv.
inline constexpr std::string_view kPerRunPlaceholders[] = {"rate", "seed", "out"};

/// The shortest decimal text that reads back as the same double (fmt's shortest round trip).
std::string exact_number(double v);

}  // namespace stepgate
