// JSON files: reading with "path:line:column" for syntax errors, writing atomically.
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <sstream>

#include <fmt/format.h>

#include "stepgate/core/error.hpp"
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

std::string line_column(const std::string& text, std::size_t byte) {
  // e.byte counts the characters read, the offending one included (1-based).
  const std::size_t at = std::min(byte > 0 ? byte - 1 : 0, text.size());
  const auto line = 1 + std::count(text.begin(), text.begin() + static_cast<long>(at), '\n');
  const auto newline = at == 0 ? std::string::npos : text.rfind('\n', at - 1);
  const std::size_t column = newline == std::string::npos ? at + 1 : at - newline;
  return fmt::format("{}:{}", line, column);
}

}  // namespace

json read_json_file(const std::string& path) {
  std::error_code ec;
  if (fs::is_directory(path, ec)) throw InputError(path, "cannot read the file: it is a directory");
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path, fmt::format("cannot read the file: {}", std::strerror(errno)));
  std::ostringstream buffer;
  buffer << in.rdbuf();
  if (in.bad()) throw InputError(path, fmt::format("cannot read the file: {}", std::strerror(errno)));
  const std::string text = std::move(buffer).str();
  try {
    return json::parse(text);
  } catch (const json::parse_error& e) {
    throw InputError(path + ":" + line_column(text, e.byte), parse_error_reason(e));
  }
}

Results read_results(const std::string& path) { return results_from_json(read_json_file(path), path); }

void write_text_atomically(const std::string& path, const std::string& text) {
  const fs::path target(path);
  std::error_code ec;
  if (target.has_parent_path()) {
    fs::create_directories(target.parent_path(), ec);
    if (ec) throw ToolError(fmt::format("cannot create the directory of {}: {}", path, ec.message()));
  }
  const std::string temp = fmt::format("{}.tmp-{}", path, ::getpid());
  std::FILE* out = std::fopen(temp.c_str(), "wb");
  if (out == nullptr) throw ToolError(fmt::format("cannot write {}: {}", temp, std::strerror(errno)));
  const bool written = std::fwrite(text.data(), 1, text.size(), out) == text.size();
  int error = written ? 0 : errno;
  if (std::fclose(out) != 0 && error == 0) error = errno;
  if (!written || error != 0) {
    fs::remove(temp, ec);
    throw ToolError(fmt::format("cannot write {}: {}", temp, std::strerror(error != 0 ? error : EIO)));
  }
  fs::rename(temp, target, ec);
  if (ec) {
    const std::string reason = ec.message();
    fs::remove(temp, ec);
    throw ToolError(fmt::format("cannot rename {} to {}: {}", temp, path, reason));
  }
}

void write_json_atomically(const std::string& path, const json& j) {
  // Invalid UTF-8 in a string (a reason quoting a program's output) becomes U+FFFD rather than
  // failing a finished sweep at its last step.
  write_text_atomically(path, j.dump(1, ' ', false, json::error_handler_t::replace) + "\n");
}

}  // namespace stepgate
