// Registering a C++ objective as a problem kind that suites can name:
//
//   stepgate::register_problem_kind("huber", {"delta"}, /*uses_dataset=*/true,
//       [](const nlohmann::json& keys, const stepgate::Dataset* data) {
//         return std::make_unique<Huber>(*data, keys.value("delta", 1.0));
//       });
//
// after which a suite entry {"name": "robust", "kind": "huber", "dataset": "d", "delta": 1.5}
// is parsed, planned and run like a built-in problem, and results.json records problem_kind
// "huber". Register before loading a suite; registrations last for the life of the program.
#pragma once
#include <functional>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include <nlohmann/json.hpp>

#include "stepgate/core/dataset.hpp"
#include "stepgate/problems/problem.hpp"

namespace stepgate {

/// Builds one problem of a registered kind. `keys` is an object holding exactly the kind's keys
/// that the suite entry sets (absent keys are absent: the factory chooses their defaults);
/// `data` is the entry's data set after its scaling, or nullptr for a kind without data. Called
/// once per (problem, scaling) by prepare_problems, on the thread that calls run_sweep (or
/// run_suite), before any run; the Problem it returns is then shared by the sweep's threads.
/// An exception becomes InputError at the entry's JSON pointer (exit 2); throw
/// InputError(KEY, message) to point at one of the kind's keys ("suite.json#/problems/0/delta").
using ProblemFactory =
    std::function<std::unique_ptr<Problem>(const nlohmann::json& keys, const Dataset* data)>;

/// Registers a kind. Thread-safe. Throws std::invalid_argument when `name` is not a lower-case
/// identifier or is taken (a built-in kind, "custom", or registered before), when a key is not an
/// identifier, is repeated or is one of the entry's own words (name, kind, dataset, reference and
/// the settings: scalings, optimizers, pinned, seeds, budget, ...), or when `factory` is empty.
/// With `uses_dataset` the entry requires "dataset", every scaling applies and mini-batch
/// optimizers may be used (through Problem::samples and gradient_rows).
void register_problem_kind(const std::string& name, const std::vector<std::string>& keys,
                           bool uses_dataset, ProblemFactory factory);

/// The factory of a registered kind, or nullptr.
ProblemFactory find_problem_factory(std::string_view name);

}  // namespace stepgate
