#include "stepgate/run/command_runner.hpp"

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <cstring>
#include <filesystem>
#include <limits>
#include <optional>
#include <unistd.h>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "stepgate/analysis/outcome_rules.hpp"
#include "stepgate/core/error.hpp"
#include "stepgate/core/interrupt.hpp"
#include "stepgate/core/json_text.hpp"
#include "stepgate/core/placeholders.hpp"
#include "stepgate/core/trainer_fields.hpp"
#include "stepgate/run/child_process.hpp"

namespace stepgate {

namespace {

namespace fs = std::filesystem;
using Clock = std::chrono::steady_clock;
using nlohmann::json;

// A fresh folder for {out}: under the system's temporary folder, named by process and counter.
std::string fresh_folder() {
  static std::atomic<long> counter{0};
  std::error_code ec;
  const fs::path p = fs::temp_directory_path(ec) /
                     fmt::format("stepgate-run-{}-{}", static_cast<long>(::getpid()), counter.fetch_add(1));
  if (ec || (fs::create_directories(p, ec), ec))
    throw ToolError(fmt::format("command: cannot create the run folder {}: {}", p.string(), ec.message()));
  return p.string();
}

// Python's json module writes NaN, Infinity and -Infinity for non-finite floats; JSON has no
// such tokens, so outside strings they are read as null (a non-finite cost).
json parse_line(const std::string& line) {
  if (!within_json_limits(line)) return json(json::value_t::discarded);  // too deep or an overflowing number
  json j = json::parse(line, nullptr, false);
  if (!j.is_discarded()) return j;
  std::string fixed;
  bool in_string = false;
  for (std::size_t i = 0; i < line.size(); ++i) {
    const char c = line[i];
    if (c == '"' && (i == 0 || line[i - 1] != '\\')) in_string = !in_string;
    bool replaced = false;
    if (!in_string)
      for (std::string_view token : {"-Infinity", "Infinity", "NaN"})
        if (line.compare(i, token.size(), token) == 0) {
          fixed += "null";
          i += token.size() - 1;
          replaced = true;
          break;
        }
    if (!replaced) fixed += c;
  }
  return json::parse(fixed, nullptr, false);
}

// One run in progress: its record, its monitor and its protocol state.
struct RunState {
  std::size_t index = 0;  // into the batch's records
  long id = 0;            // serving mode: the request's "run"
  std::unique_ptr<OutcomeMonitor> monitor;
  Clock::time_point started;
  std::string out_dir;     // "" when argv does not use {out}
  std::vector<std::string> argv;  // as started (serving: the server's)
  std::string request;     // serving: the request line of this run
  long line_number = 0;
  long bytes_at_start = 0;
  std::optional<long> last_iter;
  std::optional<double> first_cost;  // of iter's first line: the scale of "below the optimum"
  long stride = 1;        // largest step between logged iterations (a trainer may log every N)
  bool params_seen = false;
  std::string fault;      // non-empty: protocol fault, timeout, size cap, process fault
  bool stop_sent = false; // serving: {"stop": id} written, waiting for its end line
};

// A serving process and the run it is answering (if any).
struct Server {
  std::unique_ptr<ChildProcess> child;
  std::vector<std::string> argv;  // as started
  std::optional<RunState> run;
  Clock::time_point stop_sent_at;
};

}  // namespace

bool ProcessSlots::try_take() {
  std::lock_guard lock(mutex_);
  if (free_ == 0) return false;
  --free_;
  return true;
}

void ProcessSlots::take() {
  std::unique_lock lock(mutex_);
  freed_.wait(lock, [&] { return free_ > 0; });
  --free_;
}

void ProcessSlots::give() {
  {
    std::lock_guard lock(mutex_);
    ++free_;
  }
  freed_.notify_one();
}

struct CommandSession::Impl {
  ProcessSlots* slots = nullptr;
  int held = 0;  // slots this session holds (one per live process)
  // A slot for one more process: waits when this session holds none (so it cannot starve),
  // otherwise only takes a free one.
  bool take_slot() {
    if (!slots) return true;
    if (held == 0) slots->take();
    else if (!slots->try_take()) return false;
    ++held;
    return true;
  }
  void give_slot() {
    if (!slots) return;
    --held;
    slots->give();
  }
  CommandCase c;
  RunSettings settings;
  int parallel = 1;
  bool has_optimum = false;
  bool uses_out = false;                      // argv names {out}: each run gets a fresh folder
  std::map<std::string, std::string> fields;  // {optimizer.FIELD}, {schedule.FIELD}
  long next_id = 1;
  std::vector<Server> servers;

