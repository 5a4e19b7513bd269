#include "stepgate/sweep/journal.hpp"

#include <fcntl.h>
#include <signal.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cmath>
#include <cstdlib>
#include <cstring>
#include <limits>

#include <fmt/format.h>

#include "stepgate/core/error.hpp"
#include "stepgate/core/input_file.hpp"
#include "stepgate/core/interrupt.hpp"
#include "stepgate/core/json_node.hpp"
#include "stepgate/core/json_text.hpp"
#include "stepgate/data/sha256.hpp"
#include "stepgate/core/run_record_json.hpp"

namespace stepgate {

using nlohmann::json;

namespace {

json identity_json(const JournalIdentity& id) {
  json datasets = json::array();
  for (const auto& [name, sha] : id.datasets) datasets.push_back({name, sha});
  return {{"format", kJournalFormat},
          {"suite", {{"name", id.suite_name}, {"sha256", id.suite_sha256}}},
          {"tool", id.tool},
          {"shard", id.shard.empty() ? json(nullptr) : json(id.shard)},
          {"datasets", std::move(datasets)}};
}

// Fault injection for the kill tests (tests/e2e/test_resume.cpp), read once per journal:
// STEPGATE_TEST_KILL_AFTER_RUNS=N kills the process with SIGKILL right after the N-th run line
// of this process reaches the disk; "N:torn" kills it halfway through writing that line.
std::pair<long, bool> kill_point() {
  const char* v = std::getenv("STEPGATE_TEST_KILL_AFTER_RUNS");
  if (v == nullptr || *v == '\0') return {-1, false};
  char* end = nullptr;
  const long n = std::strtol(v, &end, 10);
  return {n > 0 ? n : -1, end != nullptr && std::strcmp(end, ":torn") == 0};
}

class CaseJournal final : public RunStore {
 public:
  CaseJournal(Journal& j, std::string case_id, bool keep_params)
      : journal_(j), case_(std::move(case_id)) {
    style_.final_params = keep_params;
  }

  std::optional<std::vector<RunRecord>> recall(long seed_index, std::span<const double> rates) override {
    stop_point();  // between batches: where Ctrl-C ends a sweep
    return journal_.recall(batch_key(case_, seed_index, rates));
  }

  std::string where() const override { return journal_.path(); }

  void keep(long seed_index, std::span<const double> rates, const std::vector<RunRecord>& records) override {
    const std::string digest = rates_digest(rates);
    std::string text;
    for (std::size_t lane = 0; lane < records.size(); ++lane)
      text += json{{"case", case_}, {"seed_index", seed_index}, {"batch", digest}, {"lanes", rates.size()}, {"lane", lane},
                   {"run", to_json(records[lane], style_)}}
                  .dump(-1, ' ', false, json::error_handler_t::replace) +
              "\n";
    journal_.append(text, static_cast<int>(records.size()));
    stop_point();
  }

