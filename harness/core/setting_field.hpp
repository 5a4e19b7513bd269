// One setting of a plain settings struct (rates, outcome, run), declared once: its key as a
// suite writes it, its member, and the range it must lie in. The suite reader, the allowed-key
// lists and validate() all read a struct's table, and tests/unit/test_schema_keys.cpp checks
// that the JSON Schema of suites has the same keys and ranges. Defaults and their reasons are
// the member initializers and their comments, beside the members.
#pragma once
#include <string>
#include <string_view>
#include <variant>
#include <vector>

#include <fmt/format.h>

#include "stepgate/core/range.hpp"

namespace stepgate {

template <class S>
struct SettingField {
  std::string_view key;
  std::variant<double S::*, long S::*, int S::*, bool S::*> member;
  Range range{};             ///< numbers and counts (range.whole for long and int members)
  std::string_view note{};   ///< added to the range's words: "(0 = automatic)"
  bool unset_ok = false;     ///< a number member may be NaN, meaning "not set"

  bool is_flag() const { return std::holds_alternative<bool S::*>(member); }
  /// What a value must be: "a whole number >= 0 (0 = automatic)", "true or false".
  std::string expected() const {
    if (is_flag()) return "true or false";
    return note.empty() ? range.expected() : fmt::format("{} {}", range.expected(), note);
  }
  /// The member's value as a number (flags are not numbers: 0 or 1).
  double value(const S& s) const {
    return std::visit([&](auto m) { return static_cast<double>(s.*m); }, member);
  }
  /// Every number of `s` lies in its range (NaN only where unset_ok).
  bool admits(const S& s) const {
    if (is_flag()) return true;
    const double v = value(s);
    return range.admits(v) || (unset_ok && v != v);
  }
};

/// The keys of a table, in its order.
template <class S>
std::vector<std::string> field_keys(const std::vector<SettingField<S>>& fields) {
  std::vector<std::string> out;
  for (const auto& f : fields) out.emplace_back(f.key);
  return out;
}

/// Appends "key = value, expected ..." for each member of `s` outside its range.
template <class S>
void check_fields(const S& s, const std::vector<SettingField<S>>& fields, std::vector<std::string>& errors,
                  std::string_view prefix = "") {
  for (const auto& f : fields)
    if (!f.admits(s)) errors.push_back(fmt::format("{}{} = {}, expected {}", prefix, f.key, f.value(s), f.expected()));
}

}  // namespace stepgate
