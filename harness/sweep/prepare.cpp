#include "sweep/prepare.hpp"

#include <cmath>
#include <set>

#include "core/error.hpp"
#include "data/column_stats.hpp"
#include "data/scaling.hpp"
#include "problems/linear_models.hpp"
#include "problems/quadratic.hpp"
#include "problems/test_functions.hpp"

namespace stepgate {

namespace {

bool is_linear(ProblemKind k) {
  return k == ProblemKind::least_squares || k == ProblemKind::logistic || k == ProblemKind::softmax;
}

std::unique_ptr<Problem> build(const ProblemSpec& p, const Dataset* data, const std::string& where) {
  try {
    switch (p.kind) {
      case ProblemKind::least_squares: return make_least_squares(*data, p.linear);
      case ProblemKind::logistic: return make_logistic(*data, p.linear);
      case ProblemKind::softmax: return make_softmax(*data, p.linear, p.classes);
      case ProblemKind::quadratic: return make_quadratic(p.quadratic);
      case ProblemKind::test_function: return make_test_function(p.function);
      case ProblemKind::command: return nullptr;  // runs come from the user's program (run/command_runner)
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

static DatasetInfo describe(const DatasetSpec& spec, const Dataset& d) {
  DatasetInfo info;
  info.name = spec.name;
  info.source = spec.source == DatasetSpec::Source::generated ? "generated"
                : spec.source == DatasetSpec::Source::idx     ? spec.path + " + " + spec.labels_path
                                                              : spec.path;
  info.sha256 = d.sha256;
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
  PreparedSweep sweep;
  std::map<PreparedKey, PreparedProblem>& out = sweep.problems;
  for (const PlannedCase& c : plan.cases) {
    const PreparedKey key{c.problem, c.scaling};
    if (out.count(key)) continue;
    const ProblemSpec& p = suite.problems[c.problem];
    PreparedProblem prepared;
    const std::string where = suite.path + "#" + p.pointer;
    if (is_linear(p.kind)) {
      if (!raw.count(p.dataset)) {
        const DatasetSpec& spec = suite.datasets.at(p.dataset);
        const Dataset& d = raw.emplace(p.dataset, load_dataset(spec)).first->second;
        sweep.datasets.push_back(describe(spec, d));
      }
      Dataset data = raw.at(p.dataset);
      apply_scaling(data, suite.scalings.at(c.scaling));
      prepared.problem = build(p, &data, where);
      prepared.map = data.map;
      prepared.dataset = p.dataset;
      prepared.data_sha256 = data.sha256;
      if (p.reference)
        prepared.reference = align_reference(*p.reference, data, p.linear.intercept, where + "/reference");
    } else {
      prepared.problem = build(p, nullptr, where);
      prepared.map = FeatureMap::identity(0);
    }
    out.emplace(key, std::move(prepared));
  }
  return sweep;
}

}  // namespace stepgate
