// The names and suite keys of problem kinds registered by a program that links the library
// (sweep/registry.hpp registers a kind together with its factory). The suite stage reads this
// list to accept `"kind": "NAME"` and the kind's own keys; it never sees the factory.
#pragma once
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace stepgate {

struct CustomKind {
  std::string name;               ///< the value of "kind" in a suite; recorded as problem_kind
  std::vector<std::string> keys;  ///< the suite keys of the kind, beside name/kind and the settings
  bool uses_dataset = false;      ///< true: "dataset" is required and "scalings" apply
};

/// Adds a kind. Thread-safe. Throws std::invalid_argument when the name is not a lower-case
/// identifier ([a-z][a-z0-9_]*), a key is not an identifier ([A-Za-z][A-Za-z0-9_]*), a key is
/// repeated, or the name is already registered. Programs call register_problem_kind (sweep/registry.hpp), which also checks the
/// name and keys against the suite's own words and stores the factory.
void register_custom_kind(const CustomKind& kind);

/// The registered kind of that name, or nullopt. Thread-safe.
std::optional<CustomKind> find_custom_kind(std::string_view name);

/// The names of all registered kinds, sorted. Thread-safe.
std::vector<std::string> custom_kind_names();

/// True for a lower-case identifier: [a-z][a-z0-9_]* (kind names).
bool is_kind_identifier(std::string_view word);
/// True for an identifier: [A-Za-z][A-Za-z0-9_]* (kind keys).
bool is_key_identifier(std::string_view word);

}  // namespace stepgate
