// The progress line of long runs: shown on stderr only when stderr is a terminal.
#pragma once
#include <chrono>

#include "stepgate/sweep/sweep.hpp"

namespace stepgate::cli {

class ProgressLine {
 public:
  /// enabled = false (e.g. --quiet or stderr not a terminal): prints nothing.
  explicit ProgressLine(bool enabled);
  void update(const SweepProgress& p);
  /// Clears the line.
  void finish();

 private:
  bool enabled_;
  std::chrono::steady_clock::time_point start_, last_;
};

}  // namespace stepgate::cli
