#include "stepgate/sweep/plan.hpp"

#include <sys/resource.h>
#include <unistd.h>

#include <algorithm>
#include <charconv>
#include <cmath>
#include <numeric>
#include <stdexcept>
#include <thread>

#include <fmt/format.h>

#include "stepgate/core/error.hpp"
#include "stepgate/core/run_record.hpp"

namespace stepgate {

namespace {

// Rounds of k-ary section that bring a bracket of ratio `ratio` to 1 + precision.
long long section_rounds(double log_ratio, double precision, int lanes) {
  if (log_ratio <= std::log1p(precision)) return 0;
  return static_cast<long long>(std::ceil(std::log(log_ratio / std::log1p(precision)) / std::log(lanes + 1.0)));
}

// Counted in 64 bits and from logarithms, so that no ratio of rates can overflow.
long long runs_per_seed(const ProblemSpec& p, bool pinned) {
  const RatePolicy& r = p.rates;
  long long n = static_cast<long long>(r.fixed.size()) + (pinned ? 1 : 0);
  if (r.grid) {
    const double decades = std::log10(r.grid->to) - std::log10(r.grid->from);
    n += static_cast<long long>(std::floor(decades * r.grid->per_decade + 1e-9)) + 1;
    const double step = std::log(10.0) / r.grid->per_decade;
    const long long per_boundary = section_rounds(step, r.precision, r.lanes) * r.lanes;
    // The blow-up bracket can be wider than one grid step when non-diverged rates lie above
    // the edge; count two steps for it.
    const long long blowup = section_rounds(2 * step, r.precision, r.lanes) * r.lanes;
    n += (r.locate_edge ? per_boundary : 0) + (r.locate_floor ? per_boundary : 0) + (r.locate_blowup ? blowup : 0) +
         r.refine_points;
  }
  return n;
}

// Work of one iteration where the suite tells it (a quadratic's dim², a generated data set's
// rows × features, a data file's max_rows × features); 0 where it is known only once the data
// are read.
double step_cost(const Suite& suite, const ProblemSpec& p) {
  if (p.kind == ProblemKind::quadratic) return static_cast<double>(p.quadratic.dim) * static_cast<double>(p.quadratic.dim);
  if (p.kind == ProblemKind::test_function) return 1;
  if (!uses_dataset(p)) return 0;
  const auto it = suite.datasets.find(p.dataset);
  if (it == suite.datasets.end()) return 0;
  const DatasetSpec& d = it->second;
  if (d.source == DatasetSpec::Source::generated)
    return static_cast<double>(d.generated.rows) * static_cast<double>(d.generated.features + 1);
  if (d.max_rows > 0 && !d.features.empty()) return static_cast<double>(d.max_rows) * static_cast<double>(d.features.size() + 1);
  return 0;
}

}  // namespace

long long Plan::max_runs() const {
  long long n = 0;
  for (const PlannedCase& c : cases) n += c.max_runs;
  return n;
}

double Plan::max_iterations() const {
  double n = 0;
  for (const PlannedCase& c : cases) n += c.max_iterations;
  return n;
}

Plan make_plan(const Suite& suite) {
  Plan plan;
  for (std::size_t i = 0; i < suite.problems.size(); ++i) {
    const ProblemSpec& p = suite.problems[i];
    for (const std::string& scaling : p.scalings)
      for (const std::string& optimizer : p.optimizers) {
        PlannedCase c;
        c.id = p.name + "/" + scaling + "/" + optimizer;
        c.problem = i;
        c.scaling = scaling;
        c.optimizer = optimizer;
        if (auto it = p.pinned.find(optimizer); it != p.pinned.end()) c.pinned = it->second;
        c.max_runs = runs_per_seed(p, !std::isnan(c.pinned)) * static_cast<long long>(p.seeds.size());
        c.max_iterations = static_cast<double>(c.max_runs) * static_cast<double>(p.run.budget);
        c.step_cost = step_cost(suite, p);
        plan.cases.push_back(std::move(c));
      }
  }
  // Where the suite does not tell a case's step cost, count it as the median of the others.
  std::vector<double> known;
  for (const PlannedCase& c : plan.cases)
    if (c.step_cost > 0) known.push_back(c.step_cost);
  double fill = 1;
  if (!known.empty()) {
    std::nth_element(known.begin(), known.begin() + static_cast<long>(known.size() / 2), known.end());
    fill = known[known.size() / 2];
  }
  for (PlannedCase& c : plan.cases)
    if (c.step_cost <= 0) c.step_cost = fill;
  return plan;
}

std::optional<std::pair<int, int>> parse_shard(std::string_view text) {
  const auto slash = text.find('/');
  if (slash == std::string_view::npos) return std::nullopt;
  const auto whole = [](std::string_view s, int& out) {
    if (s.empty() || s.size() > 6 || s.find_first_not_of("0123456789") != std::string_view::npos) return false;
    return std::from_chars(s.data(), s.data() + s.size(), out).ec == std::errc{};
  };
  int k = 0, n = 0;
  if (!whole(text.substr(0, slash), k) || !whole(text.substr(slash + 1), n)) return std::nullopt;
  if (n < 1 || n > kMaxShards || k < 1 || k > n) return std::nullopt;
  return std::pair{k, n};
}

std::vector<int> shard_assignment(const Plan& plan, int n) {
  if (n < 1 || n > kMaxShards) throw std::invalid_argument("a shard count is 1..kMaxShards");
  std::vector<std::size_t> order(plan.cases.size());
  std::iota(order.begin(), order.end(), std::size_t{0});
  const auto cost = [&](std::size_t i) { return plan.cases[i].max_iterations * plan.cases[i].step_cost; };
  std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
    if (cost(a) != cost(b)) return cost(a) > cost(b);
    return plan.cases[a].id < plan.cases[b].id;
  });
  std::vector<double> load(static_cast<std::size_t>(n), 0.0);
  std::vector<int> shard(plan.cases.size(), 1);
  for (std::size_t i : order) {
    const auto least = std::min_element(load.begin(), load.end());  // first of equals: the lowest number
    *least += cost(i);
    shard[i] = static_cast<int>(least - load.begin()) + 1;
  }
  return shard;
}