  std::vector<std::string> argv_for(double rate, BatchSeed seed, const std::string& out_dir) const {
    const PlaceholderValues values{exact_number(rate), std::to_string(seed.number), std::to_string(settings.budget),
                                   c.optimizer.name(), c.scaling,                   c.case_id,
                                   out_dir,            &fields};
    auto lookup = [&](std::string_view name) { return placeholder_value(name, values); };
    std::vector<std::string> argv;
    for (const std::string& arg : c.spec.argv) argv.push_back(expand_placeholders(arg, lookup));
    return argv;
  }

  std::unique_ptr<ChildProcess> spawn(std::vector<std::string> argv, bool serve) const {
    ChildOptions o;
    o.argv = std::move(argv);
    o.cwd = c.spec.cwd;
    o.env = c.spec.env;
    o.pipe_stdin = serve;
    return std::make_unique<ChildProcess>(o);
  }

  RunState begin(std::size_t index) {
    RunState s;
    s.index = index;
    s.id = next_id++;
    s.monitor = std::make_unique<OutcomeMonitor>(settings.outcome, has_optimum, settings.budget);
    // A training program's log may be noisy (minibatch losses): docs/design.md, "Noisy runs".
    if (reads_as_noisy(settings.outcome.noise, true)) s.monitor->read_as_noisy();
    s.started = Clock::now();
    return s;
  }

  // One line of a run's output (serving mode: with "run" already matched and removed).
  // Anything that breaks the protocol (README, "The trainer protocol") makes the run failed
  // with a reason saying what, never a number taken on trust.
  void take(RunState& s, RunRecord& r, const std::string& raw, const json* parsed) {
    ++s.line_number;
    if (!parsed) {
      const auto first = raw.find_first_not_of(" \t\r");
      if (first == std::string::npos || raw[first] != '{') {
        ++r.log_lines;
        return;
      }
    }
    const json j = parsed ? *parsed : parse_line(raw);
    const auto error = [&](const std::string& what) {
      s.fault = fmt::format("protocol error at output line {}: {}", s.line_number, what);
    };
    if (j.is_discarded() || !j.is_object()) return error(fmt::format("not a JSON object: {:.120}", raw));
    if (const std::string twice = first_repeated_key(raw); !twice.empty())
      return error(fmt::format("the key {} is given twice in one object; expected each key once", twice));
    if (j.contains("params")) {
      const json& p = j["params"];
      if (!p.is_array()) return error("\"params\" must be an array of numbers");
      r.final_params.resize(static_cast<Index>(p.size()));
      for (std::size_t i = 0; i < p.size(); ++i) {
        if (!p[i].is_number() && !p[i].is_null())  // null: a non-finite value written by Python as NaN
          return error(fmt::format("\"params\"[{}] is {}; expected a number", i, p[i].dump().substr(0, 40)));
        r.final_params[static_cast<Index>(i)] = p[i].is_number() ? p[i].get<double>() : kMissing;
      }
      s.params_seen = true;
      return;
    }
    if (s.params_seen) return error("a cost line after the final \"params\" line; expected params last");
    if (s.monitor->decided()) return;  // decided: only a params line still matters
    if (!j.contains("iter") || !j["iter"].is_number_integer() || !j.contains("cost") ||
        !(j["cost"].is_number() || j["cost"].is_null()))
      return error(fmt::format("expected {{\"iter\": integer, \"cost\": number}}, found {:.120}", raw));
    const long iter = j["iter"].is_number_unsigned() && j["iter"].get<std::uint64_t>() > std::uint64_t(kMaxBudget) * 4
                          ? std::numeric_limits<long>::max()
                          : j["iter"].get<long>();
    if (iter < 0) return error(fmt::format("iter {} is negative; expected iterations counted from 0", iter));
    if (iter > settings.budget)
      return error(fmt::format("iter {} is past the budget of {} iterations; expected at most the budget "
                               "({{budget}} in the argv, \"budget\" in a request)", iter, settings.budget));
    if (s.last_iter && iter <= *s.last_iter)
      return error(fmt::format("iter {} does not increase (previous {})", iter, *s.last_iter));
    if (s.last_iter) s.stride = std::max(s.stride, iter - *s.last_iter);
    s.last_iter = iter;
    const double cost = j["cost"].is_null() ? kMissing : j["cost"].get<double>();
    if (!s.first_cost) s.first_cost = cost;
    // A cost below the known optimum means the optimum or the cost is wrong; taken on trust it
    // would read as convergence. Not for costs read as noise (a minibatch can go below it).
    if (has_optimum && std::isfinite(cost) && settings.outcome.noise != NoiseMode::on) {
      const double scale = std::max({std::abs(c.spec.optimum), std::isfinite(*s.first_cost) ? std::abs(*s.first_cost - c.spec.optimum) : 0.0,
                                     std::numeric_limits<double>::min()});
      if (cost < c.spec.optimum - 1e-6 * scale)
        return error(fmt::format("cost {} is below the stated optimum {} (by more than 1e-6 of the starting gap); "
                                 "expected costs at or above it: check \"optimum\" and the cost the program writes",
                                 exact_number(cost), exact_number(c.spec.optimum)));
    }
    double grad = kMissing;
    if (j.contains("grad_norm") && j["grad_norm"].is_number()) grad = j["grad_norm"].get<double>();
    const TracePoint point{iter, cost, has_optimum ? cost - c.spec.optimum : kMissing, grad};
    r.trace.push_back(point);
    s.monitor->observe(point);
  }

