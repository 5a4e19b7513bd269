// Registered problem kinds (core/custom_kinds.hpp, sweep/registry.hpp): registration rules,
// suite entries of a registered kind (its keys, its data set, its errors at the right pointer),
// the factory's errors as input errors, and a whole run with run_suite (sweep/run_suite.hpp).
#include <catch2/catch.hpp>

#include <atomic>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <functional>
#include <optional>
#include <string>
#include <thread>
#include <vector>

#include <nlohmann/json.hpp>

#include "stepgate/core/custom_kinds.hpp"
#include "stepgate/core/error.hpp"
#include "stepgate/problems/problem.hpp"
#include "stepgate/suite/suite.hpp"
#include "stepgate/sweep/plan.hpp"
#include "stepgate/sweep/prepare.hpp"
#include "stepgate/sweep/registry.hpp"
#include "stepgate/sweep/run_suite.hpp"

using namespace stepgate;
namespace fs = std::filesystem;
using Json = nlohmann::ordered_json;

namespace {

// J(w) = ½ Σ λ_i (w_i − c)²: w* = c·1, J* = 0, L = max λ; runs start at w* + 1.
class DiagonalBowl final : public Problem {
 public:
  DiagonalBowl(Vec lambda, double center) : lambda_(std::move(lambda)), center_(center) {}
  std::string_view kind() const override { return "test_bowl"; }
  Index dim() const override { return lambda_.size(); }
  Vec start(std::uint64_t) const override { return Vec::Constant(dim(), center_ + 1.0); }
  void evaluate(const Mat& W, Evaluation& out, Scratch&) const override {
    const Mat D = W.array() - center_;
    out.grad = lambda_.asDiagonal() * D;
    out.cost = 0.5 * (D.array() * out.grad.array()).colwise().sum().transpose();
  }
  void hessian_vector(const Vec&, const Vec& v, Vec& out) const override { out = lambda_.cwiseProduct(v); }
  std::optional<Optimum> optimum() const override { return Optimum{Vec::Constant(dim(), center_), 0.0, "exact"}; }
  double smoothness_bound() const override { return lambda_.maxCoeff(); }

 private:
  Vec lambda_;
  double center_;
};

// J(w) = scale/(2n) ‖X w − y‖² on the entry's (scaled) data, without intercept.
class ScaledFit final : public Problem {
 public:
  ScaledFit(const Dataset& d, double scale) : X_(d.X), y_(d.y), scale_(scale) {}
  std::string_view kind() const override { return "test_fit"; }
  Index dim() const override { return X_.cols(); }
  Index samples() const override { return X_.rows(); }
  Vec start(std::uint64_t) const override { return Vec::Zero(dim()); }
  void evaluate(const Mat& W, Evaluation& out, Scratch&) const override {
    Mat R = X_ * W;
    R.colwise() -= y_;
    const double n = static_cast<double>(X_.rows());
    out.cost = scale_ / (2 * n) * R.colwise().squaredNorm().transpose();
    out.grad = scale_ / n * X_.transpose() * R;
  }
  void hessian_vector(const Vec&, const Vec& v, Vec& out) const override {
    out = scale_ / static_cast<double>(X_.rows()) * X_.transpose() * (X_ * v);
  }
  std::optional<Optimum> optimum() const override { return std::nullopt; }

