#include "stepgate/core/optimizer_spec_json.hpp"

#include "stepgate/core/json_fields.hpp"

namespace stepgate {

using nlohmann::json;

json to_json(const OptimizerSpec& spec) {
  const Schedule& s = spec.schedule;
  return {{"label", spec.label},
          {"kind", to_string(spec.kind)},
          {"beta", finite_or_null(spec.beta)},
          {"beta1", finite_or_null(spec.beta1)},
          {"beta2", finite_or_null(spec.beta2)},
          {"rho", finite_or_null(spec.rho)},
          {"eps", finite_or_null(spec.eps)},
          {"batch_size", spec.batch_size},
          {"schedule",
           {{"kind", to_string(s.kind)},
            {"factor", finite_or_null(s.factor)},
            {"every", s.every},
            {"decay", finite_or_null(s.decay)},
            {"floor", finite_or_null(s.floor)},
            {"warmup", s.warmup}}}};
}

OptimizerSpec optimizer_spec_from_json(const json& j, const std::string& path,
                                       const json::json_pointer& at) {
  const JsonField f(j, path, at);
  OptimizerSpec spec;
  spec.label = f["label"].string();
  const JsonField kind = f["kind"];
  const auto k = optimizer_kind_from_string(kind.string());
  if (!k) kind.fail("an optimizer kind (gd, sgd, momentum, nesterov, adagrad, rmsprop, adam)");
  spec.kind = *k;
  spec.beta = f["beta"].number_or_missing();
  spec.beta1 = f["beta1"].number_or_missing();
  spec.beta2 = f["beta2"].number_or_missing();
  spec.rho = f["rho"].number_or_missing();
  spec.eps = f["eps"].number_or_missing();
  spec.batch_size = f["batch_size"].integer<long>();

  const JsonField s = f["schedule"];
  const JsonField skind = s["kind"];
  const auto sk = schedule_kind_from_string(skind.string());
  if (!sk) skind.fail("a schedule kind (constant, step, exponential, inverse_time, cosine)");
  spec.schedule.kind = *sk;
  spec.schedule.factor = s["factor"].number_or_missing();
  spec.schedule.every = s["every"].integer<long>();
  spec.schedule.decay = s["decay"].number_or_missing();
  spec.schedule.floor = s["floor"].number_or_missing();
  spec.schedule.warmup = s["warmup"].integer<long>();
  return spec;
}

}  // namespace stepgate
