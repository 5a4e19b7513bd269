// Tests of harness/suite/: a full suite reaches the Suite value field by field, malformed suites
// fail with the right JSON pointer and message, datasets load from each source, and the suite's
// list of test functions agrees with the problems stage.
#include <catch2/catch.hpp>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <functional>
#include <optional>
#include <set>
#include <string>

#include <nlohmann/json.hpp>

#include "stepgate/core/error.hpp"
#include "stepgate/data/generate.hpp"
#include "stepgate/data/sha256.hpp"
#include "stepgate/problems/test_functions.hpp"
#include "stepgate/suite/suite.hpp"

using namespace stepgate;
namespace fs = std::filesystem;
using Json = nlohmann::ordered_json;

namespace {

const std::string kSuites = std::string(STEPGATE_SOURCE_DIR) + "/tests/data/suites";

std::string in_suites(const std::string& relative) {
  return (fs::path(kSuites) / relative).lexically_normal().string();
}

std::string temp_file(const std::string& name, const std::string& bytes) {
  const fs::path dir = fs::path(STEPGATE_BINARY_DIR) / "test_suite_tmp";
  fs::create_directories(dir);
  const std::string path = (dir / name).string();
  std::ofstream(path, std::ios::binary) << bytes;
  return path;
}

// The smallest suite that touches datasets, optimizers and both kinds of problem; each
// malformed case below breaks it in one place.
Json base_suite() {
  return Json::parse(R"({
    "format": "stepgate.suite/1",
    "name": "bad-base",
    "datasets": {"houses": {"csv": "data/tiny.csv", "target": "price"}},
    "optimizers": {"hb": {"kind": "momentum", "beta": 0.9}},
    "problems": [
      {"name": "ols", "kind": "least_squares", "dataset": "houses", "optimizers": ["gd", "hb"],
       "rates": {"precision": 0.01}},
      {"name": "bowl", "kind": "quadratic"}
    ]
  })");
}

}  // namespace

