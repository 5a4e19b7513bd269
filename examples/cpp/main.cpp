// Huber regression as a stepgate problem kind: implement stepgate::Problem, check its
// derivatives and lanes, register it as kind "huber" (suite key "delta"), and run a suite with
// it the way `stepgate run` does. Exit code: the gate's verdict (0 pass, 1 fail), 2 for bad
// input, 3 when a case could not be run.
//
//   huber_example [SUITE] [OUT_DIR] [JOBS]      (defaults: huber.json beside this file,
//                                                out/huber, all cores)
//
// J(w, b) = (1/n) Σ_i ρ_δ(x_iᵀw + b − y_i),  ρ_δ(r) = r²/2 for |r| ≤ δ, δ(|r| − δ/2) beyond:
// squared error for small residuals, absolute error for large ones (Huber 1964), so a few wild
// targets pull the fit less than under least squares.
#include <cmath>
#include <cstdlib>
#include <iostream>
#include <memory>
#include <optional>
#include <string>

#include <Eigen/Dense>
#include <fmt/format.h>
#include <stepgate/stepgate.hpp>

namespace {

using stepgate::Index;
using stepgate::Mat;
using stepgate::Vec;

class Huber final : public stepgate::Problem {
 public:
  Huber(const stepgate::Dataset& data, double delta)
      : X_(data.X), y_(data.y), delta_(delta), n_(static_cast<double>(data.rows())) {
    if (data.rows() == 0) throw std::invalid_argument("the data set has no rows");
    // A global bound on the curvature: ρ'' ≤ 1, so ∇²J ≤ X̃ᵀX̃/n with X̃ = [X 1].
    Mat A(X_.rows(), X_.cols() + 1);
    A << X_, Vec::Ones(X_.rows());
    L_ = Eigen::SelfAdjointEigenSolver<Mat>(A.transpose() * A / n_).eigenvalues().maxCoeff();
    optimum_ = solve();
  }

  std::string_view kind() const override { return "huber"; }
  Index dim() const override { return X_.cols() + 1; }  // weights, then the intercept
  Index samples() const override { return X_.rows(); }
  Vec start(std::uint64_t) const override { return Vec::Zero(dim()); }  // as least squares

  // All K columns of W at once: one n x K residual matrix, one matrix product each way.
  void evaluate(const Mat& W, stepgate::Evaluation& out, stepgate::Scratch& s) const override {
    const Index d = X_.cols(), K = W.cols();
    Mat& R = s.a;
    R.noalias() = X_ * W.topRows(d);
    for (Index k = 0; k < K; ++k) R.col(k).array() += W(d, k) - y_.array();
    Mat& psi = s.b;  // ρ'(r) = r clipped to [−δ, δ]
    psi = R.cwiseMax(-delta_).cwiseMin(delta_);
    out.cost.resize(K);
    for (Index k = 0; k < K; ++k) out.cost[k] = loss(R.col(k)) / n_;
    out.grad.resize(d + 1, K);
    out.grad.topRows(d).noalias() = X_.transpose() * psi / n_;
    out.grad.row(d) = psi.colwise().sum() / n_;
  }

  // Mini-batch gradient (sgd): the mean over `rows`.
  void gradient_rows(const Mat& W, std::span<const Index> rows, Mat& grad, stepgate::Scratch&) const override {
    const Index d = X_.cols();
    grad.setZero(d + 1, W.cols());
    for (const Index i : rows) {
      const Eigen::RowVectorXd r = X_.row(i) * W.topRows(d) + W.row(d) - Eigen::RowVectorXd::Constant(W.cols(), y_[i]);
      const Eigen::RowVectorXd psi = r.cwiseMax(-delta_).cwiseMin(delta_);
      grad.topRows(d) += X_.row(i).transpose() * psi;
      grad.row(d) += psi;
    }
    grad /= static_cast<double>(rows.size());
  }

  // ∇²J v = X̃ᵀ D X̃ v / n, D = 1 where |r_i| ≤ δ (the generalised Hessian: ρ'' jumps at ±δ).
  void hessian_vector(const Vec& w, const Vec& v, Vec& out) const override {
    const Index d = X_.cols();
    const Vec r = residuals(w);
    Vec u = X_ * v.head(d);
    u.array() += v[d];
    for (Index i = 0; i < u.size(); ++i)
      if (std::abs(r[i]) > delta_) u[i] = 0.0;
    out.resize(d + 1);
    out.head(d).noalias() = X_.transpose() * u / n_;
    out[d] = u.sum() / n_;
  }

  std::optional<stepgate::Optimum> optimum() const override { return optimum_; }
  double smoothness_bound() const override { return L_; }
  std::optional<stepgate::LinearLayout> linear_layout() const override {
    return stepgate::LinearLayout{X_.cols(), 1, true};
  }

 private:
  double loss(const Eigen::Ref<const Vec>& r) const {
    double sum = 0.0;
    for (Index i = 0; i < r.size(); ++i) {
      const double a = std::abs(r[i]);
      sum += a <= delta_ ? 0.5 * a * a : delta_ * (a - 0.5 * delta_);
    }
    return sum;
  }
  Vec residuals(const Vec& w) const {
    Vec r = X_ * w.head(X_.cols());
    r.array() += w[X_.cols()] - y_.array();
    return r;
  }
  double cost(const Vec& w) const { return loss(residuals(w)) / n_; }
  Vec gradient(const Vec& w, const Mat& A) const {
    return A.transpose() * residuals(w).cwiseMax(-delta_).cwiseMin(delta_) / n_;
  }

