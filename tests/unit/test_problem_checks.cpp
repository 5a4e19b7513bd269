// The checks users run on their own problems (analysis/problem_checks.hpp): correct problems
// pass with small errors, and each kind of mistake (a wrong gradient, a wrong Hessian-vector
// product, lanes that depend on each other, non-finite values, wrong shapes) fails the check
// that is meant to catch it, with the error it measured.
#include <catch2/catch.hpp>

#include <array>

#include <cmath>
#include <memory>
#include <string>

#include "stepgate/analysis/problem_checks.hpp"
#include "stepgate/problems/quadratic.hpp"
#include "stepgate/problems/test_functions.hpp"

using namespace stepgate;

namespace {

enum class Fault { none, gradient, hessian, lanes, nan_cost, shape };

// A problem with one deliberate fault, on top of a correct one.
class Faulty final : public Problem {
 public:
  Faulty(std::unique_ptr<Problem> inner, Fault fault) : inner_(std::move(inner)), fault_(fault) {}
  std::string_view kind() const override { return "faulty"; }
  Index dim() const override { return inner_->dim(); }
  Vec start(std::uint64_t seed) const override { return inner_->start(seed); }
  bool has_exact_gap() const override { return inner_->has_exact_gap(); }
  void evaluate(const Mat& W, Evaluation& out, Scratch& s) const override {
    inner_->evaluate(W, out, s);
    if (fault_ == Fault::gradient) out.grad.row(0) *= 1.01;  // one component 1% off
    if (fault_ == Fault::lanes) out.cost.array() *= 1.0 + 1e-9 * static_cast<double>(W.cols() - 1);
    if (fault_ == Fault::nan_cost && W.cols() == 1 && std::abs(W(0, 0) - 7.25) < 1e-3) out.cost[0] = kMissing;
    if (fault_ == Fault::shape) out.grad.conservativeResize(out.grad.rows() - 1, Eigen::NoChange);
  }
  void hessian_vector(const Vec& w, const Vec& v, Vec& out) const override {
    inner_->hessian_vector(w, v, out);
    if (fault_ == Fault::hessian) out *= 0.5;
  }
  std::optional<Optimum> optimum() const override { return inner_->optimum(); }

 private:
  std::unique_ptr<Problem> inner_;
  Fault fault_;
};

std::unique_ptr<Problem> quadratic() {
  QuadraticOptions o;
  o.dim = 6;
  o.L = 4.0;
  o.condition = 10.0;
  o.seed = 3;
  return make_quadratic(o);
}

}  // namespace

TEST_CASE("problem checks: correct problems pass with small errors", "[problem_checks]") {
  for (const auto& make : {+[] { return quadratic(); }, +[] { return make_test_function("rosenbrock"); },
                           +[] { return make_test_function("wood"); }}) {
    const auto p = make();
    INFO(p->kind());
    const ProblemCheckReport r = check_problem(*p);
    INFO(to_string(r.gradient) << "\n" << to_string(r.hessian_vector) << "\n" << to_string(r.lanes));
    CHECK(r.pass());
    CHECK(r.gradient.name == "gradient");
    CHECK(r.hessian_vector.name == "hessian_vector");
    CHECK(r.lanes.name == "lanes");
    CHECK(r.gradient.tolerance == 1e-6);
    CHECK(r.lanes.tolerance == kLaneTolerance);
    CHECK(r.gradient.worst_error <= 1e-8);
    CHECK(r.hessian_vector.worst_error <= 1e-8);
    CHECK(r.lanes.worst_error <= 1e-14);
    for (const ProblemCheck* c : {&r.gradient, &r.hessian_vector, &r.lanes}) {
      CHECK(c->note.empty());
      CHECK(c->worst_point >= 0);
      CHECK(c->worst_point < 5);
      CHECK(to_string(*c).find(": pass") != std::string::npos);
    }
  }
}

