#include "stepgate/core/trainer_fields.hpp"

#include "stepgate/core/placeholders.hpp"

namespace stepgate {

using nlohmann::json;

std::vector<TrainerField> optimizer_trainer_fields(const OptimizerSpec& spec) {
  std::vector<TrainerField> out = {{"kind", std::string(to_string(spec.kind))}};
  for (const OptimizerParam& p : optimizer_params())
    if (p.used_by(spec.kind)) out.push_back({std::string(p.key), spec.*p.member});
  if (spec.batch_size > 0) {
    out.push_back({"batch_size", spec.batch_size});
    out.push_back({"sampling", std::string(to_string(spec.sampling))});  // how the suite's batches are drawn
  }
  return out;
}

std::vector<TrainerField> schedule_trainer_fields(const Schedule& s) {
  std::vector<TrainerField> out = {{"kind", std::string(to_string(s.kind))}};
  for (const ScheduleParam& p : schedule_params())
    if (p.used_by(s.kind)) out.push_back({std::string(p.key), p.number ? json(s.*p.number) : json(s.*p.count)});
  return out;
}

namespace {

std::string argv_text(const json& v) {
  if (v.is_string()) return v.get<std::string>();
  if (v.is_number_integer()) return std::to_string(v.get<long>());
  return exact_number(v.get<double>());
}

}  // namespace

std::map<std::string, std::string> trainer_placeholders(const OptimizerSpec& spec) {
  std::map<std::string, std::string> out;
  for (const TrainerField& f : optimizer_trainer_fields(spec)) out["optimizer." + f.key] = argv_text(f.value);
  for (const TrainerField& f : schedule_trainer_fields(spec.schedule)) out["schedule." + f.key] = argv_text(f.value);
  return out;
}

nlohmann::ordered_json serving_request(const RequestRun& run, const OptimizerSpec& spec, const std::string& scaling) {
  nlohmann::ordered_json q;
  q["run"] = run.id;
  q["rate"] = run.rate;
  q["seed"] = run.seed;
  q["budget"] = run.budget;
  q["optimizer"] = spec.name();
  for (const TrainerField& f : optimizer_trainer_fields(spec)) q[f.key] = f.value;
  nlohmann::ordered_json schedule;
  for (const TrainerField& f : schedule_trainer_fields(spec.schedule)) schedule[f.key] = f.value;
  q["schedule"] = std::move(schedule);
  q["scaling"] = scaling;
  return q;
}

}  // namespace stepgate