 private:
  Mat X_;
  Vec y_;
  double scale_;
};

// What the factory of test_fit saw last (the test reads it after prepare_problems).
struct Seen {
  Index rows = -1;
  double first_column_mean = kMissing, first_column_sd = kMissing;
  nlohmann::json keys;
};
Seen& seen() {
  static Seen s;
  return s;
}

std::unique_ptr<Problem> make_bowl(const nlohmann::json& keys, const Dataset* data) {
  REQUIRE(data == nullptr);
  if (!keys.contains("curvatures")) throw InputError("", "missing required key 'curvatures'");
  const nlohmann::json& c = keys["curvatures"];
  if (!c.is_array() || c.empty()) throw InputError("curvatures", "expected a non-empty array of numbers > 0");
  Vec lambda(static_cast<Index>(c.size()));
  for (std::size_t i = 0; i < c.size(); ++i) {
    if (!c[i].is_number() || !(c[i].get<double>() > 0))
      throw InputError("curvatures", "expected a non-empty array of numbers > 0, found " + c.dump());
    lambda[static_cast<Index>(i)] = c[i].get<double>();
  }
  return std::make_unique<DiagonalBowl>(lambda, keys.value("center", 0.0));
}

std::unique_ptr<Problem> make_fit(const nlohmann::json& keys, const Dataset* data) {
  REQUIRE(data != nullptr);
  seen().rows = data->rows();
  const Vec x = data->X.col(0);
  seen().first_column_mean = x.mean();
  seen().first_column_sd = std::sqrt((x.array() - x.mean()).square().mean());
  seen().keys = keys;
  const double scale = keys.value("scale", 1.0);
  if (scale < 0) throw InputError("scale", "expected a number >= 0");
  if (scale == 0) throw std::runtime_error("a scale of 0 gives no problem at all");
  return std::make_unique<ScaledFit>(*data, scale);
}

// Registered once per process (Catch runs every test case in one process when asked to).
void ensure_registered() {
  static const bool done = [] {
    register_problem_kind("test_bowl", {"curvatures", "center"}, false, make_bowl);
    register_problem_kind("test_fit", {"scale", "l2"}, true, make_fit);
    register_problem_kind("test_null", {}, false, [](const nlohmann::json&, const Dataset*) {
      return std::unique_ptr<Problem>{};
    });
    return true;
  }();
  (void)done;
}

const std::string kTiny = std::string(STEPGATE_SOURCE_DIR) + "/tests/data/suites/data/tiny.csv";

fs::path temp_dir() {
  const fs::path dir = fs::path(STEPGATE_BINARY_DIR) / "test_registry_tmp";
  fs::create_directories(dir);
  return dir;
}

Json base_suite() {
  Json j = Json::parse(R"({
    "format": "stepgate.suite/1",
    "name": "registered",
    "datasets": {"houses": {"csv": "", "target": "price", "features": ["size", "rooms"]}},
    "scalings": {"std": {"kind": "standardize"}},
    "problems": [
      {"name": "bowl", "kind": "test_bowl", "curvatures": [1, 4], "optimizers": ["gd"], "seeds": 1},
      {"name": "fit", "kind": "test_fit", "dataset": "houses", "scale": 2, "scalings": ["none", "std"]}
    ]
  })");
  j["datasets"]["houses"]["csv"] = kTiny;
  return j;
}

const std::string kPath = "registered.json";

// The InputError of parsing `j`, or nullopt.
std::optional<InputError> parse_error(const Json& j) {
  try {
    parse_suite(j.dump(2), kPath);
  } catch (const InputError& e) {
    return e;
  }
  return std::nullopt;
}

std::optional<InputError> prepare_error(const Json& j) {
  try {
    const Suite s = parse_suite(j.dump(2), kPath);
    prepare_problems(s, make_plan(s));
  } catch (const InputError& e) {
    return e;
  }
  return std::nullopt;
}

}  // namespace

TEST_CASE("registry: a registered kind is found by name with its keys", "[registry]") {
  ensure_registered();
  const auto bowl = find_custom_kind("test_bowl");
  REQUIRE(bowl.has_value());
  CHECK(bowl->keys == std::vector<std::string>{"curvatures", "center"});
  CHECK_FALSE(bowl->uses_dataset);
  CHECK(find_custom_kind("test_fit")->uses_dataset);
  CHECK_FALSE(find_custom_kind("test_bwol").has_value());
  CHECK(find_problem_factory("test_bowl"));
  CHECK_FALSE(find_problem_factory("no_such_kind"));
  const std::vector<std::string> names = custom_kind_names();
  CHECK(std::is_sorted(names.begin(), names.end()));
  CHECK(std::count(names.begin(), names.end(), "test_fit") == 1);
}

