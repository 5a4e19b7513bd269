#include "stepgate/core/run_settings.hpp"

namespace stepgate {

const std::vector<SettingField<RunSettings>>& run_fields() {
  using S = RunSettings;
  static const std::vector<SettingField<S>> fields = {
      {"budget", &S::budget, Range::count_in(1, kMaxBudget), "(a larger budget is too large to run)"},
      {"eval_every", &S::eval_every, Range::count_at_least(0), "(0 = automatic)"},
  };
  return fields;
}

std::string validate(const RunSettings& s) {
  std::vector<std::string> errors;
  check_fields(s, run_fields(), errors);
  if (s.eval_every > s.budget)
    errors.push_back(fmt::format("eval_every {} above the budget {}, expected at most the budget", s.eval_every, s.budget));
  if (std::string o = validate(s.outcome); !o.empty()) errors.push_back("outcome: " + o);
  return fmt::format("{}", fmt::join(errors, "; "));
}

}  // namespace stepgate
