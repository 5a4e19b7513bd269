// One entry of the `problems` section: kind, kind options, reference and settings, and the
// checks that tie it to the rest of the suite (datasets, scalings, optimizers).
#include <cmath>
#include <algorithm>
#include <filesystem>

#include <fmt/format.h>

#include "stepgate/core/custom_kinds.hpp"
#include "stepgate/core/placeholders.hpp"
#include "stepgate/core/trainer_fields.hpp"
#include "stepgate/suite/suite_sections.hpp"

namespace stepgate::suite_detail {
namespace {

// Keys that only some kinds use, and which kinds.
struct KindKey {
  const char* key;
  std::vector<ProblemKind> kinds;
};

const std::vector<KindKey>& kind_keys() {
  using K = ProblemKind;
  const std::vector<K> linear = {K::least_squares, K::logistic, K::softmax};
  static const std::vector<KindKey> keys = {
      {"dataset", linear},
      {"intercept", linear},
      {"l2", linear},
      {"reduction", linear},
      {"init_scale", linear},
      {"gram_ratio", {K::least_squares}},
      {"classes", {K::softmax}},
      {"reference", {K::least_squares, K::logistic, K::command}},
      {"dim", {K::quadratic}},
      {"L", {K::quadratic}},
      {"condition", {K::quadratic}},
      {"spectrum", {K::quadratic}},
      {"seed", {K::quadratic}},
      {"start_radius", {K::quadratic}},
      {"function", {K::test_function}},
      {"command", {K::command}},
      {"optimum", {K::command, K::logistic, K::softmax}},
  };
  return keys;
}

// The kinds that registered themselves (core/custom_kinds.hpp), read once per problem entry.
std::vector<CustomKind> registered_kinds() {
  std::vector<CustomKind> kinds;
  for (const std::string& name : custom_kind_names())
    if (auto k = find_custom_kind(name)) kinds.push_back(std::move(*k));
  return kinds;
}

// Every key a problem entry may have: name, kind, the keys of every kind (built-in and
// registered) and the settings. A key of another kind is then refused by check_kind_keys with
// the kinds it is for, rather than as unknown.
std::vector<std::string> problem_keys(const std::vector<CustomKind>& custom) {
  std::vector<std::string> k = {"name", "kind"};
  for (const KindKey& kk : kind_keys()) k.push_back(kk.key);
  for (const CustomKind& c : custom)
    for (const std::string& key : c.keys)
      if (std::find(k.begin(), k.end(), key) == k.end()) k.push_back(key);
  for (const std::string& s : settings_keys()) k.push_back(s);
  return k;
}

bool has_data(ProblemKind k) {
  return k == ProblemKind::least_squares || k == ProblemKind::logistic || k == ProblemKind::softmax;
}

// Fails at the first key of the entry that belongs to kinds other than `kind` (`custom` is the
// registered kind when kind is ProblemKind::custom).
void check_kind_keys(const ObjectNode& o, ProblemKind kind, const CustomKind* custom,
                     const std::vector<CustomKind>& registered) {
  const std::string kind_name = custom ? custom->name : std::string(to_string(kind));
  const auto applies_to_custom = [](const CustomKind& c, const std::string& key) {
    return std::count(c.keys.begin(), c.keys.end(), key) > 0 || (key == "dataset" && c.uses_dataset);
  };
  for (const std::string& key : o.keys()) {
    std::vector<std::string> owners;  // the kinds the key is for
    bool applies = false;
    for (const KindKey& kk : kind_keys())
      if (key == kk.key) {
        for (ProblemKind k : kk.kinds) owners.emplace_back(to_string(k));
        applies = !custom && std::count(kk.kinds.begin(), kk.kinds.end(), kind) > 0;
      }
    for (const CustomKind& c : registered)
      if (applies_to_custom(c, key) && std::count(owners.begin(), owners.end(), c.name) == 0)
        owners.push_back(c.name);
    if (custom) applies = applies_to_custom(*custom, key);
    if (owners.empty() || applies) continue;  // name, kind, settings; or a key of this kind
    o.require(key).fail(fmt::format("key '{}' does not apply to a {} problem; it is for: {}", key,
                                    kind_name, join(owners)));
  }
}

// The `dataset` key: a data set the suite defines.
const DatasetSpec& read_dataset_key(const ObjectNode& o, const Suite& suite, ProblemSpec& p) {
  const Node dataset = o.require("dataset");
  p.dataset = dataset.string();
  const auto it = suite.datasets.find(p.dataset);
  if (it == suite.datasets.end()) {
    std::vector<std::string> defined;
    for (const auto& [name, spec] : suite.datasets) defined.push_back(name);
    dataset.fail(fmt::format(
        "undefined dataset '{}'{}; defined: {}", p.dataset, did_you_mean(p.dataset, defined),
        defined.empty() ? "none (the suite has no datasets section)" : join(defined)));
  }
  return it->second;
}

// A registered kind: its data set (when it uses one) and its own keys, passed to its factory
// as they are written (the factory checks their values).
void read_custom(const ObjectNode& o, const CustomKind& kind, const Suite& suite, ProblemSpec& p) {
  p.custom_kind = kind.name;
  if (kind.uses_dataset) read_dataset_key(o, suite, p);
  p.custom_params = nlohmann::json::object();
  for (const std::string& key : kind.keys)
    if (auto n = o.find(key)) p.custom_params[key] = nlohmann::json(n->json());
}

void read_linear(const ObjectNode& o, const Suite& suite, ProblemSpec& p) {
  const Node dataset = o.require("dataset");
  const DatasetSpec& d = read_dataset_key(o, suite, p);
  if (p.kind != ProblemKind::least_squares && d.source == DatasetSpec::Source::generated &&
      d.generated.kind == GeneratedSpec::linear)
    dataset.fail(
        fmt::format("found generated linear data (real-valued targets) for a {} problem; "
                    "expected class labels (generate kind 'logistic')",
                    to_string(p.kind)));

  LinearModelOptions& m = p.linear;
  const auto non_negative = [](double v) { return v >= 0; };
  if (auto n = o.find("intercept")) m.intercept = n->boolean();
  if (auto n = o.find("l2")) m.l2 = n->number_if(non_negative, "a number >= 0");
  if (auto n = o.find("reduction"))
    m.reduction =
        n->choice({"mean", "sum"}, "reduction") == "mean" ? Reduction::mean : Reduction::sum;
  if (auto n = o.find("init_scale"))
    m.init_scale = n->number_if(non_negative, "a number >= 0 (0 = start at zero)");
  if (auto n = o.find("gram_ratio"))
    m.gram_ratio = n->number_if(non_negative, "a number >= 0 (0 = never)");
  if (auto n = o.find("classes"))
    p.classes = n->integer_if([](long v) { return v == 0 || (v >= 2 && v <= 256); },
                              "0 (max label + 1) or a class count in 2..256");
}

void read_quadratic(const ObjectNode& o, ProblemSpec& p) {
  QuadraticOptions& q = p.quadratic;
  if (auto n = o.find("dim"))
    q.dim =
        n->integer_if([](long v) { return v >= 1; }, "a whole number >= 1");
  if (auto n = o.find("dim"); n && 8.0 * static_cast<double>(q.dim) * static_cast<double>(q.dim) > kMaxDataBytes)
    n->fail(fmt::format("found dim {}: its dense matrix needs about {:.3g} GiB; expected a dim of at most {} ({:.0f} GiB)",
                        q.dim, 8.0 * static_cast<double>(q.dim) * static_cast<double>(q.dim) / (1 << 30),
                        static_cast<long>(std::sqrt(kMaxDataBytes / 8)), kMaxDataBytes / (1 << 30)));
  if (auto n = o.find("L")) q.L = n->number_if([](double v) { return v > 0; }, "a number > 0");
  if (auto n = o.find("condition"))
    q.condition = n->number_if([](double v) { return v >= 1; }, "a number >= 1");
  if (auto n = o.find("condition"); n && q.dim == 1 && q.condition != 1)
    n->fail(fmt::format("found condition {} for dim 1; expected 1 (one eigenvalue is its own smallest and largest)",
                        q.condition));
  if (auto n = o.find("spectrum")) {
    const std::string& s = n->choice({"linear", "log_uniform", "two_clusters"}, "spectrum");
    q.spectrum = s == "linear"        ? Spectrum::linear
                 : s == "log_uniform" ? Spectrum::log_uniform
                                      : Spectrum::two_clusters;
  }
  if (auto n = o.find("seed")) q.seed = n->seed();
  if (auto n = o.find("start_radius"))
    q.start_radius = n->number_if([](double v) { return v > 0; }, "a number > 0");
}

// Names of the model's parameters when the dataset fixes them without reading the data.
std::optional<std::vector<std::string>> layout_names(const ProblemSpec& p, const DatasetSpec& d) {
  std::vector<std::string> names;
  if (d.source == DatasetSpec::Source::csv && !d.features.empty())
    names = d.features;
  else if (d.source == DatasetSpec::Source::generated)
    for (long j = 1; j <= d.generated.features; ++j) names.push_back(fmt::format("x{}", j));
  else
    return std::nullopt;
  if (p.linear.intercept) names.push_back("intercept");
  return names;
}

void read_problem_reference(const ObjectNode& o, const Suite& suite, ProblemSpec& p) {
  const auto node = o.find("reference");
  if (!node) return;
  p.reference = read_reference(*node);
  const auto expected = layout_names(p, suite.datasets.at(p.dataset));
  if (expected && *expected != p.reference->names)
    node->fail(
        fmt::format("found reference coefficients {}; expected exactly the model's parameters in "
                    "model order: {}",
                    join(p.reference->names), join(*expected)));
}

// Settings that a problem without data cannot use.
void check_dataless(const Node& node, const Layers& settings, const Suite& suite,
                    const ProblemSpec& p) {
  if (uses_dataset(p)) return;
  const std::string kind = problem_kind_name(p);
  if (auto n = settings.find("scalings"))
    for (std::size_t i = 0; i < p.scalings.size(); ++i)
      if (p.scalings[i] != "none")
        n->element(i).fail(
            fmt::format("found scaling '{}' on a {} problem, which has no data to scale; "
                        "expected only \"none\"",
                        p.scalings[i], kind));
  // A command's trainer gets batch_size as a field (core/trainer_fields.hpp) and batches itself.
  if (p.kind == ProblemKind::command) return;
  for (std::size_t i = 0; i < p.optimizers.size(); ++i) {
    const OptimizerSpec& spec = suite.optimizers.at(p.optimizers[i]);
    const auto listed = settings.find("optimizers");
    if (spec.batch_size > 0)
      (listed ? listed->element(i) : node)
          .fail(fmt::format(
              "found optimizer '{}' with batch_size {} on a {} problem, which has no samples to "
              "batch; expected full-batch optimizers (batch_size 0)",
              p.optimizers[i], spec.batch_size, kind));
  }
}

// The `command` object of a command problem (README, "Gating your own training code").
void read_command(const ObjectNode& o, ProblemSpec& p) {
  const Node node = o.require("command");
  const ObjectNode c(node, {"argv", "cwd", "env", "timeout", "parallel", "serve", "max_output", "grace"});
  CommandSpec& spec = p.command;
  read_process(c, spec, "trainer");
  if (auto n = c.find("parallel")) spec.parallel = static_cast<int>(n->integer_if([](long v) { return v >= 0 && v <= 256; }, "a whole number in [0, 256] (0 = --jobs)"));
  if (auto n = c.find("serve")) spec.serve = n->boolean();
  if (auto n = c.find("max_output")) spec.max_output = n->integer_if([](long v) { return v >= 1024; }, "bytes >= 1024");
  if (auto n = c.find("grace")) spec.grace = n->number_if([](double v) { return v >= 0 && v <= 600; }, "seconds in [0, 600]");
  if (auto n = o.find("optimum")) spec.optimum = n->number();
}

// `"optimum": "skip"` (logistic, softmax): no Newton solve for J*, whose cost at scale can
// outweigh the runs. Only where nothing needs J*: not the gap criterion, not reference values
// (they are compared with the optimum). The automatic criterion then resolves to the plateau.
void read_optimum_skip(const ObjectNode& o, ProblemSpec& p) {
  const auto n = o.find("optimum");
  if (!n) return;
  n->choice({"skip"}, "optimum");
  if (p.run.outcome.criterion == Criterion::gap)
    n->fail("found \"skip\" with the gap criterion, which measures the distance to J*; expected the "
            "criterion cost, grad or plateau (or automatic, which then means plateau), or no \"optimum\" key");
  if (p.reference)
    n->fail("found \"skip\" with reference values, which are compared with the optimum; expected one of the two");
  p.run.skip_optimum = true;
}

// "{optimizer.kind}, {optimizer.beta}": the placeholders of one group, in the order trainers get them.
std::string field_list(const std::vector<TrainerField>& fields, std::string_view group) {
  std::vector<std::string> names;
  for (const TrainerField& f : fields) names.push_back(fmt::format("{{{}.{}}}", group, f.key));
  return join(names);
}

// Every placeholder of every argument must be known for every optimizer of the problem (the
// run fails otherwise, too late): {optimizer.FIELD} and {schedule.FIELD} only for the fields
// of that optimizer's kind and schedule's kind (core/trainer_fields.hpp).
void check_placeholders(const ObjectNode& o, const Suite& suite, const ProblemSpec& p) {
  const Node argv = o.require("command").member("argv");
  for (std::size_t i = 0; i < p.command.argv.size(); ++i)
    for (const std::string& label : p.optimizers) {
      const OptimizerSpec& spec = suite.optimizers.at(label);
      const std::map<std::string, std::string> fields = trainer_placeholders(spec);
      try {
        const PlaceholderValues any{"x", "x", "x", "x", "x", "x", "x", &fields};
        expand_placeholders(p.command.argv[i], [&](std::string_view name) -> std::optional<std::string> {
          for (std::string_view per_run : kPerRunPlaceholders)
            if (name == per_run && p.command.serve)
              throw std::invalid_argument(fmt::format(
                  "found {{{}}} in the argv of a serving program, which is started once for many runs; "
                  "expected it in the requests (\"rate\", \"seed\") instead", name));
          std::optional<std::string> value = placeholder_value(name, any);
          if (value) return value;
          const bool of_optimizer = name.starts_with("optimizer."), of_schedule = name.starts_with("schedule.");
          if (!of_optimizer && !of_schedule) return value;  // expand_placeholders names the known ones
          const std::string field(name.substr(name.find('.') + 1));
          if (of_schedule)
            throw std::invalid_argument(fmt::format(
                "found {{{}}}, a field that the schedule of optimizer '{}' (kind {}) does not have; its fields: {}",
                name, label, to_string(spec.schedule.kind),
                field_list(schedule_trainer_fields(spec.schedule), "schedule")));
          throw std::invalid_argument(fmt::format(
              "found {{{}}}, a field that optimizer '{}' (kind {}) does not have{}; its fields: {}", name, label,
              to_string(spec.kind),
              field == "batch_size" || field == "sampling"
                  ? " (batch_size and sampling are fields only where the optimizer sets a batch_size above 0)"
                  : "",
              field_list(optimizer_trainer_fields(spec), "optimizer")));
        });
      } catch (const std::invalid_argument& e) {
        argv.element(i).fail(e.what());
      }
    }
}

}  // namespace

ProblemSpec read_problem(const Node& node, const std::optional<Node>& defaults,
                         const std::optional<Node>& suite_gate, Suite& suite) {
  const std::vector<CustomKind> registered = registered_kinds();
  const ObjectNode o(node, problem_keys(registered));
  ProblemSpec p;
  p.pointer = node.pointer();
  const Node name = o.require("name");
  p.name = name.string();
  check_name(name, p.name, "problem name");
  std::vector<std::string> kinds = builtin_problem_kind_names();
  for (const CustomKind& c : registered) kinds.push_back(c.name);
  const std::string& kind = o.require("kind").choice(kinds, "problem kind");
  const CustomKind* custom = nullptr;
  for (const CustomKind& c : registered)
    if (c.name == kind) custom = &c;
  p.kind = custom ? ProblemKind::custom : *problem_kind_from_string(kind);
  check_kind_keys(o, p.kind, custom, registered);

  if (custom) read_custom(o, *custom, suite, p);
  if (has_data(p.kind)) read_linear(o, suite, p);
  if (p.kind == ProblemKind::quadratic) read_quadratic(o, p);
  if (p.kind == ProblemKind::test_function)
    p.function = o.require("function").choice(suite_test_function_names(), "test function");
  if (p.kind == ProblemKind::command) read_command(o, p);

  Layers settings;
  if (defaults) settings.levels.push_back(*defaults);
  settings.levels.push_back(node);
  Layers gate;
  if (suite_gate) gate.levels.push_back(*suite_gate);
  read_settings(settings, gate, suite, p);
  check_dataless(node, settings, suite, p);
  if (p.kind == ProblemKind::command) {
    check_placeholders(o, suite, p);
  }
  if (has_data(p.kind)) read_problem_reference(o, suite, p);
  if (p.kind == ProblemKind::logistic || p.kind == ProblemKind::softmax) read_optimum_skip(o, p);
  // A command's reference values are compared with its last {"params": [...]} line, in the
  // order the file gives them (stepgate cannot know the program's parameter names).
  if (p.kind == ProblemKind::command)
    if (auto node = o.find("reference")) p.reference = read_reference(*node);
  return p;
}

}  // namespace stepgate::suite_detail
