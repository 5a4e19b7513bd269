#include "stepgate/core/custom_kinds.hpp"

#include <algorithm>
#include <map>
#include <mutex>
#include <set>
#include <stdexcept>

namespace stepgate {

namespace {

struct Registry {
  std::mutex mutex;
  std::map<std::string, CustomKind, std::less<>> kinds;
};

Registry& registry() {
  static Registry r;
  return r;
}

}  // namespace

bool is_kind_identifier(std::string_view word) {
  if (word.empty() || word.front() < 'a' || word.front() > 'z') return false;
  return std::all_of(word.begin(), word.end(), [](char c) {
    return (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '_';
  });
}

bool is_key_identifier(std::string_view word) {
  const auto letter = [](char c) { return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z'); };
  if (word.empty() || !letter(word.front())) return false;
  return std::all_of(word.begin(), word.end(),
                     [&](char c) { return letter(c) || (c >= '0' && c <= '9') || c == '_'; });
}

void register_custom_kind(const CustomKind& kind) {
  if (!is_kind_identifier(kind.name))
    throw std::invalid_argument("problem kind name '" + kind.name +
                                "' is not a lower-case identifier ([a-z][a-z0-9_]*)");
  std::set<std::string> seen;
  for (const std::string& key : kind.keys) {
    if (!is_key_identifier(key))
      throw std::invalid_argument("key '" + key + "' of problem kind '" + kind.name +
                                  "' is not an identifier ([A-Za-z][A-Za-z0-9_]*)");
    if (!seen.insert(key).second)
      throw std::invalid_argument("key '" + key + "' of problem kind '" + kind.name + "' is listed twice");
  }
  Registry& r = registry();
  std::lock_guard lock(r.mutex);
  if (r.kinds.count(kind.name))
    throw std::invalid_argument("problem kind '" + kind.name + "' is already registered");
  r.kinds.emplace(kind.name, kind);
}

std::optional<CustomKind> find_custom_kind(std::string_view name) {
  Registry& r = registry();
  std::lock_guard lock(r.mutex);
  const auto it = r.kinds.find(name);
  if (it == r.kinds.end()) return std::nullopt;
  return it->second;
}

std::vector<std::string> custom_kind_names() {
  Registry& r = registry();
  std::lock_guard lock(r.mutex);
  std::vector<std::string> names;
  for (const auto& [name, kind] : r.kinds) names.push_back(name);
  return names;
}

}  // namespace stepgate