  // A converged run of a problem with reference values goes on to its end, so that the
  // program writes its final {"params": [...]} line; every other decided run is stopped.
  bool keeps_running(const RunState& s) const {
    return c.wants_params && s.monitor->converged();
  }

  // Checks the run's limits; true when it must end now (decided or faulty).
  bool must_end(RunState& s, long bytes_now) const {
    if (s.fault.empty() && bytes_now - s.bytes_at_start > c.spec.max_output)
      s.fault = fmt::format("output over the size cap of {} bytes (the process group was killed)", c.spec.max_output);
    const double age = std::chrono::duration<double>(Clock::now() - s.started).count();
    if (s.fault.empty() && (!s.monitor->decided() || keeps_running(s)) && age > c.spec.timeout)
      s.fault = s.monitor->decided()
                    ? fmt::format("timeout: converged, but no end after {:g} s (the process group was killed)", c.spec.timeout)
                    : fmt::format("timeout: no decision after {:g} s (the process group was killed)", c.spec.timeout);
    return !s.fault.empty() || (s.monitor->decided() && !keeps_running(s));
  }

  // Fills the record from the run's state once it is over.
  void close(RunState& s, RunRecord& r, const std::string& process_fault, const std::string& stderr_tail) const {
    r.wall_seconds = std::chrono::duration<double>(Clock::now() - s.started).count();
    r.steps = s.last_iter.value_or(0);
    std::string fault = s.fault;
    if (fault.empty() && !s.monitor->decided()) {
      if (!process_fault.empty()) fault = process_fault;
      else if (r.trace.empty()) fault = "no output: the program wrote no {\"iter\": k, \"cost\": J} line";
      // Ended before its budget without a decision: not "slow: budget used". A program that
      // logs every N iterations may end up to N − 1 short of the budget.
      else if (s.last_iter && settings.budget - *s.last_iter >= s.stride)
        fault = fmt::format("ended early: the last line was iteration {} of a budget of {}, and no outcome was "
                            "decided (the program stopped before its budget)", *s.last_iter, settings.budget);
    }
    if (!fault.empty()) {
      // The reason alone says what went wrong (runs that failed alike share it); the evidence
      // goes beside it. A kept {out} folder is named in the argv.
      r.outcome = Outcome::failed;
      r.reason = fault;
      r.stderr_tail = stderr_tail;
      r.command = s.argv;
      r.request = s.request;
    } else {
      record_classification(s.monitor->result(), r);
    }
    if (!s.out_dir.empty() && r.outcome != Outcome::failed) {  // a failed run's folder is kept
      std::error_code ec;
      fs::remove_all(s.out_dir, ec);
    }
  }

  static std::string exit_fault(const ChildExit& ex, const char* what) {
    if (ex.signalled) return fmt::format("{} killed by signal {} ({})", what, ex.code, ::strsignal(ex.code));
    if (ex.code != 0) return fmt::format("{} exited with status {}", what, ex.code);
    return "";
  }

