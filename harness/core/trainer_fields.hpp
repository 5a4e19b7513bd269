// What a command's trainer is told about its optimizer (docs/design.md, "External commands";
// README, "Gating your own training code"): exactly the fields of the run's optimizer kind and
// schedule kind, with their values. One list for the serving requests and for the
// {optimizer.FIELD} and {schedule.FIELD} placeholders, read from the field tables
// (OptimizerParam::used_by, ScheduleParam::used_by), so a new parameter reaches trainers too.
#pragma once
#include <cstdint>
#include <map>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "stepgate/core/optimizer_spec.hpp"

namespace stepgate {

/// One field a trainer is told: its key within its group ("beta", "warmup") and its value (a
/// number, a whole number, or for "kind" the kind's name).
struct TrainerField {
  std::string key;
  nlohmann::json value;
};

/// "kind", then the kind's own parameters in table order (momentum, nesterov: beta; adam:
/// beta1, beta2, eps; rmsprop: rho, eps; adagrad: eps; gd and sgd: none), then "batch_size"
/// and "sampling" ("epochs", "independent" or "replacement": how batches are drawn) when the
/// optimizer sets a batch size (> 0, for any kind; 0, full batch, has neither field).
std::vector<TrainerField> optimizer_trainer_fields(const OptimizerSpec& spec);
/// "kind", then the schedule kind's own parameters (step: factor, every; exponential and
/// inverse_time: decay; cosine: floor), then "warmup" (every kind).
std::vector<TrainerField> schedule_trainer_fields(const Schedule& s);

/// The placeholders these give, name -> argv text: "optimizer.KEY" for each optimizer field
/// and "schedule.KEY" for each schedule field. Numbers as the shortest text that reads back as
/// the same double (exact_number), whole numbers as integers, kinds as their names.
std::map<std::string, std::string> trainer_placeholders(const OptimizerSpec& spec);

/// The per-run fields of a serving request.
struct RequestRun {
  long id = 0;              ///< "run": the request's id, echoed on every answer line
  double rate = 0.0;        ///< "rate": the searched (base) rate
  std::uint64_t seed = 0;   ///< "seed": the suite's seed number
  long budget = 0;          ///< "budget": iterations (the trainer's "iter" count)
};

/// The request line of a serving run, keys in this order: run, rate, seed, budget, optimizer
/// (the suite's label), the optimizer fields flat (kind, its parameters, batch_size when set),
/// schedule (an object of its fields), scaling.
nlohmann::ordered_json serving_request(const RequestRun& run, const OptimizerSpec& spec, const std::string& scaling);

}  // namespace stepgate
