// The `scalings` section: named feature scalings (data/scaling.hpp). "none" is always defined.
#include <cmath>

#include <fmt/format.h>

#include "stepgate/suite/suite_sections.hpp"

namespace stepgate::suite_detail {
namespace {

ScalingSpec read_scaling(const Node& node, const std::string& name) {
  check_name(node, name, "scaling name");
  const ObjectNode o(node, {"kind", "factor", "columns", "span", "seed", "drop_constant"});
  ScalingSpec s;
  s.name = name;
  const std::vector<std::string> kinds = {"none",   "standardize", "minmax",
                                          "maxabs", "units",       "jitter"};
  s.kind = *scaling_kind_from_string(o.require("kind").choice(kinds, "scaling kind"));
  // Keys that only one kind uses are errors elsewhere: a value that would be ignored is a mistake.
  const auto only_for = [&](const char* key, ScalingSpec::Kind kind) -> std::optional<Node> {
    auto n = o.find(key);
    if (n && s.kind != kind)
      n->fail(fmt::format("found '{}' on a scaling of kind {}; it applies to kind {} only", key,
                          to_string(s.kind), to_string(kind)));
    return n;
  };
  if (auto n = only_for("factor", ScalingSpec::units))
    s.factor = n->number_if([](double v) { return v != 0.0; }, "a finite number other than 0");
  if (auto n = only_for("columns", ScalingSpec::units)) s.columns = n->strings();
  if (auto n = only_for("span", ScalingSpec::jitter))
    s.span = n->number_if([](double v) { return v >= 1.0; }, "a number >= 1");
  if (auto n = only_for("seed", ScalingSpec::jitter)) s.seed = n->seed();
  if (auto n = o.find("drop_constant")) s.drop_constant = n->boolean();
  if (name == "none" && (s.kind != ScalingSpec::none || s.drop_constant))
    node.fail(
        "found a scaling named 'none' that changes the data; expected 'none' to be the "
        "identity (it is predefined), so give this scaling another name");
  return s;
}

}  // namespace

std::map<std::string, ScalingSpec> read_scalings(const std::optional<Node>& node) {
  std::map<std::string, ScalingSpec> out;
  ScalingSpec identity;
  identity.name = "none";
  out.emplace("none", identity);
  if (!node) return out;
  if (!node->json().is_object()) node->expected("an object (scaling name -> scaling)");
  for (const auto& item : node->json().items())
    out[item.key()] = read_scaling(node->member(item.key()), item.key());
  return out;
}

}  // namespace stepgate::suite_detail