TEST_CASE("suite: a full suite reaches every field of the Suite value", "[suite]") {
  const std::string path = in_suites("full.json");
  const Suite s = load_suite(path);
  CHECK(s.name == "full-round.trip_1");
  CHECK(s.description.find("round-trip") != std::string::npos);
  CHECK(s.path == path);
  CHECK(s.sha256 == sha256_file(path));

  SECTION("datasets, with paths resolved against the suite's folder") {
    REQUIRE(s.datasets.size() == 5);
    const DatasetSpec& h = s.datasets.at("houses");
    CHECK(h.name == "houses");
    CHECK(h.pointer == "/datasets/houses");
    CHECK(h.suite_path == path);
    CHECK(h.source == DatasetSpec::Source::csv);
    CHECK(h.path == in_suites("data/tiny.csv"));
    CHECK(h.target == "price");
    CHECK(h.features == std::vector<std::string>{"size", "rooms"});
    CHECK(h.csv.delimiter == ',');
    CHECK(h.csv.quote == '\'');
    CHECK(h.csv.header);
    CHECK(h.max_rows == 5);
    const DatasetSpec& n = s.datasets.at("houses_nh");
    CHECK(n.csv.whitespace_delimited);
    CHECK(n.csv.quote == '\0');
    CHECK_FALSE(n.csv.header);
    CHECK(n.csv.column_names == std::vector<std::string>{"size", "rooms", "sold", "price"});
    CHECK(n.features.empty());
    CHECK(n.max_rows == 0);
    const DatasetSpec& d = s.datasets.at("digits");
    CHECK(d.source == DatasetSpec::Source::idx);
    CHECK(d.path == in_suites("data/tiny-images.idx"));
    CHECK(d.labels_path == in_suites("data/tiny-labels.idx"));
    CHECK(d.pixel_scale == 0.5);
    CHECK(d.max_rows == 3);
    const GeneratedSpec& c = s.datasets.at("churn").generated;
    CHECK(s.datasets.at("churn").source == DatasetSpec::Source::generated);
    CHECK(c.kind == GeneratedSpec::logistic);
    CHECK(c.rows == 50);
    CHECK(c.features == 2);
    CHECK(c.seed == 7);
    CHECK(c.weights == std::vector<double>{1.5, -2.0});
    CHECK(c.intercept == 0.5);
    CHECK(c.feature_scales == std::vector<double>{1.0, 3.0});
    const GeneratedSpec& l = s.datasets.at("line").generated;
    CHECK(l.kind == GeneratedSpec::linear);
    CHECK(l.noise == 0.2);
    CHECK(l.weights.empty());
  }

  SECTION("scalings, with the predefined identity 'none'") {
    REQUIRE(s.scalings.size() == 6);
    CHECK(s.scalings.at("none").kind == ScalingSpec::none);
    CHECK(s.scalings.at("none").name == "none");
    CHECK(s.scalings.at("std").kind == ScalingSpec::standardize);
    CHECK(s.scalings.at("std").drop_constant);
    CHECK(s.scalings.at("std").name == "std");
    CHECK(s.scalings.at("cm").kind == ScalingSpec::units);
    CHECK(s.scalings.at("cm").factor == 100.0);
    CHECK(s.scalings.at("cm").columns == std::vector<std::string>{"size"});
    CHECK(s.scalings.at("jit").span == 10.0);
    CHECK(s.scalings.at("jit").seed == 4);
    CHECK(s.scalings.at("mm").kind == ScalingSpec::minmax);
    CHECK(s.scalings.at("ma").kind == ScalingSpec::maxabs);
  }

  SECTION("optimizers: defined ones, and predefined ones added where used") {
    const OptimizerSpec& hb = s.optimizers.at("hb-0.8");
    CHECK(hb.kind == OptimizerKind::momentum);
    CHECK(hb.label == "hb-0.8");
    CHECK(hb.beta == 0.8);
    const OptimizerSpec& nag = s.optimizers.at("nag");
    CHECK(nag.kind == OptimizerKind::nesterov);
    CHECK(nag.schedule.kind == ScheduleKind::step);
    CHECK(nag.schedule.factor == 0.5);
    CHECK(nag.schedule.every == 100);
    CHECK(nag.schedule.warmup == 10);
    // "adam" is defined by the suite (kind taken from the name), overriding the predefined one.
    CHECK(s.optimizers.at("adam").kind == OptimizerKind::adam);
    CHECK(s.optimizers.at("adam").beta2 == 0.99);
    CHECK(s.optimizers.at("adam").eps == 1e-7);
    CHECK(s.optimizers.at("adam").beta1 == OptimizerSpec{}.beta1);
    CHECK(s.optimizers.at("mb").kind == OptimizerKind::sgd);
    CHECK(s.optimizers.at("mb").batch_size == 8);
    CHECK(s.optimizers.at("mb").sampling == BatchSampling::independent);
    CHECK(s.optimizers.at("hb-0.8").sampling == BatchSampling::epochs);  // the default
    CHECK(s.optimizers.at("mb").schedule.kind == ScheduleKind::cosine);
    CHECK(s.optimizers.at("mb").schedule.floor == 0.1);
    CHECK(s.optimizers.at("rms").rho == 0.95);
    CHECK(s.optimizers.at("ada").schedule.kind == ScheduleKind::inverse_time);
    CHECK(s.optimizers.at("ada").schedule.decay == 0.01);
    CHECK(s.optimizers.at("exp").schedule.kind == ScheduleKind::exponential);
    CHECK(s.optimizers.at("exp").beta1 == 0.8);
    // Predefined with the kind's defaults: used but not defined.
    for (const char* name : {"gd", "nesterov", "momentum"}) {
      INFO(name);
      REQUIRE(s.optimizers.count(name) == 1);
      CHECK(s.optimizers.at(name).kind == *optimizer_kind_from_string(name));
      CHECK(s.optimizers.at(name).label == name);
      CHECK(s.optimizers.at(name).beta == OptimizerSpec{}.beta);
    }
    CHECK(s.optimizers.count("sgd") == 0);  // not used, so not added
  }

  SECTION("problems: kind options, defaults merged, the problem's own settings win") {
    REQUIRE(s.problems.size() == 6);
    const ProblemSpec& ols = s.problems[0];
    CHECK(ols.name == "houses-ols");
    CHECK(ols.pointer == "/problems/0");
    CHECK(ols.kind == ProblemKind::least_squares);
    CHECK(ols.dataset == "houses");
    CHECK(ols.linear.intercept);
    CHECK(ols.linear.l2 == 0.5);
    CHECK(ols.linear.reduction == Reduction::sum);
    CHECK(ols.linear.init_scale == 0.1);
    CHECK(ols.linear.gram_ratio == 2.0);
    CHECK(ols.scalings == std::vector<std::string>{"none", "std", "cm"});
    CHECK(ols.optimizers == std::vector<std::string>{"gd", "hb-0.8"});  // from defaults
    CHECK(ols.seeds == std::vector<std::uint64_t>{1, 2, 3, 4});         // count form
    CHECK(ols.run.budget == 2000);
    // rates merge key by key: grid, precision, lanes from defaults; the rest from the problem.
    REQUIRE(ols.rates.grid.has_value());
    CHECK(ols.rates.grid->from == 1e-3);
    CHECK(ols.rates.grid->to == 2.0);
    CHECK(ols.rates.grid->per_decade == 4);
    CHECK(ols.rates.precision == 0.02);
    CHECK(ols.rates.lanes == 4);
    CHECK(ols.rates.fixed == std::vector<double>{0.05});
    CHECK(ols.rates.refine_points == 0);
    CHECK_FALSE(ols.rates.locate_floor);
    CHECK(ols.rates.locate_edge);
    CHECK(ols.run.outcome.tol == 1e-5);
    CHECK(ols.run.outcome.hold == 2);
    CHECK(ols.run.outcome.criterion == Criterion::automatic);
    // pinned: the problem's object replaces the defaults' number.
    CHECK(ols.pinned == std::map<std::string, double>{{"gd", 0.02}});
    // gate: suite section, then defaults, then the problem.
    CHECK(ols.gate.edge_moved == 0.1);
    CHECK(ols.gate.pinned_headroom == 2.0);
    CHECK(ols.gate.case_added == Severity::fail);
    CHECK(ols.gate.floor_moved == 0.3);
    CHECK(ols.gate.data_changed == Severity::fail);
    REQUIRE(ols.reference.has_value());
    CHECK(ols.reference->source.find("made-up") != std::string::npos);
    CHECK(ols.reference->digits == 8.0);
    CHECK(ols.reference->names == std::vector<std::string>{"size", "rooms", "intercept"});
    REQUIRE(ols.reference->values.size() == 3);
    CHECK(ols.reference->values(0) == 2.5);
    CHECK(ols.reference->values(1) == 7.25);
    CHECK(ols.reference->values(2) == 12.0);

    const ProblemSpec& logit = s.problems[1];
    CHECK(logit.kind == ProblemKind::logistic);
    CHECK_FALSE(logit.linear.intercept);
    CHECK(logit.optimizers == std::vector<std::string>{"adam", "mb", "rms"});
    CHECK(logit.scalings == std::vector<std::string>{"none"});
    // A number for pinned applies to every optimizer of the problem.
    CHECK(logit.pinned ==
          std::map<std::string, double>{{"adam", 0.01}, {"mb", 0.01}, {"rms", 0.01}});
    REQUIRE(logit.reference.has_value());
    CHECK(logit.reference->digits == 6.0);
    // Inline coefficients keep the order written, not alphabetical order.
    CHECK(logit.reference->names == std::vector<std::string>{"size", "rooms", "price"});
    CHECK(logit.reference->values(2) == 0.125);

    const ProblemSpec& soft = s.problems[2];
    CHECK(soft.kind == ProblemKind::softmax);
    CHECK(soft.classes == 3);
    CHECK(soft.seeds == std::vector<std::uint64_t>{5, 0, 18446744073709551615ULL});
    CHECK(soft.run.eval_every == 2);
    CHECK(soft.run.outcome.criterion == Criterion::grad);
    CHECK(soft.run.outcome.blowup_factor == 100.0);
    CHECK(soft.run.outcome.overshoot_limit == 1.0);
    CHECK(soft.run.outcome.plateau_window == 5);
    CHECK(soft.run.outcome.tol == 1e-5);
    CHECK_FALSE(soft.reference.has_value());

    const ProblemSpec& churn = s.problems[3];
    CHECK_FALSE(churn.rates.grid.has_value());
    CHECK(churn.rates.fixed == std::vector<double>{0.1, 0.2});
    CHECK_FALSE(churn.rates.locate_edge);
    CHECK_FALSE(churn.rates.locate_blowup);
    CHECK(churn.run.outcome.criterion == Criterion::cost);
    CHECK(churn.run.outcome.target == 0.3);

    const ProblemSpec& bowl = s.problems[4];
    CHECK(bowl.kind == ProblemKind::quadratic);
    CHECK(bowl.dataset.empty());
    CHECK(bowl.quadratic.dim == 10);
    CHECK(bowl.quadratic.L == 4.0);
    CHECK(bowl.quadratic.condition == 50.0);
    CHECK(bowl.quadratic.spectrum == Spectrum::two_clusters);
    CHECK(bowl.quadratic.seed == 9);
    CHECK(bowl.quadratic.start_radius == 2.0);
    CHECK(bowl.pinned == std::map<std::string, double>{{"gd", 0.01}, {"hb-0.8", 0.01}});

    const ProblemSpec& banana = s.problems[5];
    CHECK(banana.kind == ProblemKind::test_function);
    CHECK(banana.function == "rosenbrock");
    CHECK(banana.pinned == std::map<std::string, double>{{"momentum", 0.001}});
  }

  SECTION("suite gate section") {
    CHECK(s.gate.edge_moved == 0.07);
    CHECK(s.gate.floor_moved == 0.3);
    CHECK(s.gate.best_moved == 3.0);
    CHECK(s.gate.pinned_headroom == 1.2);
    CHECK(s.gate.pinned_iterations == 0.5);
    CHECK(s.gate.min_lre == 4.0);
    CHECK(s.gate.theory == 1.5);
    CHECK(s.gate.case_added == Severity::pass);
    CHECK(s.gate.case_missing == Severity::warn);
    CHECK(s.gate.data_changed == Severity::fail);
  }
}