TEST_CASE("registry: bad registrations are refused and leave nothing behind", "[registry]") {
  ensure_registered();
  const auto factory = [](const nlohmann::json& keys, const Dataset* d) { return make_bowl(keys, d); };
  struct Case {
    std::string name;
    std::vector<std::string> keys;
    std::string fragment;
  };
  const std::vector<Case> cases = {
      {"least_squares", {}, "built-in"},
      {"custom", {}, "built-in"},
      {"command", {}, "built-in"},
      {"test_bowl", {}, "already registered"},
      {"Huber", {}, "lower-case identifier"},
      {"1huber", {}, "lower-case identifier"},
      {"hu-ber", {}, "lower-case identifier"},
      {"", {}, "lower-case identifier"},
      {"refused_a", {"seeds"}, "word of every problem entry"},
      {"refused_b", {"dataset"}, "word of every problem entry"},
      {"refused_c", {"name"}, "word of every problem entry"},
      {"refused_d", {"reference"}, "word of every problem entry"},
      {"refused_e", {"a b"}, "not an identifier"},
      {"refused_f", {"x", "x"}, "listed twice"},
  };
  for (const Case& c : cases) {
    INFO(c.name);
    CHECK_THROWS_WITH(register_problem_kind(c.name, c.keys, false, factory), Catch::Contains(c.fragment));
    if (c.name.rfind("refused", 0) == 0) {
      CHECK_FALSE(find_custom_kind(c.name).has_value());
      CHECK_FALSE(find_problem_factory(c.name));
    }
  }
  CHECK_THROWS_WITH(register_problem_kind("refused_g", {}, false, ProblemFactory{}), Catch::Contains("no factory"));
  CHECK_FALSE(find_custom_kind("refused_g").has_value());
  // A key of a built-in kind may be a registered kind's own (test_fit has "l2").
  CHECK(find_custom_kind("test_fit")->keys.back() == "l2");
}

TEST_CASE("registry: registration and suite parsing from many threads", "[registry]") {
  ensure_registered();
  std::atomic<int> parsed{0};
  std::vector<std::thread> threads;
  for (int t = 0; t < 8; ++t)
    threads.emplace_back([t, &parsed] {
      const std::string name = "thread_kind_" + std::to_string(t);
      if (!find_custom_kind(name)) register_problem_kind(name, {"k" + std::to_string(t)}, false, make_bowl);
      for (int i = 0; i < 20; ++i) {
        parse_suite(base_suite().dump(), kPath);
        ++parsed;
      }
    });
  for (std::thread& t : threads) t.join();
  CHECK(parsed == 160);
  for (int t = 0; t < 8; ++t) {
    const auto k = find_custom_kind("thread_kind_" + std::to_string(t));
    REQUIRE(k.has_value());
    CHECK(k->keys == std::vector<std::string>{"k" + std::to_string(t)});
  }
}

TEST_CASE("registry: a suite entry of a registered kind reaches ProblemSpec", "[registry]") {
  ensure_registered();
  const Suite s = parse_suite(base_suite().dump(), kPath);
  REQUIRE(s.problems.size() == 2);
  const ProblemSpec& bowl = s.problems[0];
  CHECK(bowl.kind == ProblemKind::custom);
  CHECK(bowl.custom_kind == "test_bowl");
  CHECK(problem_kind_name(bowl) == "test_bowl");
  CHECK(bowl.custom_params == nlohmann::json{{"curvatures", {1, 4}}});  // only the keys written
  CHECK_FALSE(uses_dataset(bowl));
  CHECK(bowl.dataset.empty());
  const ProblemSpec& fit = s.problems[1];
  CHECK(fit.custom_kind == "test_fit");
  CHECK(fit.dataset == "houses");
  CHECK(uses_dataset(fit));
  CHECK(fit.scalings == std::vector<std::string>{"none", "std"});
  CHECK(fit.custom_params == nlohmann::json{{"scale", 2}});
  CHECK(to_string(ProblemKind::custom) == "custom");
  CHECK_FALSE(problem_kind_from_string("custom").has_value());
  CHECK(problem_kind_name(s.problems[1]) != to_string(ProblemKind::custom));

  SECTION("the factory gets the entry's keys and its scaled data") {
    const PreparedSweep prepared = prepare_problems(s, make_plan(s));
    REQUIRE(prepared.problems.count({1, "std"}) == 1);
    CHECK(prepared.problems.count({1, "none"}) == 1);
    CHECK(prepared.problems.at({0, "none"}).problem->kind() == "test_bowl");
    CHECK(prepared.problems.at({1, "std"}).dataset == "houses");
    CHECK(prepared.problems.at({1, "std"}).data_sha256.size() == 64);
    // The std problem was built last: its data set is standardized (population sd).
    CHECK(seen().rows == 8);
    CHECK(std::abs(seen().first_column_mean) <= 1e-12);
    CHECK(seen().first_column_sd == Approx(1.0).epsilon(1e-12));
    CHECK(seen().keys == nlohmann::json{{"scale", 2}});
  }
}

