#include "stepgate/core/json_text.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <optional>
#include <set>
#include <vector>

#include <nlohmann/json.hpp>

#include <fmt/format.h>

#include "stepgate/core/error.hpp"

namespace stepgate {

namespace {

struct Violation {
  std::size_t offset;
  std::string why;
};

bool number_char(char c) { return (c >= '0' && c <= '9') || c == '-' || c == '+' || c == '.' || c == 'e' || c == 'E'; }

// One pass over the text, skipping strings (with their escapes).
std::optional<Violation> first_violation(std::string_view text) {
  // The parser takes a NUL byte for the end of the input and would ignore what follows it;
  // JSON text never holds one (inside a string it is written \u0000).
  if (const std::size_t nul = text.find('\0'); nul != std::string_view::npos)
    return Violation{nul, "found a NUL byte (0x00); expected JSON text, which never contains one (inside a "
                          "string it is written \\u0000)"};
  int depth = 0;
  for (std::size_t i = 0; i < text.size(); ++i) {
    const char c = text[i];
    if (c == '"') {
      for (++i; i < text.size() && text[i] != '"'; ++i)
        if (text[i] == '\\') ++i;
      continue;
    }
    if (c == '[' || c == '{') {
      if (++depth > kMaxJsonDepth)
        return Violation{i, fmt::format("found arrays or objects nested more than {} levels deep; expected a "
                                        "shallower document", kMaxJsonDepth)};
    } else if (c == ']' || c == '}') {
      depth = std::max(0, depth - 1);
    } else if (c == '-' || (c >= '0' && c <= '9')) {
      std::size_t end = i;
      while (end < text.size() && number_char(text[end])) ++end;
      const std::string token(text.substr(i, end - i));
      if (token.find_first_of("eE") != std::string::npos || token.size() > 300) {
        const double v = std::strtod(token.c_str(), nullptr);
        if (std::isinf(v))
          return Violation{i, fmt::format("found the number {} which is too large for a double (at most about "
                                          "1.8e308); expected a finite number",
                                          token.size() > 40 ? token.substr(0, 40) + "..." : token)};
      }
      i = end - 1;
    }
  }
  return std::nullopt;
}

}  // namespace

std::string text_position(std::string_view text, std::size_t offset) {
  offset = std::min(offset, text.size());
  long line = 1;
  std::size_t line_start = 0;
  for (std::size_t i = 0; i < offset; ++i)
    if (text[i] == '\n') ++line, line_start = i + 1;
  return fmt::format("{}:{}", line, offset - line_start + 1);
}

void check_json_limits(std::string_view text, const std::string& file) {
  if (const std::optional<Violation> v = first_violation(text))
    throw InputError(file + ":" + text_position(text, v->offset), v->why);
}

bool within_json_limits(std::string_view text) { return !first_violation(text); }

namespace {

// Walks the document as nlohmann's SAX parser reads it, with the pointer of where it is, and
// stops at the first key seen twice in one object.
class RepeatedKeyFinder : public nlohmann::json_sax<nlohmann::json> {
 public:
  std::string found;
  bool null() override { return value(); }
  bool boolean(bool) override { return value(); }
  bool number_integer(number_integer_t) override { return value(); }
  bool number_unsigned(number_unsigned_t) override { return value(); }
  bool number_float(number_float_t, const string_t&) override { return value(); }
  bool string(string_t&) override { return value(); }
  bool binary(binary_t&) override { return value(); }
  bool start_object(std::size_t) override { return open(true); }
  bool start_array(std::size_t) override { return open(false); }
  bool end_object() override { return close(); }
  bool end_array() override { return close(); }
  bool key(string_t& k) override {
    Frame& top = stack_.back();
    top.key = k;
    if (top.keys.insert(k).second) return true;
    for (const Frame& f : stack_) found += f.token;
    found += escape(k);
    return false;  // stop here
  }
  bool parse_error(std::size_t, const std::string&, const nlohmann::detail::exception&) override { return false; }

 private:
  struct Frame {
    bool object = false;
    std::string token;  // how the parent reaches this container
    std::set<std::string> keys;
    std::string key;
    std::size_t index = 0;
  };
  static std::string escape(const std::string& key) {  // RFC 6901
    std::string t = "/";
    for (char c : key) t += c == '~' ? std::string("~0") : c == '/' ? std::string("~1") : std::string(1, c);
    return t;
  }
  std::string child_token() const {
    if (stack_.empty()) return "";
    const Frame& top = stack_.back();
    return top.object ? escape(top.key) : "/" + std::to_string(top.index);
  }
  bool value() {
    if (!stack_.empty() && !stack_.back().object) ++stack_.back().index;
    return true;
  }
  bool open(bool object) {
    Frame f;
    f.object = object;
    f.token = child_token();
    stack_.push_back(std::move(f));
    return true;
  }
  bool close() {
    stack_.pop_back();
    return value();
  }
  std::vector<Frame> stack_;
};

}  // namespace

std::string first_repeated_key(std::string_view text) {
  if (text.find('"') == std::string_view::npos) return "";
  RepeatedKeyFinder finder;
  nlohmann::json::sax_parse(text, &finder, nlohmann::json::input_format_t::json, false);
  return finder.found;
}

}  // namespace stepgate
