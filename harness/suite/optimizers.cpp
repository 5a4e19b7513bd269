// The `optimizers` section: named optimizer specs (core/optimizer_spec.hpp), and the
// predefined ones named like their kind ("gd", "adam", ...) with published defaults.
#include <fmt/format.h>

#include "stepgate/suite/suite_sections.hpp"

namespace stepgate::suite_detail {
namespace {

const std::vector<std::string> kOptimizerKinds = {"gd",      "sgd",     "momentum", "nesterov",
                                                  "adagrad", "rmsprop", "adam"};

Schedule read_schedule(const Node& node) {
  const ObjectNode o(node, {"kind", "factor", "every", "decay", "floor", "warmup"});
  Schedule s;
  if (auto n = o.find("kind"))
    s.kind = *schedule_kind_from_string(
        n->choice({"constant", "step", "exponential", "inverse_time", "cosine"}, "schedule kind"));
  if (auto n = o.find("factor")) s.factor = n->number();
  if (auto n = o.find("every")) s.every = n->integer();
  if (auto n = o.find("decay")) s.decay = n->number();
  if (auto n = o.find("floor")) s.floor = n->number();
  if (auto n = o.find("warmup")) s.warmup = n->integer();
  return s;
}

OptimizerSpec read_optimizer(const Node& node, const std::string& name) {
  check_name(node, name, "optimizer name");
  const ObjectNode o(node,
                     {"kind", "beta", "beta1", "beta2", "rho", "eps", "batch_size", "schedule"});
  OptimizerSpec s;
  s.label = name;
  // An optimizer named like a kind may leave the kind out: {"adam": {"beta2": 0.99}}.
  const bool named_like_kind = optimizer_kind_from_string(name).has_value();
  if (auto n = named_like_kind ? o.find("kind") : std::optional<Node>(o.require("kind")))
    s.kind = *optimizer_kind_from_string(n->choice(kOptimizerKinds, "optimizer kind"));
  else
    s.kind = *optimizer_kind_from_string(name);
  if (auto n = o.find("beta")) s.beta = n->number();
  if (auto n = o.find("beta1")) s.beta1 = n->number();
  if (auto n = o.find("beta2")) s.beta2 = n->number();
  if (auto n = o.find("rho")) s.rho = n->number();
  if (auto n = o.find("eps")) s.eps = n->number();
  if (auto n = o.find("batch_size")) s.batch_size = n->integer();
  if (auto n = o.find("schedule")) s.schedule = read_schedule(*n);
  if (const std::string problems = validate(s); !problems.empty())
    node.fail(fmt::format("optimizer '{}' is out of range: {}", name, problems));
  return s;
}

}  // namespace

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
