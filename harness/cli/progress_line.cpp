#include "stepgate/cli/progress_line.hpp"

#include <cstdio>

#include <fmt/format.h>

namespace stepgate::cli {

ProgressLine::ProgressLine(bool enabled)
    : enabled_(enabled), start_(std::chrono::steady_clock::now()), last_(start_) {}

void ProgressLine::update(const SweepProgress& p) {
  if (!enabled_) return;
  const auto now = std::chrono::steady_clock::now();
  if (now - last_ < std::chrono::milliseconds(200) && p.cases_done < p.cases) return;
  last_ = now;
  const double elapsed = std::chrono::duration<double>(now - start_).count();
  // The plan's run count is an upper bound (searches stop early), so the estimate is one too.
  const double fraction = p.max_runs > 0 ? static_cast<double>(p.runs_done) / p.max_runs : 0.0;
  const std::string eta = fraction > 0.02 ? fmt::format("at most ~{:.0f}s left", elapsed * (1.0 / fraction - 1.0)) : "";
  std::fprintf(stderr, "\r\033[Kcases %d/%d  runs %lld (plan <= %lld)  %.0fs  %s", p.cases_done, p.cases,
               p.runs_done, p.max_runs, elapsed, eta.c_str());
  std::fflush(stderr);
}

void ProgressLine::finish() {
  if (!enabled_) return;
  std::fprintf(stderr, "\r\033[K");
  std::fflush(stderr);
}

}  // namespace stepgate::cli
