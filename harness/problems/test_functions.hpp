// Test functions of Moré, Garbow & Hillstrom (1981), "Testing Unconstrained Optimization
// Software", ACM TOMS 7(1):17-41, with their published starting points and optima.
#pragma once
#include <memory>
#include <string_view>
#include <vector>

#include "stepgate/problems/problem.hpp"

namespace stepgate {

/// Names accepted by make_test_function (lower case): "rosenbrock" (MGH #1), "beale" (#5),
/// "powell_singular" (#13), "wood" (#14), and any others listed here.
std::vector<std::string_view> test_function_names();

/// Throws std::invalid_argument for an unknown name. The start is the published x0 (the seed
/// is ignored); the optimum is the published minimiser with f* = 0.
std::unique_ptr<Problem> make_test_function(std::string_view name);

}  // namespace stepgate
