#include "stepgate/sweep/prepare.hpp"

#include <chrono>
#include <cmath>
#include <filesystem>
#include <set>

#include <fmt/format.h>

#include "stepgate/run/child_process.hpp"
#include "stepgate/core/error.hpp"
#include "stepgate/data/column_stats.hpp"
#include "stepgate/data/scaling.hpp"
#include "stepgate/problems/linear_models.hpp"
#include "stepgate/problems/quadratic.hpp"
#include "stepgate/problems/test_functions.hpp"
#include "stepgate/sweep/registry.hpp"

namespace stepgate {

namespace {

// A registered kind's problem from its factory. Its exceptions are input errors at the entry
// (or at one of the kind's keys, when the factory threw InputError(KEY, ...)).
std::unique_ptr<Problem> build_custom(const ProblemSpec& p, const Dataset* data, const std::string& where) {
  const ProblemFactory factory = find_problem_factory(p.custom_kind);
  if (!factory)
    throw InputError(where, fmt::format("problem kind '{}' has no factory (register it with "
                                        "register_problem_kind, sweep/registry.hpp)", p.custom_kind));
  std::unique_ptr<Problem> problem;
  try {
    problem = factory(p.custom_params, data);
  } catch (const InputError& e) {
    if (p.custom_params.contains(e.where()))
      throw InputError(where + "/" + e.where(), fmt::format("problem kind '{}': {}", p.custom_kind, e.message()));
    throw InputError(where, fmt::format("problem kind '{}' could not build the problem: {}", p.custom_kind, e.what()));
  } catch (const std::exception& e) {
    throw InputError(where, fmt::format("problem kind '{}' could not build the problem: {}", p.custom_kind, e.what()));
  }
  if (!problem) throw InputError(where, fmt::format("problem kind '{}': the factory returned no problem", p.custom_kind));
  if (problem->dim() < 1)
    throw InputError(where, fmt::format("problem kind '{}': the problem has {} parameters; expected at least 1",
                                        p.custom_kind, problem->dim()));
  return problem;
}

// `data` (null for kinds without one) is moved into a built-in linear model, which takes its
// features over: a data set is then held once, as the model's [X 1].
std::unique_ptr<Problem> build(const ProblemSpec& p, Dataset* data, const std::string& where) {
  if (p.kind == ProblemKind::custom) return build_custom(p, data, where);
  try {
    switch (p.kind) {
      case ProblemKind::least_squares: return make_least_squares(std::move(*data), p.linear);
      case ProblemKind::logistic: return make_logistic(std::move(*data), p.linear);
      case ProblemKind::softmax: return make_softmax(std::move(*data), p.linear, p.classes);
      case ProblemKind::quadratic: return make_quadratic(p.quadratic);
      case ProblemKind::test_function: return make_test_function(p.function);
      case ProblemKind::command: return nullptr;  // runs come from the user's program (run/command_runner)
      case ProblemKind::custom: break;            // above
    }
  } catch (const std::invalid_argument& e) {
    throw InputError(where, e.what());
  }
  throw InputError(where, "unknown problem kind");
}

}  // namespace

ReferenceValues align_reference(const ReferenceValues& ref, const Dataset& data, bool intercept,
                                const std::string& where) {
  std::map<std::string, double> given;
  for (std::size_t i = 0; i < ref.names.size(); ++i) {
    std::string name = ref.names[i];
    if (name == "constant" || name == "const") name = "intercept";
    given[name] = ref.values[static_cast<Index>(i)];
  }
  ReferenceValues out;
  out.source = ref.source;
  out.digits = ref.digits;
  std::vector<std::string> wanted = data.features;
  if (intercept) wanted.push_back("intercept");
  out.values.resize(static_cast<Index>(wanted.size()));
  for (std::size_t i = 0; i < wanted.size(); ++i) {
    auto it = given.find(wanted[i]);
    if (it == given.end())
      throw InputError(where, "reference values have no coefficient for '" + wanted[i] + "'");
    out.values[static_cast<Index>(i)] = it->second;
    given.erase(it);
  }
  if (!given.empty())
    throw InputError(where, "reference coefficient '" + given.begin()->first +
                                "' matches no feature of data set '" + data.name + "'");
  out.names = std::move(wanted);
  return out;
}

// Runs a data set's produce command (the team's pipeline) and waits for it. A command that
// fails, times out or writes no file is bad input of the suite (exit 2), with its stderr.
static void produce(const DatasetSpec& spec) {
  const CommandSpec& c = *spec.produce;
  const std::string where = spec.suite_path + "#" + spec.pointer + "/produce";
  ChildOptions o;
  o.argv = c.argv;
  o.cwd = c.cwd;
  o.env = c.env;
  ChildProcess child(o);
  const auto started = std::chrono::steady_clock::now();
  std::vector<std::string> lines;
  // Until the command exits (a closed stdout is not its end), or its timeout.
  while (!child.exited()) {
    lines.clear();
    child.read_lines(lines, std::chrono::milliseconds(100));
    if (std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count() > c.timeout) {
      child.stop(c.grace);
      throw InputError(where, fmt::format("the produce command did not finish within {:g} s (stopped); stderr: {}",
                                          c.timeout, child.stderr_tail()));
    }
  }
  const ChildExit ex = child.wait();
  if (ex.signalled || ex.code != 0)
    throw InputError(where, fmt::format("the produce command {} {}; stderr: {}", ex.signalled ? "was killed by signal" : "exited with status",
                                        ex.code, child.stderr_tail()));
  if (!std::filesystem::is_regular_file(spec.path))
    throw InputError(where, fmt::format("the produce command succeeded but wrote no file {}", spec.path));
}

static DatasetInfo describe(const DatasetSpec& spec, const Dataset& d) {
  DatasetInfo info;
  info.name = spec.name;
  info.source = spec.source == DatasetSpec::Source::generated ? "generated"
                : spec.source == DatasetSpec::Source::idx     ? spec.path + " + " + spec.labels_path
                                                              : spec.path;
  info.sha256 = d.sha256;
  if (spec.produce) info.produced_by = spec.produce->argv, info.produced_in = spec.produce->cwd;
  info.rows = static_cast<long>(d.rows());
  info.columns = static_cast<long>(d.cols());
  for (const ColumnStats& c : column_stats(d)) info.stats.push_back({c.name, c.mean, c.sd});
  const double n = static_cast<double>(d.rows());
  const double mean = d.y.mean();
  const double sd = n > 0 ? std::sqrt((d.y.array() - mean).square().sum() / n) : kMissing;  // population, as above
  info.stats.push_back({d.target, mean, sd});
  return info;
}

PreparedSweep prepare_problems(const Suite& suite, const Plan& plan) {
  std::map<std::string, Dataset> raw;  // loaded once per dataset
  // Problems still to build per data set: the raw copy is moved into the last one rather than
  // copied, and a built-in linear model takes its (scaled) features over in place, so a data
  // set used by one problem and scaling is held once; used by several, once more per problem
  // built so far (each holds its own scaled [X 1]).
  std::map<std::string, int> pending;
  {
    std::set<PreparedKey> seen;
    for (const PlannedCase& c : plan.cases)
      if (const ProblemSpec& p = suite.problems[c.problem]; uses_dataset(p) && seen.insert({c.problem, c.scaling}).second)
        ++pending[p.dataset];
  }
  PreparedSweep sweep;
  std::map<PreparedKey, PreparedProblem>& out = sweep.problems;
  for (const PlannedCase& c : plan.cases) {
    const PreparedKey key{c.problem, c.scaling};
    if (out.count(key)) continue;
    const ProblemSpec& p = suite.problems[c.problem];
    PreparedProblem prepared;
    const std::string where = suite.path + "#" + p.pointer;
    if (uses_dataset(p)) {
      if (!raw.count(p.dataset)) {
        const DatasetSpec& spec = suite.datasets.at(p.dataset);
        if (spec.produce) produce(spec);
        const Dataset& d = raw.emplace(p.dataset, load_dataset(spec)).first->second;
        sweep.datasets.push_back(describe(spec, d));
      }
      Dataset data;
      if (--pending[p.dataset] == 0) {
        data = std::move(raw.at(p.dataset));
        raw.erase(p.dataset);
      } else {
        data = raw.at(p.dataset);
      }
      try {
        apply_scaling(data, suite.scalings.at(c.scaling));
      } catch (const InputError& e) {
        // The scaling's own message names the column; the place is the suite's scaling entry,
        // with the data file and the problem that asked for it.
        const DatasetSpec& spec = suite.datasets.at(p.dataset);
        throw InputError(suite.path + "#/scalings/" + c.scaling,
                         fmt::format("{} ({}; data from {}; used by {})", e.message(), e.where(),
                                     spec.path.empty() ? "the suite's generator" : spec.path, where));
      }
      prepared.map = data.map;
      prepared.dataset = p.dataset;
      prepared.data_sha256 = data.sha256;
      if (p.reference)
        prepared.reference = align_reference(*p.reference, data, p.linear.intercept, where + "/reference");
      prepared.problem = build(p, &data, where);  // last: a linear model takes data's features over
    } else {
      prepared.problem = build(p, nullptr, where);
      prepared.map = FeatureMap::identity(0);
    }
    out.emplace(key, std::move(prepared));
  }
  return sweep;
}

}  // namespace stepgate