TEST_CASE("suite: a minimal suite takes the struct defaults", "[suite]") {
  const Suite s = parse_suite(base_suite().dump(), in_suites("base.json"));
  REQUIRE(s.problems.size() == 2);
  const ProblemSpec& bowl = s.problems[1];
  const ProblemSpec defaults;
  CHECK(bowl.scalings == std::vector<std::string>{"none"});
  CHECK(bowl.optimizers == std::vector<std::string>{"gd"});
  CHECK(bowl.seeds == std::vector<std::uint64_t>{1, 2, 3});
  CHECK(bowl.run.budget == RunSettings{}.budget);
  CHECK(bowl.rates.grid.has_value());
  CHECK(bowl.rates.grid->from == RateGrid{}.from);
  CHECK(bowl.rates.precision == RatePolicy{}.precision);
  CHECK(bowl.quadratic.dim == QuadraticOptions{}.dim);
  CHECK(bowl.pinned.empty());
  CHECK(bowl.gate.edge_moved == GateTolerances{}.edge_moved);
  CHECK(std::isnan(bowl.run.outcome.tol));
  CHECK(s.description.empty());
  CHECK(s.scalings.size() == 1);
  CHECK(s.optimizers.size() == 2);  // hb, and gd predefined
  CHECK(s.sha256 == sha256_hex(base_suite().dump()));
}

