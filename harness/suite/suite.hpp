// A suite as the rest of the tool sees it: parsed, validated, relative paths resolved, defaults
// merged into every problem. Format: README "Suite format" and suites/schema/suite.schema.json.
#pragma once
#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <nlohmann/json.hpp>

#include "stepgate/core/command_spec.hpp"
#include "stepgate/core/gate_tolerances.hpp"
#include "stepgate/core/optimizer_spec.hpp"
#include "stepgate/core/problem_options.hpp"
#include "stepgate/core/rate_policy.hpp"
#include "stepgate/core/reference_values.hpp"
#include "stepgate/core/run_settings.hpp"
#include "stepgate/data/csv.hpp"
#include "stepgate/data/generate.hpp"
#include "stepgate/data/scaling.hpp"

namespace stepgate {

/// The "format" tag a suite file must carry.
inline constexpr std::string_view kSuiteFormat = "stepgate.suite/1";
/// The "format" tag of a reference file (published values of a linear model's parameters).
inline constexpr std::string_view kReferenceFormat = "stepgate.reference/1";

/// Largest data held in memory for one data set or one quadratic's matrix (8 GiB of doubles;
/// the machines have 24 GiB, and scalings copy the data once each).
inline constexpr double kMaxDataBytes = 8.0 * (1 << 30);
/// Longest suite name (it becomes the output folder's name, one path component).
inline constexpr std::size_t kMaxSuiteName = 200;

struct DatasetSpec {
  enum class Source { csv, idx, generated };
  std::string name;
  std::string pointer;  ///< JSON pointer of its entry in the suite, for messages
  std::string suite_path;  ///< the suite file as given, for messages
  Source source = Source::csv;
  // csv
  std::string path;     ///< resolved against the suite file's folder
  CsvOptions csv;
  std::string target;
  std::vector<std::string> features;  ///< empty = all but target
  // idx
  std::string labels_path;
  double pixel_scale = 1.0 / 255.0;
  // csv and idx
  long max_rows = 0;    ///< 0 = all rows
  // generated
  GeneratedSpec generated;
  /// csv: a command of the team's pipeline that writes the file before any case uses it
  /// ("produce": {"argv", "cwd", "env", "timeout"}); its file is then hashed like any other.
  std::optional<CommandSpec> produce;
};

/// `custom`: a kind registered by the program that links the library (core/custom_kinds.hpp,
/// sweep/registry.hpp); its name is ProblemSpec::custom_kind.
enum class ProblemKind { least_squares, logistic, softmax, quadratic, test_function, command, custom };
std::string_view to_string(ProblemKind k);
/// Parses the lower-case name of a built-in kind (as printed by to_string); nullopt for anything
/// else, also for "custom" (a suite names a registered kind by its own name).
std::optional<ProblemKind> problem_kind_from_string(std::string_view s);
/// The names of the built-in kinds, in declaration order (without "custom").
const std::vector<std::string>& builtin_problem_kind_names();
/// The keys of a problem entry that a registered kind may not claim as its own: "name", "kind",
/// "dataset", "reference" and the settings keys ("scalings", "optimizers", "seeds", ...).
const std::vector<std::string>& reserved_problem_keys();

/// Names a test_function problem may use. The suite stage may not include problems/, so it
/// keeps its own list; a unit test checks that it equals problems' test_function_names().
const std::vector<std::string>& suite_test_function_names();

struct ProblemSpec {
  std::string name;
  std::string pointer;                  ///< JSON pointer of the problem in the suite
  ProblemKind kind = ProblemKind::least_squares;
  std::string dataset;                  ///< linear models: key into Suite::datasets
  LinearModelOptions linear;
  long classes = 0;                     ///< softmax: 0 = max label + 1
  QuadraticOptions quadratic;
  std::string function;                 ///< test_function: name (see make_test_function)
  CommandSpec command;                  ///< command: the user's training program
  std::string custom_kind;              ///< custom: the registered kind's name
  nlohmann::json custom_params = nlohmann::json::object();  ///< custom: the kind's keys present in the entry
  std::vector<std::string> scalings;    ///< keys into Suite::scalings ("none" is always defined)
  std::vector<std::string> optimizers;  ///< keys into Suite::optimizers
  std::map<std::string, double> pinned; ///< optimizer label -> pinned rate
  RatePolicy rates;
  std::vector<std::uint64_t> seeds;     ///< the user's seed numbers (default {1, 2, 3})
  RunSettings run;
  std::optional<ReferenceValues> reference;  ///< in original units, in LinearLayout order
  GateTolerances gate;                  ///< suite gate section merged with the problem's own
};

/// The kind as results.json records it: the registered name for a custom kind, else to_string(kind).
std::string problem_kind_name(const ProblemSpec& p);
/// True when the problem is built on a data set (linear models, and registered kinds that use one):
/// then `dataset` names it and every scaling applies.
bool uses_dataset(const ProblemSpec& p);

struct Suite {
  std::string name;
  std::string description;
  std::string path;    ///< as given
  std::string sha256;  ///< of the suite file's bytes
  std::map<std::string, DatasetSpec> datasets;
  std::map<std::string, ScalingSpec> scalings;
  std::map<std::string, OptimizerSpec> optimizers;
  std::vector<ProblemSpec> problems;
  GateTolerances gate;  ///< suite-level gate section (problems hold merged copies)
};

/// Reads, parses and validates a suite file. Throws InputError whose where() is
/// "path" + JSON pointer (e.g. "suites/demo.json#/problems/2/optimizers/0") or "path:line:column"
/// for JSON syntax errors, and whose message says what was expected.
Suite load_suite(const std::string& path);
/// The same from text (`path` for messages and for resolving relative paths).
Suite parse_suite(const std::string& text, const std::string& path);

/// Reads a reference file: {"format": "stepgate.reference/1", "source": "...", "digits": 15,
/// "coefficients": {"name": value, ...}} (digits optional, in (0, 17]; default 15). Values keep
/// the order written. Errors: InputError at "path#/pointer" (or "path:line:column").
ReferenceValues load_reference(const std::string& path);

/// Loads a dataset as the suite describes it (data/ readers or generator), with its SHA-256.
/// csv and idx keep the first max_rows rows (0 = all). Errors keep the data reader's where
/// ("file:line:column", "file:byte N") and add the dataset's name and suite pointer to the message.
Dataset load_dataset(const DatasetSpec& spec);

}  // namespace stepgate