namespace {

// A change to the base suite, where its error must be, and a fragment of its message.
struct Case {
  const char* what;
  std::function<void(Json&)> change;
  std::string where;
  std::string fragment;
};

}  // namespace

TEST_CASE("registry: malformed entries of registered kinds fail at the right pointer", "[registry]") {
  ensure_registered();
  const std::vector<Case> cases = {
      {"misspelled key", [](Json& j) { j["problems"][0]["curvatuers"] = Json::array({1}); },
       "/problems/0/curvatuers", "unknown key 'curvatuers' (did you mean 'curvatures'?)"},
      {"misspelled kind", [](Json& j) { j["problems"][0]["kind"] = "test_bwol"; }, "/problems/0/kind",
       "unknown problem kind 'test_bwol' (did you mean 'test_bowl'?)"},
      {"the word custom is not a kind", [](Json& j) { j["problems"][0]["kind"] = "custom"; },
       "/problems/0/kind", "unknown problem kind 'custom'"},
      {"a built-in kind's key", [](Json& j) { j["problems"][0]["dim"] = 3; }, "/problems/0/dim",
       "key 'dim' does not apply to a test_bowl problem; it is for: quadratic"},
      {"another registered kind's key", [](Json& j) { j["problems"][0]["scale"] = 3; }, "/problems/0/scale",
       "key 'scale' does not apply to a test_bowl problem; it is for: test_fit"},
      {"a registered key on a built-in kind",
       [](Json& j) { j["problems"][0] = {{"name", "q"}, {"kind", "quadratic"}, {"center", 1}}; },
       "/problems/0/center", "key 'center' does not apply to a quadratic problem; it is for: test_bowl"},
      {"a shared key on a kind that does not list it",
       [](Json& j) { j["problems"][0]["l2"] = 0.1; }, "/problems/0/l2",
       "key 'l2' does not apply to a test_bowl problem; it is for: least_squares, logistic, softmax, test_fit"},
      {"a dataset on a kind without data", [](Json& j) { j["problems"][0]["dataset"] = "houses"; },
       "/problems/0/dataset", "key 'dataset' does not apply to a test_bowl problem"},
      {"a reference on a registered kind", [](Json& j) { j["problems"][1]["reference"] = "x.json"; },
       "/problems/1/reference", "key 'reference' does not apply to a test_fit problem"},
      {"missing dataset", [](Json& j) { j["problems"][1].erase("dataset"); }, "/problems/1",
       "missing required key 'dataset'"},
      {"undefined dataset", [](Json& j) { j["problems"][1]["dataset"] = "house"; }, "/problems/1/dataset",
       "undefined dataset 'house' (did you mean 'houses'?)"},
      {"a scaling without data", [](Json& j) { j["problems"][0]["scalings"] = {"none", "std"}; },
       "/problems/0/scalings/1", "found scaling 'std' on a test_bowl problem, which has no data to scale"},
      {"a mini-batch optimizer without samples",
       [](Json& j) {
         j["optimizers"] = {{"sgd-4", {{"kind", "sgd"}, {"batch_size", 4}}}};
         j["problems"][0]["optimizers"] = {"sgd-4"};
       },
       "/problems/0/optimizers/0", "on a test_bowl problem, which has no samples to batch"},
  };
  for (const Case& c : cases) {
    INFO(c.what);
    Json j = base_suite();
    c.change(j);
    const auto error = parse_error(j);
    REQUIRE(error.has_value());
    INFO(error->what());
    CHECK(error->where() == kPath + "#" + c.where);
    CHECK(error->message().find(c.fragment) != std::string::npos);
  }
  // A mini-batch optimizer is fine on a kind with data.
  Json j = base_suite();
  j["optimizers"] = {{"sgd-4", {{"kind", "sgd"}, {"batch_size", 4}}}};
  j["problems"][1]["optimizers"] = {"sgd-4"};
  CHECK_FALSE(parse_error(j).has_value());
}