  void run_per_process(std::span<const double> rates, BatchSeed seed, std::vector<RunRecord>& records) {
    struct Active {
      RunState state;
      std::unique_ptr<ChildProcess> child;
    };
    std::vector<Active> active;
    std::size_t next = 0;
    while (next < rates.size() || !active.empty()) {
      stop_point();  // Ctrl-C: the children are stopped as `active` unwinds
      while (next < rates.size() && static_cast<int>(active.size()) < parallel && take_slot()) {
        // A program that cannot be started at all is the tool's failure, not a run's: the
        // ToolError ends the case ("could not be run", exit 3) and the others are stopped.
        Active a{begin(next), nullptr};
        try {
          if (uses_out) a.state.out_dir = fresh_folder();
          a.state.argv = argv_for(rates[next], seed, a.state.out_dir);
          a.child = spawn(a.state.argv, false);
        } catch (...) {
          give_slot();
          throw;
        }
        active.push_back(std::move(a));
        ++next;
      }
      const auto wait = std::chrono::milliseconds(active.size() > 1 ? 5 : 50);
      for (Active& a : active) {
        RunRecord& r = records[a.state.index];
        std::vector<std::string> lines;
        a.child->read_lines(lines, wait);
        // The run ends when its process exits, not when the pipe closes: a grandchild (a data
        // loader's worker) may hold the pipe open, and a program may close stdout and go on.
        const bool gone = a.child->exited().has_value();
        if (gone) a.child->read_rest(lines, c.spec.max_output);
        for (const std::string& line : lines) {
          if (!a.state.fault.empty() || (a.state.monitor->decided() && !keeps_running(a.state))) break;
          take(a.state, r, line, nullptr);
        }
        if (must_end(a.state, a.child->bytes_read())) {
          a.child->stop(c.spec.grace);
          close(a.state, r, "", a.child->stderr_tail());
          a.child.reset();
        } else if (gone) {
          const ChildExit ex = a.child->wait();
          close(a.state, r, exit_fault(ex, "the program"), a.child->stderr_tail());
          a.child.reset();
        }
      }
      for (const Active& a : active)
        if (!a.child) give_slot();
      std::erase_if(active, [](const Active& a) { return !a.child; });
    }
  }

  std::string request(const RunState& s, double rate, BatchSeed seed) const {
    return serving_request({s.id, rate, seed.number, settings.budget}, c.optimizer, c.scaling).dump();
  }

  void run_serving(std::span<const double> rates, BatchSeed seed, std::vector<RunRecord>& records) {
    const int workers = std::min<int>(parallel, static_cast<int>(rates.size()));
    if (static_cast<int>(servers.size()) < workers) servers.resize(static_cast<std::size_t>(workers));
    std::size_t next = 0;
    auto busy = [&] {
      for (const Server& s : servers)
        if (s.run) return true;
      return false;
    };
    auto fail_server = [&](Server& sv, const std::string& fault) {
      // The process is in an unknown state: it goes, and the next run gets a fresh one.
      const ChildExit ex = sv.child->stop(c.spec.grace);
      const std::string tail = sv.child->stderr_tail();
      if (sv.run) {
        RunState& s = *sv.run;
        if (s.fault.empty() && !s.monitor->decided())
          s.fault = fault.empty() ? exit_fault(ex, "the serving process") + " during the run" : fault;
        close(s, records[s.index], "", tail);
        sv.run.reset();
      }
      sv.child.reset();
      give_slot();
    };
    while (next < rates.size() || busy()) {
      stop_point();
      for (int w = 0; w < workers; ++w) {
        Server& sv = servers[static_cast<std::size_t>(w)];
        if (sv.run || next >= rates.size()) continue;
        if (!sv.child && !take_slot()) continue;  // no process to spare now: later
        RunState s = begin(next);
        {  // a program that cannot be started at all ends the case (ToolError), as above
          if (!sv.child) {
            try {
              sv.argv = argv_for(rates[next], seed, "");
              sv.child = spawn(sv.argv, true);
            } catch (...) {
              give_slot();
              throw;
            }
          }
          s.bytes_at_start = sv.child->bytes_read();
          s.argv = sv.argv;
          s.request = request(s, rates[next], seed);
          if (!sv.child->write(s.request + "\n")) {
            const ChildExit ex = sv.child->stop(c.spec.grace);
            s.fault = exit_fault(ex, "the serving process") + " before taking the request";
            close(s, records[next], "", sv.child->stderr_tail());
            sv.child.reset();
      give_slot();
          } else {
            sv.run = std::move(s);
          }
        }
        ++next;
      }
      const auto wait = std::chrono::milliseconds(workers > 1 ? 5 : 50);
      for (Server& sv : servers) {
        if (!sv.run) continue;
        RunState& s = *sv.run;
        RunRecord& r = records[s.index];
        std::vector<std::string> lines;
        const bool open = sv.child->read_lines(lines, wait);
        const bool gone = sv.child->exited().has_value();  // even if a grandchild holds the pipe
        if (gone) sv.child->read_rest(lines, c.spec.max_output);
        bool ended = false;
        for (const std::string& line : lines) {
          const auto first = line.find_first_not_of(" \t\r");
          if (first == std::string::npos || line[first] != '{') {
            ++r.log_lines;
            continue;
          }
          json j = parse_line(line);
          if (j.is_discarded() || !j.is_object() || !j.contains("run") || !j["run"].is_number_integer() ||
              j["run"].get<long>() > s.id || j["run"].get<long>() < 1) {
            if (!s.stop_sent && s.fault.empty())
              s.fault = fmt::format("protocol error at output line {}: expected a JSON object with \"run\": the "
                                    "integer id of a request sent (this run's is {}), found {:.120}",
                                    s.line_number + 1, s.id, line);
            break;
          }
          if (j["run"].get<long>() != s.id) continue;  // a late line of an earlier run
          if (j.contains("end") && j["end"] == true) {
            ended = true;
            break;
          }
          if (s.stop_sent || !s.fault.empty() || (s.monitor->decided() && !keeps_running(s))) continue;
          j.erase("run");
          take(s, r, line, &j);
        }
        if (!s.fault.empty() && !s.stop_sent) {
          fail_server(sv, "");
          continue;
        }
        if (ended) {  // the tail helps a run that ended without output; others ignore it
          close(s, r, "", sv.child->stderr_tail());
          sv.run.reset();
          continue;
        }
        if (!open || gone) {
          fail_server(sv, "");
          continue;
        }
        if (!s.stop_sent && must_end(s, sv.child->bytes_read())) {
          if (!s.fault.empty()) {
            fail_server(sv, "");
            continue;
          }
          s.stop_sent = true;
          sv.stop_sent_at = Clock::now();
          if (!sv.child->write(json{{"stop", s.id}}.dump() + "\n")) fail_server(sv, "");
          continue;
        }
        // A program that does not end a stopped run within the grace period is stopped itself.
        if (s.stop_sent &&
            std::chrono::duration<double>(Clock::now() - sv.stop_sent_at).count() > std::max(c.spec.grace, 1.0)) {
          close(s, r, "", "");  // decided already; only the process goes
          sv.run.reset();
          sv.child->stop(c.spec.grace);
          sv.child.reset();
      give_slot();
        }
      }
    }
  }

