// Shared numeric types. Parameters of one run are a column vector; the parameters of a
// batch of runs ("lanes") are the columns of one matrix, so one step is one matrix product.
#pragma once
#include <Eigen/Dense>
#include <cstdint>
#include <limits>

namespace stepgate {

using Index = Eigen::Index;
using Vec = Eigen::VectorXd;
using Mat = Eigen::MatrixXd;

/// Quiet NaN: the in-memory marker of "this value does not exist" (JSON null on output).
inline constexpr double kMissing = std::numeric_limits<double>::quiet_NaN();
inline constexpr double kInf = std::numeric_limits<double>::infinity();

}  // namespace stepgate
