// Reading JSON documents for the suite stage: every value travels with its file and JSON
// pointer, so that each error names exactly where it is (InputError where = "file#/pointer")
// and says what was found and what was expected. Internal to harness/suite/.
#pragma once
#include <cstdint>
#include <initializer_list>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <nlohmann/json.hpp>

namespace stepgate::suite_detail {

/// Objects keep their keys in the order written (reference coefficients are listed in order).
using Json = nlohmann::ordered_json;

/// Parses JSON text. Syntax errors: InputError("file:line:column", ...), line and column
/// 1-based, the column counting bytes. A key repeated within one object is an error at the
/// pointer of the repeat (nlohmann would silently keep one of them).
Json parse_json_text(const std::string& text, const std::string& file);

/// Levenshtein distance with adjacent transpositions counted as one edit.
std::size_t edit_distance(std::string_view a, std::string_view b);
/// " (did you mean 'X'?)" for the closest option within 2 edits or sharing a prefix of at
/// least 3 characters with `word`; "" when nothing is close.
std::string did_you_mean(std::string_view word, const std::vector<std::string>& options);
/// "a, b, c".
std::string join(const std::vector<std::string>& words);
/// A JSON value as a message shows it: scalars as written, "an array", "an object".
std::string describe(const Json& value);
/// "/" + the key with '~' and '/' escaped (RFC 6901).
std::string pointer_token(std::string_view key);

/// A JSON value and where it is.
class Node {
 public:
  Node(const Json& value, std::string file, std::string pointer)
      : value_(&value), file_(std::move(file)), pointer_(std::move(pointer)) {}

  const Json& json() const { return *value_; }
  const std::string& file() const { return file_; }
  const std::string& pointer() const { return pointer_; }
  std::string where() const { return file_ + "#" + pointer_; }
  [[noreturn]] void fail(const std::string& message) const;
  /// Fails with "expected <expected>, found <the value>".
  [[noreturn]] void expected(std::string_view expected) const;

  Node element(std::size_t index) const;    ///< array element (the value must be an array)
  Node member(std::string_view key) const;  ///< object member that exists

  bool is_null() const { return value_->is_null(); }
  double number() const;       ///< any finite number
  long integer() const;        ///< a whole number (1e4 counts) in the range of long
  std::uint64_t seed() const;  ///< a whole number >= 0 that fits 64 bits
  bool boolean() const;
  const std::string& string() const;
  std::vector<Node> elements() const;        ///< the elements of an array
  std::vector<std::string> strings() const;  ///< an array of strings
  /// A string among `options`; `what` names it in messages ("criterion").
  const std::string& choice(const std::vector<std::string>& options, std::string_view what) const;
  /// A number for which ok(v) holds, else "expected <expected>, found v".
  template <class Ok>
  double number_if(Ok ok, std::string_view expected) const {
    const double v = number();
    if (!ok(v)) this->expected(expected);
    return v;
  }
  template <class Ok>
  long integer_if(Ok ok, std::string_view expected) const {
    const long v = integer();
    if (!ok(v)) this->expected(expected);
    return v;
  }

 private:
  const Json* value_;
  std::string file_;
  std::string pointer_;
};

/// An object whose keys are all among `allowed` (unknown keys fail with a did-you-mean).
class ObjectNode {
 public:
  ObjectNode(const Node& node, std::initializer_list<std::string_view> allowed);
  ObjectNode(const Node& node, const std::vector<std::string>& allowed);

  const Node& node() const { return node_; }
  bool has(std::string_view key) const { return node_.json().contains(key); }
  std::optional<Node> find(std::string_view key) const;
  Node require(std::string_view key) const;  ///< "missing required key 'k'"
  std::vector<std::string> keys() const;     ///< in document order

 private:
  void check_keys(const std::vector<std::string>& allowed) const;
  Node node_;
};

/// The same settings object given at several levels (suite gate, defaults, problem): for each
/// key, the highest level that has it wins. Levels are lowest priority first.
struct Layers {
  std::vector<Node> levels;

  std::optional<Node> find(std::string_view key) const;
  /// The levels' members `key` (each must be an object), for merging that object key by key.
  Layers sub(std::string_view key) const;
  bool empty() const { return levels.empty(); }
};

/// Names of suite entries: [A-Za-z0-9._-]+, as they appear in case ids and file names.
bool is_valid_name(std::string_view name);
/// Fails at `node` unless `name` is valid; `what` names the entry ("problem name").
void check_name(const Node& node, const std::string& name, std::string_view what);

}  // namespace stepgate::suite_detail