  // The minimiser: semismooth Newton from the least-squares fit. On the set of rows with
  // |r_i| ≤ δ, J is quadratic, so a Newton step with that set's Hessian lands on its minimum;
  // Armijo backtracking keeps every step a descent, and when too few rows are inside for the
  // Hessian to be invertible the step is one of Huber's reweighted least squares (weights
  // min(1, δ/|r_i|)), which always is. When the gradient does not reach 1e-12 of its start in
  // 100 steps (the inside set keeps changing) the optimum is reported as unknown (nullopt):
  // runs are then judged by the plateau criterion, and no theory of the optimum is shown.
  std::optional<stepgate::Optimum> solve() const {
    const Index d = X_.cols(), p = d + 1;
    Mat A(X_.rows(), p);
    A << X_, Vec::Ones(X_.rows());
    Vec w = A.colPivHouseholderQr().solve(y_);
    const double g0 = gradient(Vec::Zero(p), A).norm();
    for (int step = 0; step < 100; ++step) {
      const Vec r = residuals(w), g = gradient(w, A);
      if (g.norm() <= 1e-12 * std::max(1.0, g0))
        return stepgate::Optimum{w, cost(w), fmt::format("semismooth Newton from the least-squares fit ({} steps)", step)};
      Mat H = Mat::Zero(p, p);
      Vec weights(r.size());
      for (Index i = 0; i < r.size(); ++i) weights[i] = std::abs(r[i]) <= delta_ ? 1.0 : 0.0;
      H = A.transpose() * weights.asDiagonal() * A / n_;
      Eigen::LDLT<Mat> newton(H);
      Vec dir;
      if (weights.sum() >= static_cast<double>(p) && newton.info() == Eigen::Success && newton.isPositive() &&
          newton.rcond() > 1e-12) {
        dir = -newton.solve(g);
      } else {
        for (Index i = 0; i < r.size(); ++i) weights[i] = std::min(1.0, delta_ / std::max(std::abs(r[i]), 1e-300));
        const Mat M = A.transpose() * weights.asDiagonal() * A;
        dir = M.ldlt().solve(A.transpose() * weights.asDiagonal() * y_) - w;
      }
      const double j = cost(w), slope = g.dot(dir);
      double t = 1.0;
      while (cost(w + t * dir) > j + 1e-4 * t * slope && t > 1e-12) t *= 0.5;
      w += t * dir;
    }
    return std::nullopt;
  }

  Mat X_;
  Vec y_;
  double delta_;
  double n_;
  double L_ = 0.0;
  std::optional<stepgate::Optimum> optimum_;  // computed once, before any thread shares the problem
};

// The factory of kind "huber": `keys` holds the entry's "delta" (if given); `data` its scaled data.
std::unique_ptr<stepgate::Problem> make_huber(const nlohmann::json& keys, const stepgate::Dataset* data) {
  if (!keys.contains("delta"))
    throw stepgate::InputError("", "missing required key 'delta' (the residual size, in target units, "
                                   "where the loss turns from squared to absolute)");
  const nlohmann::json& delta = keys["delta"];
  if (!delta.is_number() || !(delta.get<double>() > 0.0) || !std::isfinite(delta.get<double>()))
    throw stepgate::InputError("delta", "expected a number > 0 (in target units), found " + delta.dump());
  return std::make_unique<Huber>(*data, delta.get<double>());
}

}  // namespace

int main(int argc, char** argv) {
  const std::string suite_path = argc > 1 ? argv[1] : HUBER_EXAMPLE_SUITE;
  const std::string out_dir = argc > 2 ? argv[2] : "out/huber";
  const int jobs = argc > 3 ? std::atoi(argv[3]) : 0;
  try {
    stepgate::register_problem_kind("huber", {"delta"}, /*uses_dataset=*/true, make_huber);

    // Check each problem as the suite builds it (its data, its scaling) before trusting a sweep.
    const stepgate::Suite suite = stepgate::load_suite(suite_path);
    const stepgate::PreparedSweep prepared = stepgate::prepare_problems(suite, stepgate::make_plan(suite));
    bool checks_pass = true;
    for (const auto& [key, problem] : prepared.problems) {
      const stepgate::ProblemCheckReport report = stepgate::check_problem(*problem.problem);
      std::cout << fmt::format("checks of {} / {} ({}):\n  {}\n  {}\n  {}\n", suite.problems[key.first].name,
                               key.second, problem.problem->kind(), to_string(report.gradient),
                               to_string(report.hessian_vector), to_string(report.lanes));
      if (const auto o = problem.problem->optimum()) std::cout << fmt::format("  optimum: J* = {:.10g} by {}\n", o->cost, o->method);
      checks_pass = checks_pass && report.pass();
    }
    if (!checks_pass) {
      std::cerr << "huber_example: a problem failed its checks; its rates would mean nothing\n";
      return stepgate::kExitFail;
    }

    const stepgate::SuiteRun run = stepgate::run_suite(suite_path, out_dir, jobs);
    std::cout << "\n" << stepgate::summary_table(run.results, run.gate);
    std::cout << fmt::format("\nresults: {}\n", run.results_path) << stepgate::findings_text(run.gate, run.results);
    return run.verdict_exit_code();
  } catch (const stepgate::InputError& e) {
    std::cerr << "huber_example: error: " << e.what() << "\n";
    return stepgate::kExitBadInput;
  } catch (const std::exception& e) {
    std::cerr << "huber_example: failure: " << e.what() << "\n";
    return stepgate::kExitToolFailure;
  }
}
