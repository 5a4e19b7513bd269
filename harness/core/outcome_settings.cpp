#include "stepgate/core/outcome_settings.hpp"

#include <cmath>

#include "stepgate/core/names.hpp"

namespace stepgate {

std::string_view to_string(Criterion c) {
  switch (c) {
    case Criterion::automatic: return "auto";
    case Criterion::gap: return "gap";
    case Criterion::grad: return "grad";
    case Criterion::cost: return "cost";
    case Criterion::plateau: return "plateau";
    case Criterion::settled: return "settled";
  }
  return "auto";
}

const std::vector<Criterion>& criteria() {
  using C = Criterion;
  static const std::vector<C> all = {C::automatic, C::gap, C::grad, C::cost, C::plateau, C::settled};
  return all;
}

const std::vector<std::string>& criterion_names() {
  static const std::vector<std::string> names = names_of(criteria());
  return names;
}

std::optional<Criterion> criterion_from_string(std::string_view s) { return value_named(criteria(), s); }

std::string_view to_string(NoiseMode m) {
  switch (m) {
    case NoiseMode::automatic: return "auto";
    case NoiseMode::on: return "on";
    case NoiseMode::off: return "off";
  }
  return "auto";
}

const std::vector<NoiseMode>& noise_modes() {
  static const std::vector<NoiseMode> all = {NoiseMode::automatic, NoiseMode::on, NoiseMode::off};
  return all;
}

const std::vector<std::string>& noise_mode_names() {
  static const std::vector<std::string> names = names_of(noise_modes());
  return names;
}

std::optional<NoiseMode> noise_mode_from_string(std::string_view s) { return value_named(noise_modes(), s); }

const std::vector<SettingField<OutcomeSettings>>& outcome_fields() {
  using O = OutcomeSettings;
  static const std::vector<SettingField<O>> fields = {
      {"tol", &O::tol, Range::above(0), {}, true},
      {"target", &O::target, Range::any(), {}, true},
      {"plateau_window", &O::plateau_window, Range::count_at_least(1)},
      {"blowup_factor", &O::blowup_factor, Range::above(1)},
      {"overshoot_limit", &O::overshoot_limit, Range::at_least(0)},
      {"hold", &O::hold, Range::count_at_least(0)},
      {"confirm_factor", &O::confirm_factor, Range::closed(0, 100)},
      {"confirm_min", &O::confirm_min, Range::count_at_least(0)},
      {"probe", &O::probe},
      {"rise_factor", &O::rise_factor, Range::above(1)},
      {"level_ratio", &O::level_ratio, Range::above(1)},
  };
  return fields;
}

std::string validate(const OutcomeSettings& o) {
  std::vector<std::string> errors;
  check_fields(o, outcome_fields(), errors);
  if (o.criterion == Criterion::cost && std::isnan(o.target))
    errors.push_back("criterion 'cost' without a target, expected \"target\": the cost to reach");
  return fmt::format("{}", fmt::join(errors, "; "));
}

double OutcomeSettings::tolerance(Criterion resolved) const {
  if (!std::isnan(tol)) return tol;
  switch (resolved) {
    case Criterion::grad: return 1e-3;
    case Criterion::plateau: return 1e-8;
    case Criterion::settled: return 0.1;
    default: return 1e-6;
  }
}

}  // namespace stepgate