Plan shard_of(const Plan& plan, int k, int n) {
  if (n < 1 || k < 1 || k > n) throw std::invalid_argument("a shard is K/N with 1 <= K <= N");
  const std::vector<int> shard = shard_assignment(plan, n);
  Plan out;
  for (std::size_t i = 0; i < plan.cases.size(); ++i)
    if (shard[i] == k) out.cases.push_back(plan.cases[i]);
  return out;
}

double max_trace_bytes(const PlannedCase& c) { return c.max_iterations * double(sizeof(TracePoint)); }

void check_plan_memory(const Suite& suite, const Plan& plan, int jobs) {
  if (plan.cases.empty()) return;
  double available = double(::sysconf(_SC_PHYS_PAGES)) * double(::sysconf(_SC_PAGESIZE));
  if (struct rlimit r {}; ::getrlimit(RLIMIT_AS, &r) == 0 && r.rlim_cur != RLIM_INFINITY)
    available = std::min(available, double(r.rlim_cur));
  std::vector<std::size_t> order(plan.cases.size());
  std::iota(order.begin(), order.end(), std::size_t{0});
  std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
    return max_trace_bytes(plan.cases[a]) > max_trace_bytes(plan.cases[b]);
  });
  const std::size_t at_once = std::min<std::size_t>(order.size(), jobs > 0 ? std::size_t(jobs) : std::max(1u, std::thread::hardware_concurrency()));
  double total = 0;
  for (std::size_t i = 0; i < at_once; ++i) total += max_trace_bytes(plan.cases[order[i]]);
  if (total <= 0.8 * available) return;
  const PlannedCase& worst = plan.cases[order.front()];
  const ProblemSpec& p = suite.problems[worst.problem];
  const auto gib = [](double b) { return fmt::format("{:.1f} GiB", b / double(1 << 30)); };
  throw InputError(suite.path + "#" + p.pointer,
                   fmt::format("its runs could need {} of memory ({} for case {} alone: {} runs of up to {} iterations, "
                               "each kept as a trace until the case ends; {} case(s) at once), more than the {} this "
                               "machine or the process's limits allow; expected fewer rates or seeds, a smaller budget, or "
                               "fewer --jobs", gib(total), gib(max_trace_bytes(worst)), worst.id, worst.max_runs,
                               p.run.budget, at_once, gib(0.8 * available)));
}

}  // namespace stepgate
