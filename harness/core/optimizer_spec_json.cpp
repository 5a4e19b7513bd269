#include "stepgate/core/optimizer_spec_json.hpp"

#include <vector>

#include "stepgate/core/json_node.hpp"

namespace stepgate {

using nlohmann::json;

json to_json(const OptimizerSpec& spec) {
  // Only the parameters the kinds use (core/optimizer_spec.hpp, core/schedule.hpp tables).
  json out = {{"label", spec.label}, {"kind", to_string(spec.kind)}};
  for (const OptimizerParam& p : optimizer_params())
    if (p.used_by(spec.kind)) out[std::string(p.key)] = finite_or_null(spec.*p.member);
  out["batch_size"] = spec.batch_size;
  if (spec.batch_size > 0) out["sampling"] = to_string(spec.sampling);
  const Schedule& s = spec.schedule;
  json schedule = {{"kind", to_string(s.kind)}};
  for (const ScheduleParam& p : schedule_params())
    if (p.used_by(s.kind)) schedule[std::string(p.key)] = p.number ? finite_or_null(s.*p.number) : json(s.*p.count);
  out["schedule"] = std::move(schedule);
  return out;
}

OptimizerSpec optimizer_spec_from_json(const json& j, const std::string& path, const std::string& pointer) {
  const JsonField f(j, path, pointer);
  OptimizerSpec spec;
  spec.label = f["label"].string();
  const JsonField kind = f["kind"];
  const auto k = optimizer_kind_from_string(kind.string());
  if (!k) kind.expected("an optimizer kind (" + join(optimizer_kind_names()) + ")");
  spec.kind = *k;
  for (const OptimizerParam& p : optimizer_params())
    if (p.used_by(spec.kind)) spec.*p.member = f[p.key].number_or_missing();
  spec.batch_size = f["batch_size"].integer_as<long>();
  // Written for mini-batches only; results of versions before it drew epochs.
  if (spec.batch_size > 0 && j.contains("sampling")) {
    const JsonField sampling = f["sampling"];
    const auto bs = batch_sampling_from_string(sampling.string());
    if (!bs) sampling.expected("a batch sampling (" + join(batch_sampling_names()) + ")");
    spec.sampling = *bs;
  }

  const JsonField s = f["schedule"];
  const JsonField skind = s["kind"];
  const auto sk = schedule_kind_from_string(skind.string());
  if (!sk) skind.expected("a schedule kind (" + join(schedule_kind_names()) + ")");
  spec.schedule.kind = *sk;
  for (const ScheduleParam& p : schedule_params()) {
    if (!p.used_by(spec.schedule.kind)) continue;
    if (p.number) spec.schedule.*p.number = s[p.key].number_or_missing();
    else spec.schedule.*p.count = s[p.key].integer_as<long>();
  }
  return spec;
}

}  // namespace stepgate