TEST_CASE("registry: a factory's exception is an input error at the entry or its key", "[registry]") {
  ensure_registered();
  const std::vector<Case> cases = {
      {"InputError naming a key", [](Json& j) { j["problems"][1]["scale"] = -1; }, "/problems/1/scale",
       "problem kind 'test_fit': expected a number >= 0"},
      {"InputError naming a key of an array", [](Json& j) { j["problems"][0]["curvatures"] = {1, "x"}; },
       "/problems/0/curvatures", "expected a non-empty array of numbers > 0, found [1,\"x\"]"},
      {"InputError without a key", [](Json& j) { j["problems"][0].erase("curvatures"); }, "/problems/0",
       "problem kind 'test_bowl' could not build the problem: missing required key 'curvatures'"},
      {"another exception", [](Json& j) { j["problems"][1]["scale"] = 0; }, "/problems/1",
       "problem kind 'test_fit' could not build the problem: a scale of 0 gives no problem at all"},
      {"no problem returned", [](Json& j) { j["problems"][0] = {{"name", "empty"}, {"kind", "test_null"}}; },
       "/problems/0", "problem kind 'test_null': the factory returned no problem"},
  };
  for (const Case& c : cases) {
    INFO(c.what);
    Json j = base_suite();
    c.change(j);
    REQUIRE_FALSE(parse_error(j).has_value());  // the suite is well formed; the factory refuses
    const auto error = prepare_error(j);
    REQUIRE(error.has_value());
    INFO(error->what());
    CHECK(error->where() == kPath + "#" + c.where);
    CHECK(error->message().find(c.fragment) != std::string::npos);
  }
}

TEST_CASE("registry: run_suite runs a registered kind and records its name", "[registry]") {
  ensure_registered();
  const fs::path dir = temp_dir() / "run";
  fs::remove_all(dir);
  fs::create_directories(dir);
  Json j = base_suite();
  j["problems"].erase(1);
  j["problems"][0]["pinned"] = 0.1;
  j["problems"][0]["rates"] = {{"precision", 0.01}};
  const std::string suite = (dir / "registered.json").string();
  std::ofstream(suite) << j.dump(2);

  const SuiteRun run = run_suite(suite, (dir / "out").string(), 2);
  REQUIRE(run.results.cases.size() == 1);
  const CaseResult& c = run.results.cases[0];
  INFO(c.error);
  CHECK(c.error.empty());
  CHECK(c.id == "bowl/none/gd");
  CHECK(c.problem_kind == "test_bowl");
  // gd on ½ Σ λ_i w_i² is stable exactly below 2 / max λ = 0.5.
  CHECK(c.summary.edge <= 0.5);
  CHECK(c.summary.edge >= 0.5 / (1 + 0.01));
  CHECK(c.summary.headroom == Approx(c.summary.edge / 0.1));
  CHECK(run.failed_cases == 0);
  CHECK(run.runs == static_cast<int>(c.runs.size()));
  CHECK(run.runs > 0);
  CHECK_FALSE(run.baseline.has_value());
  CHECK_FALSE(run.gate.had_baseline);
  CHECK(run.gate.pass);
  CHECK(run.verdict_exit_code() == kExitPass);
  // results.json and the three reports are written, and the kind's name is in the file.
  CHECK(run.results_path == (dir / "out" / "results.json").string());
  const nlohmann::json written = read_json_file(run.results_path);
  CHECK(written["cases"][0]["problem_kind"] == "test_bowl");
  REQUIRE(run.reports.size() == 3);
  for (const std::string& r : run.reports) CHECK(fs::file_size(r) > 0);
  CHECK(read_results(run.results_path).cases[0].problem_kind == "test_bowl");

  SECTION("a pinned rate above the edge fails the verdict without a baseline") {
    j["problems"][0]["pinned"] = 0.6;
    std::ofstream(suite) << j.dump(2);
    const SuiteRun unsafe = run_suite(suite, (dir / "out-unsafe").string(), 1);
    CHECK_FALSE(unsafe.gate.pass);
    CHECK(unsafe.verdict_exit_code() == kExitFail);
  }
  SECTION("bad options and inputs are input errors before any run") {
    RunSuiteOptions o;
    o.out_dir = (dir / "never").string();
    o.jobs = -1;
    CHECK_THROWS_AS(run_suite(suite, o), InputError);
    o.jobs = 1;
    o.shard = std::pair{3, 2};
    CHECK_THROWS_WITH(run_suite(suite, o), Catch::Contains("expected K/N with 1 <= K <= N, found 3/2"));
    o.shard.reset();
    o.baseline = (dir / "no-such-baseline.json").string();
    CHECK_THROWS_AS(run_suite(suite, o), InputError);
    CHECK_THROWS_AS(run_suite((dir / "no-such-suite.json").string(), o), InputError);
    CHECK_FALSE(fs::exists(dir / "never"));
  }
}
