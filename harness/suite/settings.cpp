// Problem settings (scalings, optimizers, rates, seeds, budget, outcome, pinned, gate), given
// in `defaults` and per problem. Each key comes from the highest level that has it; rates,
// outcome and gate merge key by key, so every value is reported where it was written.
#include <algorithm>
#include <cmath>
#include <set>
#include <type_traits>
#include <variant>

#include <fmt/format.h>

#include "stepgate/suite/suite_sections.hpp"

namespace stepgate::suite_detail {

namespace {

// `first`, then the keys of `fields`.
template <class S>
std::vector<std::string> keys_with(std::vector<std::string> first, const std::vector<SettingField<S>>& fields) {
  for (std::string& k : field_keys(fields)) first.push_back(std::move(k));
  return first;
}

}  // namespace

const std::vector<std::string>& rate_keys() {
  static const std::vector<std::string> keys = keys_with({"grid", "fixed"}, rate_fields());
  return keys;
}

const std::vector<std::string>& outcome_keys() {
  static const std::vector<std::string> keys = keys_with({"criterion", "noise"}, outcome_fields());
  return keys;
}

namespace {

// Each field of `table` that `source` (Layers or an ObjectNode) has, read into `s` and checked
// against its range where it is written.
template <class Source, class S>
void read_fields(const Source& source, const std::vector<SettingField<S>>& table, S& s) {
  for (const SettingField<S>& f : table) {
    const auto n = source.find(f.key);
    if (!n) continue;
    std::visit(
        [&](auto member) {
          using T = std::remove_reference_t<decltype(s.*member)>;
          if constexpr (std::is_same_v<T, bool>)
            s.*member = n->boolean();
          else if constexpr (std::is_same_v<T, double>)
            s.*member = n->number_if([&](double v) { return f.range.admits(v); }, f.expected());
          else
            s.*member = static_cast<T>(n->integer_if([&](long v) { return f.range.admits(double(v)); }, f.expected()));
        },
        f.member);
  }
}

void check_levels(const Layers& layers, const std::vector<std::string>& keys) {
  for (const Node& level : layers.levels) ObjectNode(level, keys);
}

const auto positive = [](double v) { return v > 0; };

// A list of names, each defined in `defined`; returns the names.
std::vector<std::string> names_in(const Node& node, std::string_view what,
                                  const std::vector<std::string>& defined) {
  const std::vector<std::string> names = node.strings();
  if (names.empty()) node.expected(fmt::format("at least one {} name", what));
  for (std::size_t i = 0; i < names.size(); ++i) {
    const Node e = node.element(i);
    if (std::count(names.begin(), names.begin() + long(i), names[i]))
      e.fail(fmt::format("found {} '{}' twice; expected each once", what, names[i]));
    if (std::find(defined.begin(), defined.end(), names[i]) == defined.end())
      e.fail(fmt::format("undefined {} '{}'{}; defined: {}", what, names[i],
                         did_you_mean(names[i], defined), join(defined)));
  }
  return names;
}

template <class Map>
std::vector<std::string> keys_of(const Map& map) {
  std::vector<std::string> out;
  for (const auto& [key, value] : map) out.push_back(key);
  return out;
}

void read_optimizer_names(const Layers& settings, Suite& suite, ProblemSpec& p) {
  const auto node = settings.find("optimizers");
  if (!node) {
    p.optimizers = {"gd"};
    suite.optimizers.try_emplace("gd", *predefined_optimizer("gd"));
    return;
  }
  std::vector<std::string> defined = keys_of(suite.optimizers);
  for (const std::string& kind : optimizer_kind_names())
    if (!suite.optimizers.count(kind)) defined.push_back(kind);
  p.optimizers = names_in(*node, "optimizer", defined);
  for (std::size_t i = 0; i < p.optimizers.size(); ++i) {
    const std::string& name = p.optimizers[i];
    if (suite.optimizers.count(name)) continue;
    const OptimizerSpec spec = *predefined_optimizer(name);
    if (const std::string problems = validate(spec); !problems.empty())
      node->element(i).fail(
          fmt::format("the predefined optimizer '{}' cannot run with its defaults ({}); "
                      "expected it defined under /optimizers",
                      name, problems));
    suite.optimizers.emplace(name, spec);
  }
}

RateGrid read_grid(const Node& node) {
  const ObjectNode o(node, field_keys(grid_fields()));
  RateGrid g;
  read_fields(o, grid_fields(), g);
  if (!(g.from < g.to))
    (o.has("to") ? o.require("to") : node)
        .fail(fmt::format("found a grid from {} to {}; expected from < to", g.from, g.to));
  return g;
}

RatePolicy read_rates(const Layers& rates) {
  check_levels(rates, rate_keys());
  RatePolicy r;
  const auto grid = rates.find("grid");
  if (grid) r.grid = grid->is_null() ? std::nullopt : std::optional<RateGrid>(read_grid(*grid));
  const auto fixed = rates.find("fixed");
  if (fixed)
    for (const Node& e : fixed->elements()) r.fixed.push_back(e.number_if(positive, "a rate > 0"));
  read_fields(rates, rate_fields(), r);
  if (!r.grid && r.fixed.empty())
    (fixed ? *fixed : *grid)
        .fail("found no grid and no fixed rates; expected a grid, fixed rates, or both");
  return r;
}

std::vector<std::uint64_t> read_seeds(const Node& node) {
  std::vector<std::uint64_t> seeds;
  if (node.json().is_number()) {
    // A count N stands for the seeds 1..N.
    if (!node.json().is_number_integer() && !(node.number() == std::floor(node.number())))
      node.expected("a seed count in 1..100000, or an array of seeds");
    const long count = node.integer_if([](long v) { return v >= 1 && v <= 100000; },
                                       "a seed count in 1..100000, or an array of seeds");
    for (long s = 1; s <= count; ++s) seeds.push_back(std::uint64_t(s));
    return seeds;
  }
  if (!node.json().is_array()) node.expected("an array of seeds, or a seed count");
  if (node.json().empty()) node.expected("at least one seed");
  for (const Node& e : node.elements()) {
    const std::uint64_t s = e.seed();
    if (std::find(seeds.begin(), seeds.end(), s) != seeds.end())
      e.fail(fmt::format("found seed {} twice; expected distinct seeds", s));
    seeds.push_back(s);
  }
  return seeds;
}

// `o` holds the defaults the problem's kind starts from; the levels override them key by key.
OutcomeSettings read_outcome(const Layers& outcome, OutcomeSettings o) {
  check_levels(outcome, outcome_keys());
  const auto criterion = outcome.find("criterion");
  if (criterion)
    o.criterion = *criterion_from_string(criterion->choice(criterion_names(), "criterion"));
  if (const auto noise = outcome.find("noise"))
    o.noise = *noise_mode_from_string(noise->choice(noise_mode_names(), "noise mode"));
  read_fields(outcome, outcome_fields(), o);
  if (o.criterion == Criterion::cost && !outcome.find("target"))
    criterion->fail(
        "found criterion 'cost' without a target; expected \"target\": the cost to reach");
  return o;
}

void read_pinned(const Node& node, ProblemSpec& p) {
  if (node.json().is_number()) {
    const double rate = node.number_if(positive, "a rate > 0");
    for (const std::string& label : p.optimizers) p.pinned[label] = rate;
    return;
  }
  if (!node.json().is_object()) node.expected("a rate > 0, or an object (optimizer -> rate)");
  for (const auto& item : node.json().items()) {
    const Node e = node.member(item.key());
    if (std::find(p.optimizers.begin(), p.optimizers.end(), item.key()) == p.optimizers.end())
      e.fail(fmt::format(
          "found a pinned rate for optimizer '{}', which problem '{}' does not use{}; "
          "its optimizers: {}",
          item.key(), p.name, did_you_mean(item.key(), p.optimizers), join(p.optimizers)));
    p.pinned[item.key()] = e.number_if(positive, "a rate > 0");
  }
}

Severity severity(const Node& node) {
  const std::string& s = node.choice({"pass", "warn", "fail"}, "severity");
  return s == "pass" ? Severity::pass : s == "warn" ? Severity::warn : Severity::fail;
}

}  // namespace

GateTolerances read_gate(const Layers& gate) {
  // Keys of earlier versions, now named as their rules are: a clear word rather than "unknown".
  for (const Node& level : gate.levels)
    for (const auto& [old_key, key] : renamed_gate_keys())
      if (auto n = Layers{{level}}.find(old_key))
        n->fail(fmt::format("'{}' is now called '{}', as its rule is; expected '{}'", old_key, key, key));
  check_levels(gate, gate_keys());
  GateTolerances g;
  for (const ToleranceField& t : tolerance_fields())
    if (auto n = gate.find(t.key)) g.*t.member = n->number_if([&](double v) { return t.range.admits(v); }, t.range.expected());
  for (const SeverityField& s : severity_fields())
    if (auto n = gate.find(s.key)) g.*s.member = severity(*n);
  return g;
}

const std::vector<std::string>& settings_keys() {
  static const std::vector<std::string> keys = [] {
    std::vector<std::string> k = keys_with({"scalings", "optimizers", "rates", "seeds"}, run_fields());
    k.insert(k.end(), {"outcome", "pinned", "gate"});
    return k;
  }();
  return keys;
}

void read_settings(const Layers& settings, const Layers& gate, Suite& suite, ProblemSpec& p) {
  if (auto n = settings.find("scalings"))
    p.scalings = names_in(*n, "scaling", keys_of(suite.scalings));
  else
    p.scalings = {"none"};
  read_optimizer_names(settings, suite, p);
  p.rates = read_rates(settings.sub("rates"));
  if (auto n = settings.find("seeds"))
    p.seeds = read_seeds(*n);
  else
    p.seeds = {1, 2, 3};
  read_fields(settings, run_fields(), p.run);
  if (auto n = settings.find("eval_every"); n && p.run.eval_every > p.run.budget)
    n->fail(fmt::format("found eval_every {} above the budget {}; expected at most the budget (no run would be "
                        "evaluated before its end)", p.run.eval_every, p.run.budget));
  // No probe can run beside a command (its state is the program's), so by default its stretch
  // does the probe's work: measured on examples/numpy, gd's edge lies above the stability limit
  // 2/λ_max by 3.9% at confirm_factor 0.5, 2.4% at 1, 1.4% at 2, 0.8% at 4.
  OutcomeSettings defaults;
  if (p.kind == ProblemKind::command) defaults.confirm_factor = kCommandConfirmFactor;
  p.run.outcome = read_outcome(settings.sub("outcome"), defaults);
  // Convergence is confirmed only after a stretch of at least confirm_min iterations that ends
  // within the budget (docs/design.md, "Confirmed convergence"): below it no run can converge.
  if (p.run.budget < p.run.outcome.confirm_min) {
    // Where the budget is written, or else confirm_min (the default budget is far above its default).
    auto at = settings.find("budget");
    if (!at) at = settings.sub("outcome").find("confirm_min");
    if (at)
      at->fail(fmt::format("found budget {} below outcome.confirm_min {}, so no run could confirm its convergence "
                          "(the confirmation stretch alone takes confirm_min iterations); expected a budget of at "
                          "least {}, or a smaller confirm_min",
                          p.run.budget, p.run.outcome.confirm_min, p.run.outcome.confirm_min));
  }
  if (auto n = settings.find("pinned")) read_pinned(*n, p);
  Layers all_gate = gate;
  for (const Node& level : settings.sub("gate").levels) all_gate.levels.push_back(level);
  p.gate = read_gate(all_gate);
}

}  // namespace stepgate::suite_detail
