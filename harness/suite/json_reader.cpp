#include "stepgate/suite/json_reader.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <limits>
#include <set>

#include <fmt/format.h>

#include "stepgate/core/quote_text.hpp"

#include "stepgate/core/error.hpp"
#include "stepgate/core/json_text.hpp"

namespace stepgate::suite_detail {
namespace {

// A JSON pointer token back to its key (RFC 6901: ~1 is '/', ~0 is '~').
std::string pointer_key(const std::string& token) {
  std::string key;
  for (std::size_t i = 0; i < token.size(); ++i) {
    if (token[i] == '~' && i + 1 < token.size()) key += token[++i] == '1' ? '/' : '~';
    else key += token[i];
  }
  return key;
}

// nlohmann's what() starts with "[json.exception.parse_error.101] parse error at line L,
// column C: "; the location is ours, the rest is kept.
std::string syntax_message(const std::string& what) {
  const std::size_t at = what.find(": ");
  std::string message = at == std::string::npos ? what : what.substr(at + 2);
  return message + " (expected valid JSON)";
}

}  // namespace

Json parse_json_text(const std::string& text, const std::string& file) {
  check_json_limits(text, file);
  Json parsed;
  try {
    parsed = Json::parse(text);
  } catch (const Json::parse_error& e) {
    throw InputError(file + ":" + text_position(text, e.byte == 0 ? 0 : e.byte - 1),
                     syntax_message(e.what()));
  }
  // nlohmann keeps the last of two equal keys; a suite gives each key once (core/json_text).
  if (const std::string pointer = first_repeated_key(text); !pointer.empty()) {
    const std::string key = pointer_key(pointer.substr(pointer.rfind('/') + 1));
    throw InputError(file + "#" + pointer,
                     "found the key '" + key + "' a second time in this object; expected each key once");
  }
  return parsed;
}

// ---- ObjectNode ----

ObjectNode::ObjectNode(const Node& node, std::initializer_list<std::string_view> allowed)
    : node_(node) {
  check_keys(std::vector<std::string>(allowed.begin(), allowed.end()));
}

ObjectNode::ObjectNode(const Node& node, const std::vector<std::string>& allowed) : node_(node) {
  check_keys(allowed);
}

void ObjectNode::check_keys(const std::vector<std::string>& allowed) const {
  if (!node_.json().is_object()) node_.expected("an object");
  for (const auto& item : node_.json().items())
    if (std::find(allowed.begin(), allowed.end(), item.key()) == allowed.end())
      node_.member(item.key())
          .fail(fmt::format("unknown key '{}'{}; expected one of: {}", item.key(),
                            did_you_mean(item.key(), allowed), join(allowed)));
}

std::optional<Node> ObjectNode::find(std::string_view key) const {
  if (!has(key)) return std::nullopt;
  return node_.member(key);
}

Node ObjectNode::require(std::string_view key) const {
  if (!has(key)) node_.fail(fmt::format("missing required key '{}'", key));
  return node_.member(key);
}

std::vector<std::string> ObjectNode::keys() const {
  std::vector<std::string> out;
  for (const auto& item : node_.json().items()) out.push_back(item.key());
  return out;
}

// ---- Layers ----

std::optional<Node> Layers::find(std::string_view key) const {
  for (auto it = levels.rbegin(); it != levels.rend(); ++it)
    if (it->json().contains(key)) return it->member(key);
  return std::nullopt;
}

Layers Layers::sub(std::string_view key) const {
  Layers out;
  for (const Node& level : levels)
    if (level.json().contains(key)) {
      Node member = level.member(key);
      if (!member.json().is_object()) member.expected("an object");
      out.levels.push_back(member);
    }
  return out;
}

bool is_valid_name(std::string_view name) {
  return !name.empty() && std::all_of(name.begin(), name.end(), [](unsigned char c) {
    return std::isalnum(c) || c == '.' || c == '_' || c == '-';
  });
}

void check_name(const Node& node, const std::string& name, std::string_view what) {
  if (name == "." || name == "..")  // a name becomes a folder or file name: these two are folders already
    node.fail(fmt::format("found {} {}, which names a folder itself; expected a name with a letter, digit, '_' or '-'",
                          what, quote_text(name, 200)));
  if (!is_valid_name(name))
    node.fail(
        fmt::format("found {} {}; expected letters, digits, '.', '_' or '-' only (at least one)",
                    what, quote_text(name, 200)));
}

}  // namespace stepgate::suite_detail
