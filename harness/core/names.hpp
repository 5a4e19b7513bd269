// Names of enum values as suites and results write them, from each enum's to_string: one list
// builder and one parser for every enum whose values a table lists (optimizer and schedule
// kinds, criteria, outcomes, run roles).
#pragma once
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace stepgate {

/// to_string of each value, in order.
template <class E>
std::vector<std::string> names_of(const std::vector<E>& values) {
  std::vector<std::string> out;
  out.reserve(values.size());
  for (E v : values) out.emplace_back(to_string(v));
  return out;
}

/// The value whose to_string is `name`; nullopt for anything else.
template <class E>
std::optional<E> value_named(const std::vector<E>& values, std::string_view name) {
  for (E v : values)
    if (to_string(v) == name) return v;
  return std::nullopt;
}

}  // namespace stepgate