TEST_CASE("suite: malformed suites fail at the right pointer with a helpful message", "[suite]") {
  const std::string path = in_suites("bad.json");
  const std::string bad_reference =
      temp_file("bad-ref.json", R"({"format": "stepgate.reference/1", "source": "x",
                                   "coefficients": {"size": 1, "rooms": "two"}})");
  struct Case {
    const char* what;
    std::function<void(Json&)> change;  // applied to base_suite(); ignored when text is set
    std::string where;                  // pointer, or "@line:col" for a syntax error
    std::string fragment;
    std::string text = "";
  };
  const std::vector<Case> cases = {
      {"wrong type", [](Json& j) { j["problems"][0]["budget"] = "many"; }, "/problems/0/budget",
       "expected a whole number, found \"many\""},
      {"unknown key", [](Json& j) { j["problems"][0]["rates"]["preciison"] = 0.1; },
       "/problems/0/rates/preciison", "unknown key 'preciison' (did you mean 'precision'?)"},
      {"gate key of 0.1, suite level", [](Json& j) { j["gate"]["min_headroom"] = 2; }, "/gate/min_headroom",
       "'min_headroom' is now called 'pinned_headroom', as its rule is"},
      {"gate key of 0.1, problem level", [](Json& j) { j["problems"][0]["gate"]["theory_factor"] = 2; },
       "/problems/0/gate/theory_factor", "'theory_factor' is now called 'theory'"},
      {"gate key named as its rule", [](Json& j) { j["gate"]["best_moved"] = "three"; }, "/gate/best_moved",
       "expected a number, found \"three\""},
      {"gate key named as its rule, out of range", [](Json& j) { j["gate"]["best_moved"] = 0.5; }, "/gate/best_moved",
       "expected a number >= 1"},
      {"unknown top-level key", [](Json& j) { j["problem"] = Json::array(); }, "/problem",
       "(did you mean 'problems'?)"},
      {"missing problem name", [](Json& j) { j["problems"][1].erase("name"); }, "/problems/1",
       "missing required key 'name'"},
      {"duplicate problem", [](Json& j) { j["problems"][1]["name"] = "ols"; }, "/problems/1/name",
       "found problem name 'ols' again"},
      {"bad suite name", [](Json& j) { j["name"] = "my suite"; }, "/name", "letters, digits"},
      {"bad format tag", [](Json& j) { j["format"] = "stepgate.suite/2"; }, "/format",
       "expected \"stepgate.suite/1\", found \"stepgate.suite/2\""},
      {"empty problems", [](Json& j) { j["problems"] = Json::array(); }, "/problems",
       "expected a non-empty array of problems"},
      {"undefined dataset", [](Json& j) { j["problems"][0]["dataset"] = "house"; },
       "/problems/0/dataset", "undefined dataset 'house' (did you mean 'houses'?)"},
      {"linear model without dataset", [](Json& j) { j["problems"][0].erase("dataset"); },
       "/problems/0", "missing required key 'dataset'"},
      {"undefined scaling",
       [](Json& j) {
         j["problems"][0]["scalings"] = {"none", "std"};
       },
       "/problems/0/scalings/1", "undefined scaling 'std'"},
      {"undefined optimizer",
       [](Json& j) {
         j["problems"][0]["optimizers"] = {"gd", "adma"};
       },
       "/problems/0/optimizers/1", "undefined optimizer 'adma' (did you mean 'adam'?)"},
      {"pinned for an optimizer not used",
       [](Json& j) {
         j["problems"][0]["pinned"] = {{"nag", 0.1}};
       },
       "/problems/0/pinned/nag", "does not use"},
      {"pinned zero", [](Json& j) { j["problems"][0]["pinned"] = 0; }, "/problems/0/pinned",
       "expected a rate > 0, found 0"},
      {"optimum skip on least squares (its optimum is closed form)",
       [](Json& j) { j["problems"][0]["optimum"] = "skip"; }, "/problems/0/optimum",
       "key 'optimum' does not apply to a least_squares problem; it is for: command, logistic, softmax"},
      {"optimum other than skip on logistic",
       [](Json& j) {
         j["problems"][0]["kind"] = "logistic";
         j["problems"][0]["optimum"] = 0.25;
       },
       "/problems/0/optimum", "one of: skip"},
      {"optimum skip with the gap criterion",
       [](Json& j) {
         j["problems"][0]["kind"] = "logistic";
         j["problems"][0]["optimum"] = "skip";
         j["problems"][0]["outcome"] = {{"criterion", "gap"}};
       },
       "/problems/0/optimum", "found \"skip\" with the gap criterion"},
      {"optimum skip with reference values",
       [](Json& j) {
         j["problems"][0]["kind"] = "logistic";
         j["problems"][0]["optimum"] = "skip";
         j["problems"][0]["reference"] = {{"source", "x"},
                                          {"coefficients", {{"size", 1.0}, {"rooms", 2.0}, {"sold", 0.5}, {"intercept", 0.0}}}};
       },
       "/problems/0/optimum", "with reference values"},
      {"negative fixed rate",
       [](Json& j) {
         j["problems"][0]["rates"]["fixed"] = {0.1, -1};
       },
       "/problems/0/rates/fixed/1", "expected a rate > 0, found -1"},
      {"grid from >= to",
       [](Json& j) {
         j["problems"][0]["rates"]["grid"] = {{"from", 1}, {"to", 0.5}};
       },
       "/problems/0/rates/grid/to", "expected from < to"},
      {"no grid and no fixed rates", [](Json& j) { j["problems"][0]["rates"]["grid"] = nullptr; },
       "/problems/0/rates/grid", "no grid and no fixed rates"},
      {"precision 0", [](Json& j) { j["problems"][0]["rates"]["precision"] = 0; },
       "/problems/0/rates/precision", "expected a number in (0, 1], found 0"},
      {"lanes 0", [](Json& j) { j["problems"][0]["rates"]["lanes"] = 0; },
       "/problems/0/rates/lanes", "expected a whole number in 1..16, found 0"},
      {"lanes out of range in defaults",
       [](Json& j) {
         j["defaults"] = {{"rates", {{"lanes", 17}}}};
       },
       "/defaults/rates/lanes", "1..16"},
      {"empty seeds", [](Json& j) { j["problems"][0]["seeds"] = Json::array(); },
       "/problems/0/seeds", "at least one seed"},
      {"duplicate seeds",
       [](Json& j) {
         j["problems"][0]["seeds"] = {1, 2, 1};
       },
       "/problems/0/seeds/2", "found seed 1 twice"},
      {"negative seed",
       [](Json& j) {
         j["problems"][0]["seeds"] = {1, -2};
       },
       "/problems/0/seeds/1", "expected a whole number >= 0, found -2"},
      {"budget 0", [](Json& j) { j["problems"][0]["budget"] = 0; }, "/problems/0/budget",
       "expected a whole number in 1..1000000000 (a larger budget is too large to run), found 0"},
      {"eval_every negative", [](Json& j) { j["problems"][0]["eval_every"] = -1; },
       "/problems/0/eval_every", ">= 0"},
      {"bad criterion",
       [](Json& j) {
         j["problems"][0]["outcome"] = {{"criterion", "gapp"}};
       },
       "/problems/0/outcome/criterion", "unknown criterion 'gapp' (did you mean 'gap'?)"},
      {"cost without target",
       [](Json& j) {
         j["problems"][0]["outcome"] = {{"criterion", "cost"}};
       },
       "/problems/0/outcome/criterion", "without a target"},
      {"blowup_factor 1",
       [](Json& j) {
         j["problems"][0]["outcome"] = {{"blowup_factor", 1}};
       },
       "/problems/0/outcome/blowup_factor", "expected a number > 1"},
      {"beta 1.0", [](Json& j) { j["optimizers"]["hb"]["beta"] = 1.0; }, "/optimizers/hb/beta",
       "expected a number in [0, 1), found 1"},
      {"optimizer without kind", [](Json& j) { j["optimizers"]["hb"].erase("kind"); },
       "/optimizers/hb", "missing required key 'kind'"},
      {"predefined sgd has no batch size",
       [](Json& j) { j["problems"][0]["optimizers"] = {"sgd"}; }, "/problems/0/optimizers/0",
       "sgd needs batch_size > 0"},
      {"unknown batch sampling",
       [](Json& j) { j["optimizers"]["mbs"] = {{"kind", "sgd"}, {"batch_size", 4}, {"sampling", "independant"}}; },
       "/optimizers/mbs/sampling",
       "unknown batch sampling 'independant' (did you mean 'independent'?); expected one of: epochs, independent, "
       "replacement"},
      {"batch sampling not a word",
       [](Json& j) { j["optimizers"]["mbs"] = {{"kind", "sgd"}, {"batch_size", 4}, {"sampling", 1}}; },
       "/optimizers/mbs/sampling", "expected a batch sampling (one of: epochs, independent, replacement), found 1"},
      {"batch sampling on a full-batch optimizer",
       [](Json& j) { j["optimizers"]["gds"] = {{"kind", "gd"}, {"sampling", "replacement"}}; },
       "/optimizers/gds/sampling", "expected batch_size > 0 beside it"},
      {"sgd on a quadratic",
       [](Json& j) {
         j["optimizers"]["mb"] = {{"kind", "sgd"}, {"batch_size", 4}};
         j["problems"][1]["optimizers"] = {"mb"};
       },
       "/problems/1/optimizers/0", "no samples to batch"},
      {"scaling on a quadratic",
       [](Json& j) {
         j["scalings"] = {{"std", {{"kind", "standardize"}}}};
         j["problems"][1]["scalings"] = {"none", "std"};
       },
       "/problems/1/scalings/1", "no data to scale"},
      {"dataset on a quadratic", [](Json& j) { j["problems"][1]["dataset"] = "houses"; },
       "/problems/1/dataset", "does not apply to a quadratic problem"},
      {"reference on softmax",
       [](Json& j) {
         j["problems"][0]["kind"] = "softmax";
         j["problems"][0]["reference"] = {{"source", "x"}, {"coefficients", {{"a", 1}}}};
       },
       "/problems/0/reference", "does not apply to a softmax problem"},
      {"unknown test function",
       [](Json& j) {
         j["problems"][1] = {{"name", "tf"}, {"kind", "test_function"}, {"function", "rosenbrok"}};
       },
       "/problems/1/function", "(did you mean 'rosenbrock'?)"},
      {"units factor 0",
       [](Json& j) {
         j["scalings"] = {{"u", {{"kind", "units"}, {"factor", 0}}}};
       },
       "/scalings/u/factor", "other than 0, found 0"},
      {"jitter span below 1",
       [](Json& j) {
         j["scalings"] = {{"j", {{"kind", "jitter"}, {"span", 0.5}}}};
       },
       "/scalings/j/span", "expected a number >= 1, found 0.5"},
      {"missing data file", [](Json& j) { j["datasets"]["houses"]["csv"] = "data/nope.csv"; },
       "/datasets/houses/csv", "found no data file"},
      {"two data sources", [](Json& j) { j["datasets"]["houses"]["generate"] = Json::object(); },
       "/datasets/houses", "expected exactly one of"},
      {"missing reference file", [](Json& j) { j["problems"][0]["reference"] = "data/none.json"; },
       "/problems/0/reference", "found no reference file"},
      {"reference in the wrong order",
       [&](Json& j) {
         j["datasets"]["houses"]["features"] = {"size", "rooms"};
         j["problems"][0]["reference"] = {
             {"source", "x"}, {"coefficients", {{"rooms", 1}, {"size", 2}, {"intercept", 3}}}};
       },
       "/problems/0/reference",
       "expected exactly the model's parameters in model order: size, rooms, intercept"},
      {"JSON syntax error", nullptr, "@3:11", "syntax error",
       "{\n  \"format\": \"stepgate.suite/1\",\n  \"name\": ,\n  \"problems\": []\n}"},
      {"repeated key", nullptr, "/problems/0/kind", "found the key 'kind' a second time",
       R"({"format": "stepgate.suite/1", "name": "x", "problems": [{"name": "q", "kind": "quadratic", "kind": "quadratic"}]})"},
  };
  for (const Case& c : cases) {
    INFO(c.what);
    std::string text = c.text;
    if (text.empty()) {
      Json j = base_suite();
      c.change(j);
      text = j.dump(2);
    }
    std::optional<InputError> error;
    try {
      parse_suite(text, path);
    } catch (const InputError& e) {
      error = e;
    } catch (const std::exception& e) {
      FAIL("not an InputError: " << e.what());
    }
    REQUIRE(error.has_value());
    INFO(error->what());
    if (c.where[0] == '@')
      CHECK(error->where() == path + ":" + c.where.substr(1));
    else
      CHECK(error->where() == path + "#" + c.where);
    CHECK(error->message().find(c.fragment) != std::string::npos);
  }

  SECTION("a malformed reference file is reported inside that file") {
    Json j = base_suite();
    j["problems"][0]["reference"] = bad_reference;
    try {
      parse_suite(j.dump(), path);
      FAIL("no error");
    } catch (const InputError& e) {
      CHECK(e.where() == bad_reference + "#/coefficients/rooms");
      CHECK(e.message() == "expected a number, found \"two\"");
    }
  }
}

