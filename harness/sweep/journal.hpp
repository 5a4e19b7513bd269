// The journal of a sweep (docs/design.md, "Journal and resume"): DIR/journal.jsonl holds one
// header line and then one line per finished run, written and flushed to disk (fdatasync)
// batch by batch before the runs count as done. `run --resume` reads it back: the search asks
// for the same batches in the same order (it is deterministic), finds them in the journal and
// runs only what is missing, so the results equal an uninterrupted run's (timings aside).
//
// Header: {"format": "stepgate.journal/3", "suite": {name, sha256}, "tool", "shard",
//          "datasets": [[name, sha256], ...]}
// Run:    {"case", "seed_index", "batch": SHA-256 of the batch's rates in order, "lanes": their
//          count, "lane", "run": {...}}; the lane's rate is its run's own. The batch is named by
//          its digest, not its rate list, so that the journal grows with the runs alone (a list
//          on every line made it quadratic: 365 MB for 5,000 fixed rates).
// A batch is replayed only when every lane of it is present; a torn last line (a kill while
// writing) is dropped, and the file is cut back to the last whole line before appending.
#pragma once
#include <cstdint>
#include <map>
#include <memory>
#include <mutex>
#include <string>
#include <utility>
#include <vector>

#include "stepgate/core/error.hpp"
#include "stepgate/core/results.hpp"
#include "stepgate/search/case_search.hpp"

namespace stepgate {

inline constexpr const char* kJournalFormat = "stepgate.journal/3";
/// Most lanes a journal line may claim for its batch (a batch holds one case's rates).
inline constexpr long kMaxJournalLanes = 1'000'000;
inline constexpr const char* kJournalFile = "journal.jsonl";

/// What a journal's runs depend on: a journal is resumed only by the same suite file, tool
/// build, shard and data.
struct JournalIdentity {
  std::string suite_name, suite_sha256;
  std::string tool;   ///< "version (build)"
  std::string shard;  ///< "K/N" or "" for the whole suite
  std::vector<std::pair<std::string, std::string>> datasets;  ///< (name, sha256) of the data read
};

/// A journal write that failed (a full disk): the sweep stops at the first one, the whole run
/// ends with exit 3 naming the journal, and what was written before stays whole.
struct JournalWriteError : ToolError {
  using ToolError::ToolError;
};

class Journal {
 public:
  /// Opens `path`. resume = false: a fresh journal (an earlier one is replaced when start() is
  /// called). resume = true: reads the existing journal, if any (InputError("path:line", ...)
  /// for a damaged line that is not the last one).
  Journal(std::string path, bool resume);
  ~Journal();
  Journal(const Journal&) = delete;
  Journal& operator=(const Journal&) = delete;

  /// Checks the journal read against `id` (InputError naming what differs: another suite,
  /// suite file, tool, shard or data) and opens the file for appending. Call once, before
  /// any run.
  void start(const JournalIdentity& id);

  /// The store of one case: recalls its kept batches and appends its new ones. `keep_params`:
  /// also keep each run's final parameters (needed where the case compares with reference
  /// values). Thread-safe: cases on different threads append to one file.
  std::unique_ptr<RunStore> store_for(const std::string& case_id, bool keep_params);

  bool resumed() const { return existed_; }        ///< a journal was found and read
  long runs_available() const { return available_; }  ///< runs read back (whole batches)
  long runs_recalled() const;                      ///< of those, used by this sweep
  long runs_written() const;                       ///< appended by this process
  const std::string& path() const { return path_; }

  /// The kept batch with this batch_key, if whole (what a case's store recalls).
  std::optional<std::vector<RunRecord>> recall(const std::string& key);
  /// Appends `lines` run lines (text ending in a newline) and flushes them to disk.
  void append(const std::string& text, int lines);

 private:
  std::string path_;
  bool resume_ = false, existed_ = false;
  nlohmann::json header_;                  // the journal's header read back (resume)
  std::map<std::string, std::vector<RunRecord>> batches_;  // whole batches read back
  long available_ = 0;
  std::size_t good_bytes_ = 0;             // length of the file up to its last whole line
  std::size_t bytes_ = 0;                  // the file's length after the last whole append
  std::string failed_;                     // the first failed append's message: later ones fail alike
  int fd_ = -1;
  mutable std::mutex mutex_;
  long recalled_ = 0, written_ = 0;
  long kill_after_ = -1;                   // fault injection for the kill tests (see journal.cpp)
  bool kill_torn_ = false;
};

/// The key of a batch: case, seed index and the rates in order (exactly, as hex floats).
std::string batch_key(const std::string& case_id, long seed_index, std::span<const double> rates);
/// The SHA-256 (hex) of the rates in order, each as its exact hex-float text: a batch's name.
std::string rates_digest(std::span<const double> rates);

}  // namespace stepgate
