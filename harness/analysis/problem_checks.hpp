// Checks of a Problem's derivatives and lanes that a user can run on their own objective
// before a sweep relies on it (the built-in problems pass them in tests/unit/test_problems.cpp):
//
//   gradient        ∇J from evaluate() against central differences of the cost
//   hessian_vector  hessian_vector() against central differences of the gradient
//   lanes           evaluating K columns at once equals evaluating each column alone
//
// Each check returns the worst relative error over its points and whether it is within the
// tolerance. A non-finite value, or a result of the wrong shape, fails the check (worst = NaN or
// inf, and `note` says what was wrong). The checks evaluate single columns, so they cost about
// 2·p evaluations per point for the gradient and 2 per point for the Hessian-vector product.
#pragma once
#include <cstdint>
#include <string>

#include "stepgate/problems/problem.hpp"

namespace stepgate {

struct ProblemCheck {
  std::string name;           ///< "gradient", "hessian_vector" or "lanes"
  double worst_error = 0.0;   ///< the largest relative error over all points (NaN: a non-finite value)
  double tolerance = 0.0;     ///< the check passes when worst_error <= tolerance
  Index worst_point = -1;     ///< the column of the points (or lanes) where it occurred; -1 if none
  bool pass = false;
  std::string note;           ///< why the check failed other than by size (shape, non-finite); else ""
};

/// One line: "gradient: worst relative error 3.1e-10 at point 2 (tolerance 1e-06): pass".
std::string to_string(const ProblemCheck& check);

struct FiniteDifferenceOptions {
  /// Relative step. Gradient: h_j = step·max(1, |w_j|) per coordinate. Hessian-vector product:
  /// the gradient is differenced at w ± h·v with h = step·max(1, ‖w‖)/‖v‖, a move of
  /// step·max(1, ‖w‖). With step 1e-5 the truncation error (∝ h²) and the rounding error
  /// (∝ ε·|J|/h) of a well-scaled cost both stay near 1e-10.
  double step = 1e-5;
  /// Bound on ‖fd − g‖ / max(1, ‖g‖) (and ‖fd − Hv‖ / max(1, ‖Hv‖)): relative where the gradient
  /// is larger than 1, absolute below, so that a vanishing gradient at a minimum does not demand
  /// exact agreement. 1e-6 leaves four decades above the expected error and is far below the
  /// error of a wrong derivative (a missing factor or term gives errors of order 1).
  double tolerance = 1e-6;
};

/// The default tolerance of check_lanes: lanes must agree to 1e-12 relative, as runs do
/// (DEVELOPERS.md, "Lanes"); Eigen's matrix-matrix and matrix-vector kernels sum in different
/// orders, so bitwise equality is not expected.
inline constexpr double kLaneTolerance = 1e-12;

/// The gradient of every column of `points` (p × n) against central differences of the cost.
ProblemCheck check_gradient(const Problem& problem, const Mat& points, const FiniteDifferenceOptions& options = {});

/// hessian_vector(w_k, v_k) for every column w_k of `points` and v_k of `directions` (same
/// shape) against central differences of the gradient along v_k.
ProblemCheck check_hessian_vector(const Problem& problem, const Mat& points, const Mat& directions,
                                  const FiniteDifferenceOptions& options = {});

/// evaluate() of all columns of W at once against each column alone: per lane the largest of
/// |J_all − J_one| / |J_one|, ‖g_all − g_one‖ / ‖g_one‖ and, when the problem has an exact gap,
/// |gap_all − gap_one| / |gap_one| (0/0 counts as 0; a difference over an exact 0 fails).
ProblemCheck check_lanes(const Problem& problem, const Mat& W, double tolerance = kLaneTolerance);

struct ProblemCheckOptions {
  Index points = 5;             ///< points (and lanes) to check
  std::uint64_t seed = 1;       ///< seeds of the starts and of the perturbations
  /// Points are start(seed + k) + r·z_k, z_k standard normal, r = spread·max(1, ‖start‖/√p);
  /// directions are r·z'_k.
  double spread = 0.5;
  FiniteDifferenceOptions finite_differences;
  double lane_tolerance = kLaneTolerance;
};

/// Sample points around the problem's starts (p × options.points), as check_problem uses them.
Mat sample_points(const Problem& problem, const ProblemCheckOptions& options = {});

struct ProblemCheckReport {
  ProblemCheck gradient, hessian_vector, lanes;
  bool pass() const { return gradient.pass && hessian_vector.pass && lanes.pass; }
};

/// All three checks at sample_points(problem, options), with seeded directions.
ProblemCheckReport check_problem(const Problem& problem, const ProblemCheckOptions& options = {});

}  // namespace stepgate