  void end_servers() {
    for (Server& sv : servers) {
      if (!sv.child) continue;
      sv.child->close_stdin();  // end of input: the program exits
      const auto until = Clock::now() + std::chrono::duration<double>(c.spec.grace);
      std::vector<std::string> ignored;
      while (Clock::now() < until && sv.child->read_lines(ignored, std::chrono::milliseconds(20))) ignored.clear();
      sv.child->stop(0.2);
      sv.child.reset();
      give_slot();
    }
    servers.clear();
  }

  // An interrupted or failed batch unwinds here: its processes are stopped (the children's
  // destructors kill their groups) and the slots they held go back to the other cases.
  ~Impl() {
    servers.clear();
    while (held > 0) give_slot();
  }
};

CommandSession::CommandSession(CommandCase c, RunSettings settings, int jobs, ProcessSlots* slots)
    : impl_(std::make_unique<Impl>()) {
  impl_->slots = slots;
  impl_->c = std::move(c);
  impl_->settings = std::move(settings);
  impl_->parallel = std::max(1, impl_->c.spec.parallel > 0 ? impl_->c.spec.parallel : jobs);
  impl_->has_optimum = !std::isnan(impl_->c.spec.optimum);
  impl_->uses_out = uses_placeholder(impl_->c.spec.argv, "out");
  impl_->fields = trainer_placeholders(impl_->c.optimizer);
}

CommandSession::~CommandSession() {
  if (impl_) impl_->end_servers();
}

std::vector<RunRecord> CommandSession::run(std::span<const double> rates, BatchSeed seed) {
  std::vector<RunRecord> records(rates.size());
  for (std::size_t j = 0; j < rates.size(); ++j) {
    records[j].rate = rates[j];
    records[j].seed = seed.seed;
    records[j].seed_index = seed.index;
  }
  if (impl_->c.spec.serve) impl_->run_serving(rates, seed, records);
  else impl_->run_per_process(rates, seed, records);
  return records;
}

std::vector<RunRecord> run_commands(const CommandCase& c, const RunSettings& settings, std::span<const double> rates,
                                    BatchSeed seed, int jobs) {
  CommandSession session(c, settings, jobs);
  return session.run(rates, seed);
}

}  // namespace stepgate
