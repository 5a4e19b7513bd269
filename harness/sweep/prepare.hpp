// Builds the problems of a plan: data loaded once per dataset, scaled once per (dataset,
// scaling), a problem built once per (problem, scaling) and shared by its optimizers.
#pragma once
#include <map>
#include <memory>
#include <optional>
#include <string>
#include <utility>

#include "stepgate/core/reference_values.hpp"
#include "stepgate/core/results.hpp"
#include "stepgate/problems/problem.hpp"
#include "stepgate/suite/suite.hpp"
#include "stepgate/sweep/plan.hpp"

namespace stepgate {

struct PreparedProblem {
  std::unique_ptr<Problem> problem;
  FeatureMap map;                            ///< scaling of the features (identity without data)
  std::string dataset;                       ///< "" for problems without data
  std::string data_sha256;
  std::optional<ReferenceValues> reference;  ///< aligned to the problem's parameter layout
};

using PreparedKey = std::pair<std::size_t, std::string>;  ///< (problem index, scaling)

struct PreparedSweep {
  std::map<PreparedKey, PreparedProblem> problems;
  std::vector<DatasetInfo> datasets;  ///< each data set used, as loaded, in first-use order
};

/// Prepares every (problem, scaling) the plan uses. Throws InputError for bad data (a missing
/// column, a constant column under standardize, reference names that match no feature, ...).
PreparedSweep prepare_problems(const Suite& suite, const Plan& plan);

/// The suite's reference values put in the order of the parameters: the data set's features,
/// then "intercept" when the model has one (also accepted as "constant" or "const").
ReferenceValues align_reference(const ReferenceValues& ref, const Dataset& data, bool intercept,
                                const std::string& where);

}  // namespace stepgate
