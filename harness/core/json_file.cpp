// JSON files: reading with "path:line:column" for syntax errors, writing atomically.
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <filesystem>

#include <fmt/format.h>

#include "stepgate/core/error.hpp"
#include "stepgate/core/input_file.hpp"
#include "stepgate/core/json_text.hpp"
#include "stepgate/core/output_files.hpp"
#include "stepgate/core/results.hpp"

namespace stepgate {

using nlohmann::json;
namespace fs = std::filesystem;

namespace {

// nlohmann's what() is "[json.exception.parse_error.101] parse error at line 1, column 5: <why>";
// the location is ours (from the byte offset), the why is nlohmann's.
std::string parse_error_reason(const json::parse_error& e) {
  const std::string what = e.what();
  const auto column = what.find("column ");
  const auto colon = what.find(": ", column == std::string::npos ? 0 : column);
  return colon == std::string::npos ? what : what.substr(colon + 2);
}

}  // namespace

json read_json_file(const std::string& path) {
  finish_interrupted_commit(path);  // never half of an interrupted set
  const std::string text = read_input_file(path);
  check_json_limits(text, path);
  json parsed;
  try {
    parsed = json::parse(text);
  } catch (const json::parse_error& e) {
    // e.byte counts the characters read, the offending one included (1-based).
    throw InputError(path + ":" + text_position(text, e.byte > 0 ? e.byte - 1 : 0), parse_error_reason(e));
  }
  if (const std::string twice = first_repeated_key(text); !twice.empty())
    throw InputError(path + "#" + twice, "found this key a second time in its object; expected each key once");
  return parsed;
}

Results read_results(const std::string& path) { return results_from_json(read_json_file(path), path); }

void write_text_atomically(const std::string& path, const std::string& text) { write_file_committed(path, text); }

std::string json_file_text(const json& j) {
  // Invalid UTF-8 in a string (a reason quoting a program's output) becomes U+FFFD rather than
  // failing a finished sweep at its last step.
  return j.dump(1, ' ', false, json::error_handler_t::replace) + "\n";
}

void write_json_atomically(const std::string& path, const json& j) { write_text_atomically(path, json_file_text(j)); }

}  // namespace stepgate