TEST_CASE("suite: load_dataset reads each source as the suite describes it", "[suite]") {
  const Suite s = load_suite(in_suites("full.json"));

  SECTION("csv with a header, explicit features and max_rows") {
    const Dataset d = load_dataset(s.datasets.at("houses"));
    CHECK(d.name == "houses");
    REQUIRE(d.rows() == 5);  // the file has 8 rows
    REQUIRE(d.cols() == 2);
    CHECK(d.features == std::vector<std::string>{"size", "rooms"});
    CHECK(d.target == "price");
    CHECK(d.X(4, 0) == 64.0);  // tiny.csv row 5: 64,3,0,188
    CHECK(d.y(4) == 188.0);
    CHECK(d.sha256 == sha256_file(in_suites("data/tiny.csv")));
  }
  SECTION("csv, whitespace-delimited, without header") {
    const Dataset d = load_dataset(s.datasets.at("houses_nh"));
    REQUIRE(d.rows() == 5);
    CHECK(d.features == std::vector<std::string>{"size", "rooms", "price"});
    CHECK(d.y(1) == 1.0);
    CHECK(d.X(1, 2) == 210.0);
  }
  SECTION("idx with pixel scale and max_rows") {
    const Dataset d = load_dataset(s.datasets.at("digits"));
    REQUIRE(d.rows() == 3);
    REQUIRE(d.cols() == 6);
    CHECK(d.X(1, 0) == 60.0 * 0.5);  // the bytes written into tiny-images.idx
    CHECK(d.y(2) == 2.0);
    CHECK(d.name == "digits");
    CHECK(d.sha256.size() == 64);
  }
  SECTION("generated data is what data/generate gives for the same spec") {
    const Dataset d = load_dataset(s.datasets.at("churn"));
    const Dataset direct = generate_dataset(s.datasets.at("churn").generated, "churn");
    REQUIRE(d.rows() == 50);
    REQUIRE(d.cols() == 2);
    CHECK(d.X == direct.X);
    CHECK(d.y == direct.y);
    CHECK(d.name == "churn");
    for (Index i = 0; i < d.rows(); ++i) CHECK((d.y(i) == 0.0 || d.y(i) == 1.0));
  }
  SECTION("a data error keeps the reader's location and names the dataset") {
    DatasetSpec spec = s.datasets.at("houses");
    spec.target = "cost";
    try {
      load_dataset(spec);
      FAIL("no error");
    } catch (const InputError& e) {
      CHECK(e.where().rfind(in_suites("data/tiny.csv") + ":1:", 0) == 0);
      CHECK(e.message().find("no column named") != std::string::npos);
      CHECK(e.message().find("dataset 'houses', " + in_suites("full.json") + "#/datasets/houses") !=
            std::string::npos);
    }
  }
}

TEST_CASE("suite: test function names agree with the problems stage", "[suite]") {
  std::set<std::string> from_problems;
  for (std::string_view n : test_function_names()) from_problems.emplace(n);
  const std::set<std::string> from_suite(suite_test_function_names().begin(),
                                         suite_test_function_names().end());
  CHECK(from_suite == from_problems);
  CHECK(from_suite.size() == suite_test_function_names().size());
}

TEST_CASE("suite: problem kinds print and parse back", "[suite]") {
  for (ProblemKind k : {ProblemKind::least_squares, ProblemKind::logistic, ProblemKind::softmax,
                        ProblemKind::quadratic, ProblemKind::test_function})
    CHECK(problem_kind_from_string(to_string(k)) == k);
  CHECK_FALSE(problem_kind_from_string("Least_Squares").has_value());
}
