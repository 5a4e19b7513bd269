// Placeholders in a command's argv ("{rate}", "{optimizer.beta}", ...): one expansion used by
// suite validation (which names exist) and by run/ (their values).
#pragma once
#include <functional>
#include <optional>
#include <string>
#include <string_view>

namespace stepgate {

/// Replaces every {NAME} in `arg` by lookup(NAME). Throws std::invalid_argument naming the
/// placeholder when lookup gives nullopt, or when a '{' has no matching '}'. "{{" and "}}"
/// stand for literal braces.
std::string expand_placeholders(std::string_view arg,
                                const std::function<std::optional<std::string>(std::string_view)>& lookup);

/// The shortest decimal text that reads back as the same double (fmt's shortest round trip).
std::string exact_number(double v);

}  // namespace stepgate
