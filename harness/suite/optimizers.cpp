// The `optimizers` section: named optimizer specs (core/optimizer_spec.hpp), and the
// predefined ones named like their kind ("gd", "adam", ...) with published defaults.
#include <fmt/format.h>

#include "stepgate/suite/suite_sections.hpp"

namespace stepgate::suite_detail {
namespace {

Schedule read_schedule(const Node& node) {
  const ObjectNode o(node, schedule_keys());
  Schedule s;
  if (auto n = o.find("kind")) s.kind = *schedule_kind_from_string(n->choice(schedule_kind_names(), "schedule kind"));
  for (const ScheduleParam& p : schedule_params())
    if (auto n = o.find(p.key)) {
      const auto admits = [&](auto v) { return p.range.admits(double(v)); };
      if (p.number) s.*p.number = n->number_if(admits, p.range.expected());
      else s.*p.count = n->integer_if(admits, p.range.expected());
    }
  return s;
}

OptimizerSpec read_optimizer(const Node& node, const std::string& name) {
  check_name(node, name, "optimizer name");
  const ObjectNode o(node, optimizer_keys());
  OptimizerSpec s;
  s.label = name;
  // An optimizer named like a kind may leave the kind out: {"adam": {"beta2": 0.99}}.
  const bool named_like_kind = optimizer_kind_from_string(name).has_value();
  if (auto n = named_like_kind ? o.find("kind") : std::optional<Node>(o.require("kind")))
    s.kind = *optimizer_kind_from_string(n->choice(optimizer_kind_names(), "optimizer kind"));
  else
    s.kind = *optimizer_kind_from_string(name);
  for (const OptimizerParam& p : optimizer_params())
    if (auto n = o.find(p.key)) s.*p.member = n->number_if([&](double v) { return p.range.admits(v); }, p.range.expected());
  if (auto n = o.find("batch_size"))
    s.batch_size = n->integer_if([](long v) { return v >= 0; }, "a whole number >= 0 (0 = full batch)");
  if (auto n = o.find("sampling")) {
    s.sampling = *batch_sampling_from_string(n->choice(batch_sampling_names(), "batch sampling"));
    if (s.batch_size == 0)
      n->fail(fmt::format("found sampling '{}' on a full-batch optimizer; expected batch_size > 0 beside it",
                          to_string(s.sampling)));
  }
  if (auto n = o.find("schedule")) s.schedule = read_schedule(*n);
  if (const std::string problems = validate(s); !problems.empty())
    node.fail(fmt::format("optimizer '{}' is out of range: {}", name, problems));
  return s;
}

}  // namespace

const std::vector<std::string>& optimizer_keys() {
  static const std::vector<std::string> keys = [] {
    std::vector<std::string> out = {"kind"};
    for (const OptimizerParam& p : optimizer_params()) out.emplace_back(p.key);
    out.insert(out.end(), {"batch_size", "sampling", "schedule"});
    return out;
  }();
  return keys;
}

const std::vector<std::string>& schedule_keys() {
  static const std::vector<std::string> keys = [] {
    std::vector<std::string> out = {"kind"};
    for (const ScheduleParam& p : schedule_params()) out.emplace_back(p.key);
    return out;
  }();
  return keys;
}

std::map<std::string, OptimizerSpec> read_optimizers(const std::optional<Node>& node) {
  std::map<std::string, OptimizerSpec> out;
  if (!node) return out;
  if (!node->json().is_object()) node->expected("an object (optimizer name -> optimizer)");
  for (const auto& item : node->json().items())
    out.emplace(item.key(), read_optimizer(node->member(item.key()), item.key()));
  return out;
}

std::optional<OptimizerSpec> predefined_optimizer(const std::string& name) {
  const auto kind = optimizer_kind_from_string(name);
  if (!kind) return std::nullopt;
  OptimizerSpec s;
  s.kind = *kind;
  s.label = name;
  return s;
}

}  // namespace stepgate::suite_detail
