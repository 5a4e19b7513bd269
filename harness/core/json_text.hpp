// Checks on JSON text before it is parsed, shared by every JSON reader (suite, reference,
// results, baseline, journal, a program's output lines): nlohmann parses deep nesting, but
// deep documents then exhaust the stack when values are copied or walked, a number beyond a
// double's range throws without a position, and a NUL byte ends the parse early.
// Each becomes InputError("file:line:column").
#pragma once
#include <cstddef>
#include <string>
#include <string_view>

namespace stepgate {

/// Deepest nesting of arrays and objects accepted. Suites nest about 6 levels, results 7.
inline constexpr int kMaxJsonDepth = 200;

/// "line:column" (1-based; the column counts bytes) of the byte at `offset` (0-based).
std::string text_position(std::string_view text, std::size_t offset);

/// Throws InputError(file + ":line:column", why) at the first NUL byte (which the parser takes
/// for the end of the text), the first container nested deeper than kMaxJsonDepth, or the
/// first number whose magnitude does not fit a double (1e400). Text that
/// is not JSON is left for the parser to report.
void check_json_limits(std::string_view text, const std::string& file);

/// The same as a test: true when check_json_limits would pass (for a program's output lines).
bool within_json_limits(std::string_view text);

/// The JSON pointer of the first key that appears a second time in one object of `text`
/// ("/cases/3/id"), or "" when every object's keys are distinct (or `text` is not JSON: the
/// parser reports that). nlohmann keeps the last of two equal keys silently; every reader of
/// a user's JSON refuses them instead.
std::string first_repeated_key(std::string_view text);

}  // namespace stepgate
