// Strict reading of JSON values with the place of every error (file + "#" + JSON pointer), and
// the one rule for writing numbers: a value that does not exist or is not finite becomes null.
#pragma once
#include <cstdint>
#include <limits>
#include <string>
#include <string_view>
#include <utility>

#include <nlohmann/json.hpp>

namespace stepgate {

/// A number for JSON: the value itself when finite, otherwise null. JSON has no NaN and no
/// infinity, so ±inf is written as null too (and reads back as NaN).
nlohmann::json finite_or_null(double v);

/// A JSON value together with where it lies: the file (`path`) and the JSON pointer inside it.
/// Every accessor throws InputError(path + "#" + pointer, "expected ..., found ...") when the
/// value is missing or of the wrong type. The referenced json must outlive the field.
class JsonField {
 public:
  JsonField(const nlohmann::json& j, std::string path,
            nlohmann::json::json_pointer at = nlohmann::json::json_pointer());

  /// The member `key` of this object (this must be an object; the member must exist).
  JsonField operator[](const std::string& key) const;
  /// True when this is an object that has the member `key`.
  bool has(const std::string& key) const;
  /// Element i of this array (this must be an array with more than i elements).
  JsonField operator[](std::size_t i) const;
  /// The number of elements of this array (this must be an array).
  std::size_t array_size() const;

  bool exists() const { return json_ != nullptr; }
  bool is_null() const { return json_ != nullptr && json_->is_null(); }
  /// A number, or NaN for null.
  double number_or_missing() const;
  std::string string() const;
  /// A SHA-256 digest as results and baselines write it: 64 lower-case hex digits, or "" for
  /// none. Anything else is a damaged file (and would reach the reports as free text).
  std::string sha256() const;
  /// An integer (either JSON integer form) that fits in I; floats such as 3.0 are refused.
  template <class I>
  I integer() const;

  /// Throws InputError at this field: "expected <expected>, found <what is here>".
  [[noreturn]] void fail(std::string_view expected) const;

  const nlohmann::json& value() const;  ///< the value (this must exist)
  const std::string& path() const { return path_; }
  const nlohmann::json::json_pointer& pointer() const { return at_; }
  std::string where() const { return path_ + "#" + at_.to_string(); }

 private:
  JsonField(const nlohmann::json* j, std::string path, nlohmann::json::json_pointer at)
      : json_(j), path_(std::move(path)), at_(std::move(at)) {}
  const nlohmann::json* json_;  ///< nullptr: the member does not exist
  std::string path_;
  nlohmann::json::json_pointer at_;
};

template <class I>
I JsonField::integer() const {
  const nlohmann::json& j = value();
  if (j.is_number_unsigned()) {
    const auto v = j.get<std::uint64_t>();
    if (std::in_range<I>(v)) return static_cast<I>(v);
  } else if (j.is_number_integer()) {
    const auto v = j.get<std::int64_t>();
    if (std::in_range<I>(v)) return static_cast<I>(v);
  }
  fail("an integer from " + std::to_string(std::numeric_limits<I>::min()) + " to " +
       std::to_string(std::numeric_limits<I>::max()));
}

}  // namespace stepgate
