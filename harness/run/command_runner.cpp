#include "run/command_runner.hpp"

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <filesystem>
#include <memory>
#include <optional>
#include <unistd.h>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "analysis/outcome_rules.hpp"
#include "core/placeholders.hpp"
#include "run/child_process.hpp"

namespace stepgate {

namespace {

namespace fs = std::filesystem;
using Clock = std::chrono::steady_clock;

// A fresh folder for {out}: under the system's temporary folder, named by process and counter.
std::string fresh_folder() {
  static std::atomic<long> counter{0};
  const fs::path p = fs::temp_directory_path() /
                     fmt::format("stepgate-run-{}-{}", static_cast<long>(::getpid()), counter.fetch_add(1));
  fs::create_directories(p);
  return p.string();
}

// Python's json module writes NaN, Infinity and -Infinity for non-finite floats; JSON has no
// such tokens, so they are read as null (a non-finite cost).
nlohmann::json parse_line(const std::string& line) {
  nlohmann::json j = nlohmann::json::parse(line, nullptr, false);
  if (!j.is_discarded()) return j;
  std::string fixed;
  bool in_string = false;
  for (std::size_t i = 0; i < line.size(); ++i) {
    const char c = line[i];
    if (c == '"' && (i == 0 || line[i - 1] != '\\')) in_string = !in_string;
    if (!in_string) {
      bool replaced = false;
      for (std::string_view token : {"-Infinity", "Infinity", "NaN"})
        if (line.compare(i, token.size(), token) == 0) {
          fixed += "null";
          i += token.size() - 1;
          replaced = true;
          break;
        }
      if (replaced) continue;
    }
    fixed += c;
  }
  return nlohmann::json::parse(fixed, nullptr, false);
}

struct Active {
  std::size_t index = 0;  // into the records
  std::unique_ptr<ChildProcess> child;
  std::unique_ptr<OutcomeMonitor> monitor;
  Clock::time_point started;
  std::string out_dir;
  long line_number = 0;
  std::optional<long> last_iter;
  std::string fault;  // non-empty: a protocol fault, timeout or size cap
  bool done = false;
};

}  // namespace

std::vector<RunRecord> run_commands(const CommandCase& c, const RunSettings& settings,
                                    std::span<const double> rates, BatchSeed seed, int jobs) {
  std::vector<RunRecord> records(rates.size());
  for (std::size_t j = 0; j < rates.size(); ++j) {
    records[j].rate = rates[j];
    records[j].seed = seed.seed;
    records[j].seed_index = seed.index;
  }
  const bool has_optimum = !std::isnan(c.spec.optimum);
  const int parallel = std::max(1, c.spec.parallel > 0 ? c.spec.parallel : jobs);

  auto start = [&](std::size_t j) {
    Active a;
    a.index = j;
    a.out_dir = fresh_folder();
    auto lookup = [&](std::string_view name) -> std::optional<std::string> {
      if (name == "rate") return exact_number(rates[j]);
      if (name == "seed") return std::to_string(seed.number);
      if (name == "budget") return std::to_string(settings.budget);
      if (name == "optimizer") return c.optimizer;
      if (name == "scaling") return c.scaling;
      if (name == "case") return c.case_id;
      if (name == "out") return a.out_dir;
      if (name.starts_with("optimizer.")) {
        auto it = c.optimizer_fields.find(std::string(name.substr(10)));
        if (it != c.optimizer_fields.end()) return it->second;
      }
      return std::nullopt;
    };
    ChildOptions o;
    for (const std::string& arg : c.spec.argv) o.argv.push_back(expand_placeholders(arg, lookup));
    o.cwd = c.spec.cwd;
    o.env = c.spec.env;
    a.monitor = std::make_unique<OutcomeMonitor>(settings.outcome, has_optimum, settings.budget);
    a.started = Clock::now();
    a.child = std::make_unique<ChildProcess>(o);
    return a;
  };

  auto finish = [&](Active& a, bool stopped_by_us) {
    RunRecord& r = records[a.index];
    const ChildExit ex = stopped_by_us ? a.child->stop(c.spec.grace) : a.child->wait();
    r.wall_seconds = std::chrono::duration<double>(Clock::now() - a.started).count();
    r.steps = a.last_iter.value_or(0);
    const std::string tail = a.child->stderr_tail();
    const std::string with_tail = tail.empty() ? std::string() : "; stderr: " + tail;
    const bool decided = a.monitor->decided();
    std::string fault = a.fault;
    if (fault.empty() && !decided && !stopped_by_us) {
      if (ex.signalled) fault = fmt::format("killed by signal {} ({})", ex.code, strsignal(ex.code));
      else if (ex.code != 0) fault = fmt::format("exited with status {}", ex.code);
      else if (r.trace.empty()) fault = "no output: the program wrote no {\"iter\", \"cost\"} line";
    }
    if (!fault.empty()) {
      r.outcome = Outcome::failed;
      r.reason = fault + with_tail;
    } else {
      const Classification cl = a.monitor->result();
      r.outcome = cl.outcome;
      r.iterations = cl.iterations;
      r.overshoot = cl.overshoot;
      r.reason = cl.reason;
      r.confirmation = cl.confirmation;
    }
    std::error_code ec;
    if (r.outcome != Outcome::failed) fs::remove_all(a.out_dir, ec);
    else r.reason += " (its {out} folder is kept: " + a.out_dir + ")";
    a.done = true;
  };

  auto take_line = [&](Active& a, const std::string& line) {
    RunRecord& r = records[a.index];
    ++a.line_number;
    const auto first = line.find_first_not_of(" \t\r");
    if (first == std::string::npos || line[first] != '{') {
      ++r.log_lines;
      return;
    }
    const nlohmann::json j = parse_line(line);
    if (j.is_discarded() || !j.is_object()) {
      a.fault = fmt::format("protocol error at output line {}: not a JSON object: {:.120}", a.line_number, line);
      return;
    }
    if (j.contains("params")) {
      const auto& p = j["params"];
      if (!p.is_array()) {
        a.fault = fmt::format("protocol error at output line {}: \"params\" must be an array of numbers", a.line_number);
        return;
      }
      r.final_params.resize(static_cast<Index>(p.size()));
      for (std::size_t i = 0; i < p.size(); ++i)
        r.final_params[static_cast<Index>(i)] = p[i].is_number() ? p[i].get<double>() : kMissing;
      return;
    }
    if (!j.contains("iter") || !j["iter"].is_number_integer() || !j.contains("cost") ||
        !(j["cost"].is_number() || j["cost"].is_null())) {
      a.fault = fmt::format("protocol error at output line {}: expected {{\"iter\": integer, \"cost\": number}}, "
                            "found {:.120}", a.line_number, line);
      return;
    }
    const long iter = j["iter"].get<long>();
    if (a.last_iter && iter <= *a.last_iter) {
      a.fault = fmt::format("protocol error at output line {}: iter {} does not increase (previous {})", a.line_number,
                            iter, *a.last_iter);
      return;
    }
    a.last_iter = iter;
    const double cost = j["cost"].is_null() ? kMissing : j["cost"].get<double>();
    double grad = kMissing;
    if (j.contains("grad_norm") && j["grad_norm"].is_number()) grad = j["grad_norm"].get<double>();
    const TracePoint point{iter, cost, has_optimum ? cost - c.spec.optimum : kMissing, grad};
    r.trace.push_back(point);
    a.monitor->observe(point);
  };

  std::vector<Active> active;
  std::size_t next = 0;
  while (next < rates.size() || !active.empty()) {
    while (next < rates.size() && static_cast<int>(active.size()) < parallel) {
      try {
        active.push_back(start(next));
      } catch (const std::exception& e) {
        records[next].outcome = Outcome::failed;
        records[next].reason = std::string("could not start: ") + e.what();
      }
      ++next;
    }
    const auto wait = std::chrono::milliseconds(active.size() > 1 ? 5 : 50);
    for (Active& a : active) {
      std::vector<std::string> lines;
      const bool open = a.child->read_lines(lines, wait);
      for (const std::string& line : lines) {
        if (!a.fault.empty() || a.monitor->decided()) break;
        take_line(a, line);
      }
      const double age = std::chrono::duration<double>(Clock::now() - a.started).count();
      if (a.fault.empty() && a.child->bytes_read() > c.spec.max_output)
        a.fault = fmt::format("output over the size cap of {} bytes", c.spec.max_output);
      if (a.fault.empty() && !a.monitor->decided() && age > c.spec.timeout)
        a.fault = fmt::format("timeout: no decision after {:g} s (the process group was killed)", c.spec.timeout);
      if (!a.fault.empty() || a.monitor->decided()) finish(a, true);
      else if (!open) finish(a, false);
    }
    std::erase_if(active, [](const Active& a) { return a.done; });
  }
  return records;
}

}  // namespace stepgate
