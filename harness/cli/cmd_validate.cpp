// stepgate validate SUITE  and  stepgate plan SUITE
#include <iostream>

#include <fmt/format.h>

#include "stepgate/cli/commands.hpp"
#include "stepgate/cli/options.hpp"
#include "stepgate/core/error.hpp"
#include "stepgate/suite/suite.hpp"
#include "stepgate/sweep/plan.hpp"

namespace stepgate::cli {

namespace {

std::string suite_argument(const Args& args, const char* usage, bool& help) {
  po::options_description opt("options");
  opt.add_options()("suite", po::value<std::string>()->required(), "suite file");
  po::positional_options_description pos;
  pos.add("suite", 1);
  const Parsed p = parse_options(args, opt, pos, usage);
  help = p.help;
  return help ? "" : p.vm["suite"].as<std::string>();
}

}  // namespace

int validate_command(const Args& args) {
  bool help = false;
  const std::string path = suite_argument(args, "stepgate validate SUITE", help);
  if (help) return kExitPass;
  const Suite suite = load_suite(path);
  const Plan plan = make_plan(suite);
  check_plan_memory(suite, plan, 0);
  std::cout << fmt::format("{}: valid suite '{}': {} problems, {} cases (sha256 {})\n", path, suite.name,
                           suite.problems.size(), plan.cases.size(), suite.sha256);
  return kExitPass;
}

int plan_command(const Args& args) {
  bool help = false;
  const std::string path = suite_argument(args, "stepgate plan SUITE", help);
  if (help) return kExitPass;
  const Suite suite = load_suite(path);
  const Plan plan = make_plan(suite);
  std::size_t width = 4;
  for (const PlannedCase& c : plan.cases) width = std::max(width, c.id.size());
  std::cout << fmt::format("{:<{}}  {:>6}  {:>8}  {:>10}  {:>14}\n", "case", width, "seeds", "pinned", "runs <=", "iterations <=");
  for (const PlannedCase& c : plan.cases) {
    const ProblemSpec& p = suite.problems[c.problem];
    std::cout << fmt::format("{:<{}}  {:>6}  {:>8}  {:>10}  {:>14.4g}\n", c.id, width, p.seeds.size(),
                             std::isnan(c.pinned) ? "-" : fmt::format("{:.4g}", c.pinned), c.max_runs, c.max_iterations);
  }
  std::cout << fmt::format("{} cases; at most {} runs and {:.4g} iterations (searches usually stop well short)\n",
                           plan.cases.size(), plan.max_runs(), plan.max_iterations());
  return kExitPass;
}

}  // namespace stepgate::cli
