// The one reader of JSON documents: every value travels with its file and JSON pointer, so that
// each error names exactly where it is (InputError where = "file#/pointer") and says what was
// found and what was expected, in one wording: "expected <what>, found <the value>".
//
// Suites are read as ordered_json (their objects keep the order written: reference coefficients
// are listed in order); results, baselines and journals as json. BasicNode is the same reader
// for both: `suite_detail::Node` and `JsonField` are its two instantiations.
#pragma once
#include <cstdint>
#include <limits>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include <nlohmann/json.hpp>

namespace stepgate {

/// A number for JSON: the value itself when finite, otherwise null. JSON has no NaN and no
/// infinity, so ±inf is written as null too (and reads back as NaN).
nlohmann::json finite_or_null(double v);
/// A text for JSON: the text itself, or null when it is empty (results never write "" for
/// "none").
nlohmann::json text_or_null(const std::string& s);

/// "/" + the key with '~' and '/' escaped (RFC 6901).
std::string pointer_token(std::string_view key);

/// Levenshtein distance with adjacent transpositions counted as one edit.
std::size_t edit_distance(std::string_view a, std::string_view b);
/// " (did you mean 'X'?)" for the closest option within 2 edits or sharing a prefix of at
/// least 3 characters with `word`; "" when nothing is close.
std::string did_you_mean(std::string_view word, const std::vector<std::string>& options);
/// "a, b, c".
std::string join(const std::vector<std::string>& words);

/// A value as a message shows it: scalars as written (strings quoted, cut at 60 characters),
/// "an array", "an object", "an empty array", "null"; "nothing (no such key)" for a member
/// that does not exist.
template <class J>
std::string describe_json(const J* value);

/// A JSON value (of type J: nlohmann::json or nlohmann::ordered_json) and where it lies. A node
/// may stand for a member that does not exist (operator[] of a missing key): then every
/// accessor fails with "expected ..., found nothing (no such key)". The referenced document must
/// outlive the node.
template <class J>
class BasicNode {
 public:
  BasicNode(const J& value, std::string file, std::string pointer = "")
      : value_(&value), file_(std::move(file)), pointer_(std::move(pointer)) {}

  // ---- where ----
  const std::string& file() const { return file_; }
  const std::string& pointer() const { return pointer_; }
  std::string where() const { return file_ + "#" + pointer_; }
  /// InputError(where(), message).
  [[noreturn]] void fail(const std::string& message) const;
  /// Fails with "expected <expected>, found <the value>".
  [[noreturn]] void expected(std::string_view expected) const;

  // ---- structure ----
  bool exists() const { return value_ != nullptr; }
  bool is_null() const { return value_ != nullptr && value_->is_null(); }
  /// The value (it must exist).
  const J& json() const;
  /// True when this is an object that has the member `key`.
  bool has(std::string_view key) const;
  /// The member `key` of this object (this must be an object); it may be missing.
  BasicNode operator[](std::string_view key) const;
  /// The member `key`, which must exist ("missing required key 'k'").
  BasicNode member(std::string_view key) const;
  /// Element i of this array (this must be an array); missing when i is past the end.
  BasicNode operator[](std::size_t i) const;
  BasicNode element(std::size_t i) const { return (*this)[i]; }
  /// The number of elements of this array (this must be an array).
  std::size_t array_size() const;
  std::vector<BasicNode> elements() const;  ///< the elements of an array

  // ---- scalars ----
  double number() const;             ///< any finite number
  double number_or_missing() const;  ///< a number, or NaN for null
  long integer() const;              ///< a whole number (1e4 counts) in the range of long
  /// An integer written as one (either JSON integer form) that fits in I; 3.0 is refused.
  template <class I>
  I integer_as() const;
  std::uint64_t seed() const;  ///< a whole number >= 0 that fits 64 bits
  bool boolean() const;
  const std::string& string() const;
  std::string string_or_empty() const;  ///< a string, or "" for null (what text_or_null writes)
  /// A SHA-256 digest as results and baselines write it: 64 lower-case hex digits, or null for
  /// none ("" is read too, as stepgate 0.1 wrote it).
  std::string sha256() const;
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
  BasicNode(const J* value, std::string file, std::string pointer)
      : value_(value), file_(std::move(file)), pointer_(std::move(pointer)) {}
  const J* value_;  ///< nullptr: the member does not exist
  std::string file_;
  std::string pointer_;
};

template <class J>
template <class I>
I BasicNode<J>::integer_as() const {
  const J& j = json();
  if (j.is_number_unsigned()) {
    const auto v = j.template get<std::uint64_t>();
    if (std::in_range<I>(v)) return static_cast<I>(v);
  } else if (j.is_number_integer()) {
    const auto v = j.template get<std::int64_t>();
    if (std::in_range<I>(v)) return static_cast<I>(v);
  }
  expected("an integer from " + std::to_string(std::numeric_limits<I>::min()) + " to " +
           std::to_string(std::numeric_limits<I>::max()));
}

extern template class BasicNode<nlohmann::json>;
extern template class BasicNode<nlohmann::ordered_json>;

/// Results, baselines, journals (nlohmann::json).
using JsonField = BasicNode<nlohmann::json>;

}  // namespace stepgate
