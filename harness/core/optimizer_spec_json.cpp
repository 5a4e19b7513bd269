#include "stepgate/core/optimizer_spec_json.hpp"

#include <vector>

#include "stepgate/core/json_node.hpp"

namespace stepgate {

using nlohmann::json;

namespace {

// The parameters each kind uses, by key: results list only these (batch_size and warmup
// apply to every kind). Reading requires the same keys, so a results file names each value
// that mattered and nothing that did not.
struct Param {
  const char* key;
  double OptimizerSpec::*member;
};

std::vector<Param> params_of(OptimizerKind k) {
  using S = OptimizerSpec;
  switch (k) {
    case OptimizerKind::gd:
    case OptimizerKind::sgd: return {};
    case OptimizerKind::momentum:
    case OptimizerKind::nesterov: return {{"beta", &S::beta}};
    case OptimizerKind::adagrad: return {{"eps", &S::eps}};
    case OptimizerKind::rmsprop: return {{"rho", &S::rho}, {"eps", &S::eps}};
    case OptimizerKind::adam: return {{"beta1", &S::beta1}, {"beta2", &S::beta2}, {"eps", &S::eps}};
  }
  return {};
}

struct ScheduleParam {
  const char* key;
  double Schedule::*number = nullptr;
  long Schedule::*count = nullptr;
};

std::vector<ScheduleParam> params_of(ScheduleKind k) {
  using S = Schedule;
  switch (k) {
    case ScheduleKind::constant: return {};
    case ScheduleKind::step: return {{"factor", &S::factor, nullptr}, {"every", nullptr, &S::every}};
    case ScheduleKind::exponential:
    case ScheduleKind::inverse_time: return {{"decay", &S::decay, nullptr}};
    case ScheduleKind::cosine: return {{"floor", &S::floor, nullptr}};
  }
  return {};
}

}  // namespace

json to_json(const OptimizerSpec& spec) {
  json out = {{"label", spec.label}, {"kind", to_string(spec.kind)}};
  for (const Param& p : params_of(spec.kind)) out[p.key] = finite_or_null(spec.*p.member);
  out["batch_size"] = spec.batch_size;
  const Schedule& s = spec.schedule;
  json schedule = {{"kind", to_string(s.kind)}};
  for (const ScheduleParam& p : params_of(s.kind))
    schedule[p.key] = p.number ? finite_or_null(s.*p.number) : json(s.*p.count);
  schedule["warmup"] = s.warmup;
  out["schedule"] = std::move(schedule);
  return out;
}

OptimizerSpec optimizer_spec_from_json(const json& j, const std::string& path, const std::string& pointer) {
  const JsonField f(j, path, pointer);
  OptimizerSpec spec;
  spec.label = f["label"].string();
  const JsonField kind = f["kind"];
  const auto k = optimizer_kind_from_string(kind.string());
  if (!k) kind.expected("an optimizer kind (gd, sgd, momentum, nesterov, adagrad, rmsprop, adam)");
  spec.kind = *k;
  for (const Param& p : params_of(spec.kind)) spec.*p.member = f[p.key].number_or_missing();
  spec.batch_size = f["batch_size"].integer_as<long>();

  const JsonField s = f["schedule"];
  const JsonField skind = s["kind"];
  const auto sk = schedule_kind_from_string(skind.string());
  if (!sk) skind.expected("a schedule kind (constant, step, exponential, inverse_time, cosine)");
  spec.schedule.kind = *sk;
  for (const ScheduleParam& p : params_of(spec.schedule.kind)) {
    if (p.number) spec.schedule.*p.number = s[p.key].number_or_missing();
    else spec.schedule.*p.count = s[p.key].integer_as<long>();
  }
  spec.schedule.warmup = s["warmup"].integer_as<long>();
  return spec;
}

}  // namespace stepgate