 private:
  Journal& journal_;
  std::string case_;
  RunRecordStyle style_ = kJournalStyle;
};

std::string differs(const json& found, const json& wanted) {
  if (found.value("format", "") != kJournalFormat)
    return fmt::format("it is not a stepgate journal (expected \"format\": \"{}\")", kJournalFormat);
  if (found["suite"].value("name", "") != wanted["suite"]["name"])
    return fmt::format("it belongs to the suite '{}', not '{}'", found["suite"].value("name", "?"),
                       wanted["suite"]["name"].get<std::string>());
  if (found["suite"].value("sha256", "") != wanted["suite"]["sha256"])
    return "the suite file changed since it was written (another sha256)";
  if (found.value("tool", "") != wanted["tool"])
    return fmt::format("it was written by another stepgate build ({}; this is {})", found.value("tool", "?"),
                       wanted["tool"].get<std::string>());
  if (found.value("shard", json(nullptr)) != wanted["shard"])
    return fmt::format("it is of another shard ({} against {})", found.value("shard", json(nullptr)).dump(),
                       wanted["shard"].dump());
  if (found.value("datasets", json::array()) != wanted["datasets"])
    return "the data changed since it was written (another sha256 of a data set)";
  return "";
}

}  // namespace

namespace {

std::string key_of(const std::string& case_id, long seed_index, std::size_t lanes, const std::string& digest) {
  return fmt::format("{}\x1f{}\x1f{}\x1f{}", case_id, seed_index, lanes, digest);
}

}  // namespace

std::string rates_digest(std::span<const double> rates) {
  std::string text;
  for (double r : rates) text += fmt::format("{:a};", r);
  return sha256_hex(text);
}

std::string batch_key(const std::string& case_id, long seed_index, std::span<const double> rates) {
  return key_of(case_id, seed_index, rates.size(), rates_digest(rates));
}

Journal::Journal(std::string path, bool resume) : path_(std::move(path)), resume_(resume) {
  std::tie(kill_after_, kill_torn_) = kill_point();
  if (!resume_ || ::access(path_.c_str(), F_OK) != 0) return;
  existed_ = true;
  const std::string text = read_input_file(path_, ReadAs::previous_output);
  struct Partial {
    std::vector<std::optional<RunRecord>> lanes;
    std::size_t filled = 0;
  };
  std::map<std::string, Partial> partial;
  std::size_t at = 0;
  long line = 0;
  while (at < text.size()) {
    const std::size_t end = text.find('\n', at);
    ++line;
    const bool last = end == std::string::npos || end + 1 >= text.size();
    const std::string where = fmt::format("{}:{}", path_, line);
    if (end == std::string::npos) break;  // a torn last line (no newline): dropped
    const std::string_view body(text.data() + at, end - at);
    json j = within_json_limits(body) ? json::parse(body, nullptr, false) : json(json::value_t::discarded);
    if (j.is_discarded() || !j.is_object()) {
      if (last) break;  // torn while being written: dropped
      throw InputError(where, "found a line that is not a JSON object; expected a journal entry (the journal is damaged: "
                              "run again without --resume)");
    }
    if (const std::string twice = first_repeated_key(body); !twice.empty()) {
      if (last) break;
      throw InputError(where + " #" + twice, "found this key a second time in its object; expected each key once (the "
                                             "journal is damaged: run again without --resume)");
    }
    if (line == 1) {
      header_ = std::move(j);
    } else {
      try {
        const JsonField e(j, where);
        const std::string case_id = e["case"].string();
        const long seed_index = e["seed_index"].integer_as<long>();
        const std::string digest = e["batch"].string();
        if (digest.size() != 64 || digest.find_first_not_of("0123456789abcdef") != std::string::npos)
          e["batch"].expected("the SHA-256 of the batch's rates (64 lower-case hex digits)");
        const long lanes = e["lanes"].integer_as<long>();
        if (lanes < 1 || lanes > kMaxJournalLanes)
          e["lanes"].expected(fmt::format("the number of runs in the batch, from 1 to {}", kMaxJournalLanes));
        const auto lane = e["lane"].integer_as<std::size_t>();
        if (lane >= static_cast<std::size_t>(lanes)) e["lane"].expected(fmt::format("a lane of the batch, below {}", lanes));
        Partial& p = partial[key_of(case_id, seed_index, static_cast<std::size_t>(lanes), digest)];
        RunRecord record = run_record_from(e["run"], kJournalStyle);
        if (record.seed_index != seed_index) e["run"]["seed_index"].expected(fmt::format("the entry's seed_index {}", seed_index));
        const bool whole = !p.lanes.empty() && p.filled == p.lanes.size();  // a later copy changes nothing
        if (!whole) {
          if (p.lanes.empty() || p.lanes[lane]) p.lanes.assign(static_cast<std::size_t>(lanes), std::nullopt), p.filled = 0;  // run again after a cut
          p.lanes[lane] = std::move(record);
          ++p.filled;
        }
      } catch (const InputError& e) {
        if (last) break;
        throw InputError(e.where(), e.message() + " (the journal is damaged: run again without --resume)");
      }
    }
    at = end + 1;
    good_bytes_ = at;
  }
  if (header_.is_null())
    throw InputError(path_ + ":1", "found no journal header; expected the first line stepgate writes (run again "
                                   "without --resume)");
  for (auto& [key, p] : partial) {
    if (p.filled != p.lanes.size()) continue;  // a batch cut short: run it again
    std::vector<RunRecord> records;
    for (auto& r : p.lanes) records.push_back(std::move(*r));
    available_ += static_cast<long>(records.size());
    batches_.emplace(key, std::move(records));
  }
}

Journal::~Journal() {
  if (fd_ >= 0) ::close(fd_);
}

void Journal::start(const JournalIdentity& id) {
  const json wanted = identity_json(id);
  if (existed_) {
    if (const std::string why = differs(header_, wanted); !why.empty())
      throw InputError(path_, fmt::format("cannot resume from this journal: {}; run again without --resume to "
                                          "start afresh", why));
    fd_ = ::open(path_.c_str(), O_WRONLY | O_CLOEXEC);
    if (fd_ < 0 || ::ftruncate(fd_, static_cast<off_t>(good_bytes_)) != 0 || ::lseek(fd_, 0, SEEK_END) < 0)
      throw ToolError(fmt::format("cannot append to {}: {}", path_, std::strerror(errno)));
    return;
  }
  // A fresh journal: written under a staged name, then renamed over an earlier one, so that
  // a kill here leaves the earlier journal whole.
  const std::string staged = fmt::format("{}.staged-{}", path_, ::getpid());
  fd_ = ::open(staged.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
  if (fd_ < 0) throw ToolError(fmt::format("cannot write {}: {}", staged, std::strerror(errno)));
  const std::string head = wanted.dump(-1, ' ', false, json::error_handler_t::replace) + "\n";
  if (::write(fd_, head.data(), head.size()) != static_cast<ssize_t>(head.size()) || ::fdatasync(fd_) != 0 ||
      ::rename(staged.c_str(), path_.c_str()) != 0) {
    const int error = errno;
    ::unlink(staged.c_str());
    throw ToolError(fmt::format("cannot write {}: {}", path_, std::strerror(error)));
  }
}

std::unique_ptr<RunStore> Journal::store_for(const std::string& case_id, bool keep_params) {
  return std::make_unique<CaseJournal>(*this, case_id, keep_params);
}

std::optional<std::vector<RunRecord>> Journal::recall(const std::string& key) {
  auto it = batches_.find(key);  // read-only after construction: no lock needed
  if (it == batches_.end()) return std::nullopt;
  std::lock_guard lock(mutex_);
  recalled_ += static_cast<long>(it->second.size());
  return it->second;
}

void Journal::append(const std::string& text, int lines) {
  std::lock_guard lock(mutex_);
  if (fd_ < 0) throw ToolError("the journal was not started");
  std::size_t length = text.size();
  bool kill = false;
  if (kill_after_ > 0 && written_ + lines >= kill_after_) {
    // Cut the text after the (kill_after_)-th line of this process, or halfway through it.
    std::size_t cut = 0;
    for (long n = written_; n < kill_after_; ++n) {
      const std::size_t end = text.find('\n', cut);
      cut = n + 1 == kill_after_ && kill_torn_ ? cut + (end - cut) / 2 : end + 1;
    }
    length = cut;
    kill = true;
  }
  if (!failed_.empty()) throw JournalWriteError(failed_);
  // On a failed write (disk full) the part of this batch already written is cut off again, so
  // that the journal ends with whole lines, and the sweep stops here.
  const auto fail = [&](const char* what, int error) {
    const off_t end = ::lseek(fd_, 0, SEEK_CUR);
    if (end >= 0 && static_cast<std::size_t>(end) > bytes_) (void)!::ftruncate(fd_, static_cast<off_t>(bytes_));
    failed_ = fmt::format("cannot {} the journal {}: {}; the sweep stopped there, and the {} runs written before "
                          "are kept (continue with --resume once there is room)",
                          what, path_, std::strerror(error), written_);
    throw JournalWriteError(failed_);
  };
  if (bytes_ == 0) bytes_ = static_cast<std::size_t>(std::max<off_t>(0, ::lseek(fd_, 0, SEEK_END)));
  std::size_t done = 0;
  while (done < length) {
    const ssize_t n = ::write(fd_, text.data() + done, length - done);
    if (n < 0 && errno == EINTR) continue;
    if (n < 0) fail("append to", errno);
    done += static_cast<std::size_t>(n);
  }
  if (::fdatasync(fd_) != 0) fail("flush", errno);
  if (kill) ::raise(SIGKILL);
  bytes_ += done;
  written_ += lines;
}

long Journal::runs_recalled() const {
  std::lock_guard lock(mutex_);
  return recalled_;
}

long Journal::runs_written() const {
  std::lock_guard lock(mutex_);
  return written_;
}

}  // namespace stepgate
