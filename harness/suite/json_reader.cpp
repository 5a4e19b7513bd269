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

std::size_t edit_distance(std::string_view a, std::string_view b) {
  // Optimal string alignment: three rows of the dynamic programme.
  std::vector<std::size_t> before(b.size() + 1), previous(b.size() + 1), current(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) previous[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    current[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const std::size_t cost = a[i - 1] == b[j - 1] ? 0 : 1;
      current[j] = std::min({previous[j] + 1, current[j - 1] + 1, previous[j - 1] + cost});
      if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1])
        current[j] = std::min(current[j], before[j - 2] + 1);
    }
    before.swap(previous);
    previous.swap(current);
  }
  return previous[b.size()];
}

std::string did_you_mean(std::string_view word, const std::vector<std::string>& options) {
  std::string lower(word);
  std::transform(lower.begin(), lower.end(), lower.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  const std::string* best = nullptr;
  std::size_t best_distance = std::numeric_limits<std::size_t>::max();
  for (const std::string& option : options) {
    std::size_t d = edit_distance(lower, option);
    const std::size_t common = std::min(lower.size(), option.size());
    const bool prefix = common >= 3 && lower.compare(0, common, option, 0, common) == 0;
    if (d > 2 && !prefix) continue;
    if (prefix) d = std::min<std::size_t>(d, 2);
    if (d < best_distance) best = &option, best_distance = d;
  }
  return best ? " (did you mean '" + *best + "'?)" : "";
}

std::string join(const std::vector<std::string>& words) {
  return fmt::format("{}", fmt::join(words, ", "));
}

std::string describe(const Json& value) {
  if (value.is_array()) return value.empty() ? "an empty array" : "an array";
  if (value.is_object()) return value.empty() ? "an empty object" : "an object";
  std::string text = value.dump();
  if (text.size() > 60) text = text.substr(0, 57) + "...";
  return text;
}

std::string pointer_token(std::string_view key) {
  std::string token = "/";
  for (char c : key) {
    if (c == '~')
      token += "~0";
    else if (c == '/')
      token += "~1";
    else
      token += c;
  }
  return token;
}

// ---- Node ----

void Node::fail(const std::string& message) const { throw InputError(where(), message); }

void Node::expected(std::string_view expected) const {
  fail(fmt::format("expected {}, found {}", expected, describe(*value_)));
}

Node Node::element(std::size_t index) const {
  return Node((*value_)[index], file_, fmt::format("{}/{}", pointer_, index));
}

Node Node::member(std::string_view key) const {
  return Node(value_->at(std::string(key)), file_, pointer_ + pointer_token(key));
}

double Node::number() const {
  if (!value_->is_number()) expected("a number");
  const double v = value_->get<double>();
  if (!std::isfinite(v)) expected("a finite number");
  return v;
}

long Node::integer() const {
  if (value_->is_number_unsigned()) {
    const auto u = value_->get<std::uint64_t>();
    if (u > static_cast<std::uint64_t>(std::numeric_limits<long>::max()))
      expected("a whole number below 9.2e18 (this one is too large)");
    return static_cast<long>(u);
  }
  if (value_->is_number_integer()) return value_->get<long>();
  const double v =
      value_->is_number() ? value_->get<double>() : std::numeric_limits<double>::quiet_NaN();
  // 1e4 is a whole number written the short way; 2.5 is not.
  if (!(std::isfinite(v) && v == std::floor(v))) expected("a whole number");
  if (std::fabs(v) >= 9.0e15) expected("a whole number below 9e15 (this one is too large)");
  return static_cast<long>(v);
}

std::uint64_t Node::seed() const {
  if (value_->is_number_unsigned()) return value_->get<std::uint64_t>();
  const long v = integer();
  if (v < 0) expected("a whole number >= 0");
  return static_cast<std::uint64_t>(v);
}

bool Node::boolean() const {
  if (!value_->is_boolean()) expected("true or false");
  return value_->get<bool>();
}

const std::string& Node::string() const {
  if (!value_->is_string()) expected("a string");
  return value_->get_ref<const std::string&>();
}

std::vector<Node> Node::elements() const {
  if (!value_->is_array()) expected("an array");
  std::vector<Node> out;
  for (std::size_t i = 0; i < value_->size(); ++i) out.push_back(element(i));
  return out;
}

std::vector<std::string> Node::strings() const {
  if (!value_->is_array()) expected("an array of strings");
  std::vector<std::string> out;
  for (const Node& e : elements()) out.push_back(e.string());
  return out;
}

const std::string& Node::choice(const std::vector<std::string>& options,
                                std::string_view what) const {
  if (!value_->is_string()) expected(fmt::format("a {} (one of: {})", what, join(options)));
  const std::string& s = string();
  if (std::find(options.begin(), options.end(), s) == options.end())
    fail(fmt::format("unknown {} '{}'{}; expected one of: {}", what, s, did_you_mean(s, options),
                     join(options)));
  return s;
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
  if (!is_valid_name(name))
    node.fail(
        fmt::format("found {} {}; expected letters, digits, '.', '_' or '-' only (at least one)",
                    what, quote_text(name, 200)));
}

}  // namespace stepgate::suite_detail