TEST_CASE("problem checks: each fault fails the check that catches it", "[problem_checks]") {
  SECTION("a gradient 1% off in one component") {
    const Faulty p(quadratic(), Fault::gradient);
    const ProblemCheckReport r = check_problem(p);
    CHECK_FALSE(r.gradient.pass);
    CHECK(r.gradient.worst_error > 1e-4);
    CHECK(r.gradient.worst_error < 0.01);  // the error of one component of the whole gradient
    CHECK(r.gradient.note.empty());
    CHECK(to_string(r.gradient).find("FAIL") != std::string::npos);
    CHECK(r.lanes.pass);  // the same wrong gradient in every lane
    CHECK_FALSE(r.pass());
  }
  // Each fault fails exactly its own check: {gradient, Hessian-vector product, lanes} pass?
  const auto passes = [](const ProblemCheckReport& r) {
    return std::array<bool, 3>{r.gradient.pass, r.hessian_vector.pass, r.lanes.pass};
  };
  SECTION("a Hessian-vector product of half the size") {
    const Faulty p(quadratic(), Fault::hessian);
    const ProblemCheckReport r = check_problem(p);
    CHECK(passes(r) == std::array<bool, 3>{true, false, true});
    CHECK(r.hessian_vector.worst_error > 0.1);
  }
  SECTION("lanes whose cost depends on how many are evaluated together") {
    const Faulty p(quadratic(), Fault::lanes);
    const ProblemCheckReport r = check_problem(p);
    CHECK(passes(r) == std::array<bool, 3>{true, true, false});
    CHECK(r.lanes.worst_error == Approx(4e-9).epsilon(1e-3));  // 5 lanes: factor 1 + 4e-9
    // The same problem passes a check with a looser tolerance: the tolerance decides.
    CHECK(check_lanes(p, sample_points(p), 1e-8).pass);
  }
  SECTION("a non-finite cost") {
    const Faulty p(quadratic(), Fault::nan_cost);
    Mat points = sample_points(p);
    points(0, 2) = 7.25;  // point 2 (and its differences) evaluate to NaN
    const ProblemCheck c = check_gradient(p, points);
    CHECK_FALSE(c.pass);
    CHECK(std::isnan(c.worst_error));
    CHECK(c.worst_point == 2);
    CHECK(c.note.find("non-finite") != std::string::npos);
  }
  SECTION("results of the wrong shape") {
    const Faulty p(quadratic(), Fault::shape);
    const ProblemCheckReport r = check_problem(p);
    for (const ProblemCheck* c : {&r.gradient, &r.hessian_vector, &r.lanes}) {
      INFO(to_string(*c));
      CHECK_FALSE(c->pass);
      CHECK_FALSE(c->note.empty());
    }
    CHECK(r.gradient.note.find("5 x 1") != std::string::npos);  // the gradient had 5 rows, not 6
  }
  SECTION("points that do not match the problem") {
    const auto p = quadratic();
    const ProblemCheck g = check_gradient(*p, Mat::Zero(5, 2));
    CHECK_FALSE(g.pass);
    CHECK(g.note.find("6 parameters") != std::string::npos);
    CHECK_FALSE(check_hessian_vector(*p, Mat::Zero(6, 2), Mat::Zero(6, 3)).pass);
    CHECK_FALSE(check_lanes(*p, Mat::Zero(7, 2)).pass);
  }
}

TEST_CASE("problem checks: sample points are seeded and around the starts", "[problem_checks]") {
  const auto p = make_test_function("rosenbrock");
  ProblemCheckOptions o;
  const Mat a = sample_points(*p, o), b = sample_points(*p, o);
  CHECK(a.rows() == 2);
  CHECK(a.cols() == 5);
  CHECK(a == b);
  o.seed = 2;
  CHECK(sample_points(*p, o) != a);
  o.points = 3;
  CHECK(sample_points(*p, o).cols() == 3);
  // Spread r = 0.5 · max(1, ‖x0‖/√p) around the published start (−1.2, 1).
  const double r = 0.5 * std::max(1.0, p->start(1).norm() / std::sqrt(2.0));
  for (Index k = 0; k < a.cols(); ++k) CHECK((a.col(k) - p->start(1)).norm() <= 6 * r);
  CHECK(check_gradient(*p, Mat(2, 0)).pass);  // no points: nothing wrong
}
