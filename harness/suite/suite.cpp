// load_suite / parse_suite: the top level of a suite file, and the names the suite stage owns.
#include "stepgate/suite/suite.hpp"

#include <filesystem>

#include <fmt/format.h>

#include "stepgate/data/file_io.hpp"
#include "stepgate/data/sha256.hpp"
#include "stepgate/core/names.hpp"
#include "stepgate/suite/suite_sections.hpp"

namespace stepgate {

std::string_view to_string(ProblemKind k) {
  switch (k) {
    case ProblemKind::least_squares:
      return "least_squares";
    case ProblemKind::logistic:
      return "logistic";
    case ProblemKind::softmax:
      return "softmax";
    case ProblemKind::quadratic:
      return "quadratic";
    case ProblemKind::test_function:
      return "test_function";
    case ProblemKind::command:
      return "command";
    case ProblemKind::custom:
      return "custom";
  }
  return "least_squares";
}

namespace {
const std::vector<ProblemKind>& builtin_kinds() {
  using K = ProblemKind;
  static const std::vector<K> kinds = {K::least_squares, K::logistic,      K::softmax,
                                       K::quadratic,     K::test_function, K::command};
  return kinds;
}
}  // namespace

std::optional<ProblemKind> problem_kind_from_string(std::string_view s) { return value_named(builtin_kinds(), s); }

const std::vector<std::string>& builtin_problem_kind_names() {
  static const std::vector<std::string> names = names_of(builtin_kinds());
  return names;
}

const std::vector<std::string>& reserved_problem_keys() {
  static const std::vector<std::string> keys = [] {
    std::vector<std::string> k = {"name", "kind", "dataset", "reference"};
    for (const std::string& s : suite_detail::settings_keys()) k.push_back(s);
    return k;
  }();
  return keys;
}

std::string problem_kind_name(const ProblemSpec& p) {
  return p.kind == ProblemKind::custom ? p.custom_kind : std::string(to_string(p.kind));
}

bool uses_dataset(const ProblemSpec& p) {
  switch (p.kind) {
    case ProblemKind::least_squares:
    case ProblemKind::logistic:
    case ProblemKind::softmax:
      return true;
    case ProblemKind::custom:
      return !p.dataset.empty();  // read_problem requires one exactly when the kind uses data
    default:
      return false;
  }
}

const std::vector<std::string>& suite_test_function_names() {
  // Moré, Garbow & Hillstrom (1981) functions built by problems/test_functions.cpp.
  static const std::vector<std::string> names = {"rosenbrock",     "freudenstein_roth", "beale",
                                                 "helical_valley", "powell_singular",   "wood"};
  return names;
}

namespace suite_detail {

std::string resolve_path(const Node& document_node, const std::string& written) {
  namespace fs = std::filesystem;
  const fs::path p(written);
  if (p.empty() || p.is_absolute()) return written;
  const fs::path joined = fs::path(document_node.file()).parent_path() / p;
  // As the kernel resolves it: "lnk/../data" through a symlinked folder lnk is not "data", so
  // the symlinks of the existing part are followed before ".." is applied (a purely lexical
  // normal form could name, and open, another file). Shown relative to the working folder
  // where it lies below it (as the user typed the suite's path), else absolute.
  std::error_code ec;
  const fs::path resolved = fs::weakly_canonical(joined, ec);
  if (ec) return joined.lexically_normal().string();
  const fs::path shown = fs::proximate(resolved, ec);
  return ec || shown.empty() || *shown.begin() == ".." ? resolved.string() : shown.string();
}

void require_file(const Node& node, const std::string& path, std::string_view what) {
  if (path.empty()) node.expected(fmt::format("the path of a {}", what));
  std::error_code ec;
  if (!std::filesystem::is_regular_file(path, ec))
    node.fail(fmt::format(
        "found no {} at '{}'{}; expected an existing file (relative paths are "
        "relative to the folder of '{}')",
        what, path, std::filesystem::exists(path, ec) ? " (it is not a regular file)" : "",
        node.file()));
}

}  // namespace suite_detail

Suite parse_suite(const std::string& text, const std::string& path) {
  using namespace suite_detail;
  const Json document = parse_json_text(text, path);
  const Node root(document, path, "");
  const ObjectNode top(root, {"format", "name", "description", "datasets", "scalings", "optimizers",
                              "defaults", "problems", "gate"});
  const Node format = top.require("format");
  if (!format.json().is_string() || format.string() != kSuiteFormat)
    format.expected(fmt::format("\"{}\"", kSuiteFormat));

  Suite suite;
  suite.path = path;
  suite.sha256 = sha256_hex(text);
  const Node name = top.require("name");
  suite.name = name.string();
  check_name(name, suite.name, "suite name");
  // The default output folder is reports/out/NAME: one path component (at most 255 bytes).
  if (suite.name.size() > kMaxSuiteName)
    name.fail(fmt::format("found a suite name too long ({} characters); expected at most {} (it names the output folder)",
                          suite.name.size(), kMaxSuiteName));
  if (auto n = top.find("description")) suite.description = n->string();
  if (auto n = top.find("datasets")) suite.datasets = read_datasets(*n, path);
  suite.scalings = read_scalings(top.find("scalings"));
  suite.optimizers = read_optimizers(top.find("optimizers"));
  const auto gate = top.find("gate");
  suite.gate = read_gate(gate ? Layers{{*gate}} : Layers{});
  const auto defaults = top.find("defaults");
  if (defaults) ObjectNode(*defaults, settings_keys());

  const Node problems = top.require("problems");
  if (!problems.json().is_array() || problems.json().empty())
    problems.expected("a non-empty array of problems");
  for (const Node& entry : problems.elements()) {
    ProblemSpec p = read_problem(entry, defaults, gate, suite);
    for (const ProblemSpec& earlier : suite.problems)
      if (earlier.name == p.name)
        entry.member("name").fail(
            fmt::format("found problem name '{}' again (first at {}); expected "
                        "distinct problem names",
                        p.name, earlier.pointer));
    suite.problems.push_back(std::move(p));
  }
  return suite;
}

Suite load_suite(const std::string& path) { return parse_suite(read_raw_file(path), path); }

}  // namespace stepgate
