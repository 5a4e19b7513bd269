#include "stepgate/sweep/registry.hpp"

#include <algorithm>
#include <map>
#include <mutex>
#include <stdexcept>

#include "stepgate/core/custom_kinds.hpp"
#include "stepgate/suite/suite.hpp"

namespace stepgate {

namespace {

struct Factories {
  std::mutex mutex;
  std::map<std::string, ProblemFactory, std::less<>> by_name;
};

Factories& factories() {
  static Factories f;
  return f;
}

}  // namespace

void register_problem_kind(const std::string& name, const std::vector<std::string>& keys,
                           bool uses_dataset, ProblemFactory factory) {
  const std::vector<std::string>& builtin = builtin_problem_kind_names();
  if (name == "custom" || std::find(builtin.begin(), builtin.end(), name) != builtin.end())
    throw std::invalid_argument("problem kind '" + name + "' is a built-in kind's name");
  const std::vector<std::string>& reserved = reserved_problem_keys();
  for (const std::string& key : keys)
    if (std::find(reserved.begin(), reserved.end(), key) != reserved.end())
      throw std::invalid_argument("key '" + key + "' of problem kind '" + name +
                                  "' is a word of every problem entry; choose another name");
  if (!factory) throw std::invalid_argument("problem kind '" + name + "' has no factory");
  Factories& f = factories();
  // The core registration checks the words and refuses a taken name; only then is the factory
  // stored, so a refused registration leaves nothing behind.
  std::lock_guard lock(f.mutex);
  register_custom_kind(CustomKind{name, keys, uses_dataset});
  f.by_name.emplace(name, std::move(factory));
}

ProblemFactory find_problem_factory(std::string_view name) {
  Factories& f = factories();
  std::lock_guard lock(f.mutex);
  const auto it = f.by_name.find(name);
  return it == f.by_name.end() ? ProblemFactory{} : it->second;
}

}  // namespace stepgate
