// Synthetic quadratics with a known optimum: J(w) = ½ (w − w*)ᵀ A (w − w*), A = Q Λ Qᵀ.
// L = λ_max(A), μ = λ_min(A) = L / condition, w* and J* = 0 are known exactly.
#pragma once
#include <cstdint>
#include <memory>

#include "stepgate/core/problem_options.hpp"
#include "stepgate/problems/problem.hpp"

namespace stepgate {

std::unique_ptr<Problem> make_quadratic(const QuadraticOptions& opt);

}  // namespace stepgate
