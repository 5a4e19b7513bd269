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

// nlohmann's what() starts with "[json.exception.parse_error.101] parse error at line L,
// column C: "; the location is ours, the rest is kept.
std::string syntax_message(const std::string& what) {
  const std::size_t at = what.find(": ");
  std::string message = at == std::string::npos ? what : what.substr(at + 2);
  return message + " (expected valid JSON)";
}

// Tracks the JSON pointer while nlohmann parses, to report a repeated key where it is.
struct Frame {
  bool object = false;
  std::string token;  // how the parent reaches this container
  std::set<std::string> keys;
  std::string key;
  std::size_t index = 0;
};

std::string child_token(const std::vector<Frame>& stack) {
  if (stack.empty()) return "";
  const Frame& top = stack.back();
  return top.object ? pointer_token(top.key) : fmt::format("/{}", top.index);
}

std::string path_of(const std::vector<Frame>& stack) {
  std::string p;
  for (const Frame& f : stack) p += f.token;
  return p;
}

}  // namespace

Json parse_json_text(const std::string& text, const std::string& file) {
  std::vector<Frame> stack;
  const Json::parser_callback_t track = [&](int, Json::parse_event_t event, Json& parsed) {
    using E = Json::parse_event_t;
    switch (event) {
      case E::object_start:
      case E::array_start: {
        Frame f;
        f.object = event == E::object_start;
        f.token = child_token(stack);
        stack.push_back(std::move(f));
        break;
      }
      case E::object_end:
      case E::array_end:
        if (!stack.empty()) stack.pop_back();
        if (!stack.empty() && !stack.back().object) ++stack.back().index;
        break;
      case E::key: {
        Frame& top = stack.back();
        top.key = parsed.get<std::string>();
        if (!top.keys.insert(top.key).second)
          throw InputError(file + "#" + path_of(stack) + pointer_token(top.key),
                           "found the key '" + top.key +
                               "' a second time in this object; expected each key once");
        break;
      }
      case E::value:
        if (!stack.empty() && !stack.back().object) ++stack.back().index;
        break;
    }
    return true;
  };
  check_json_limits(text, file);
  try {
    return Json::parse(text, track);
  } catch (const Json::parse_error& e) {
    throw InputError(file + ":" + text_position(text, e.byte == 0 ? 0 : e.byte - 1),
                     syntax_message(e.what()));
  }
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
