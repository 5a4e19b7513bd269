// The CLI's stdout and stderr carry text from files (case ids, a program's error lines,
// results written by other hands). Installed on std::cout and std::cerr for the process, this
// filter shows every control byte but line feed and tab as the visible text \xNN, so that no
// value can cut a line short (NUL), rewrite it (CR) or drive the terminal (ESC). The progress
// line writes its own escape codes to stderr through stdio, beside this filter.
#pragma once
#include <iostream>
#include <streambuf>

namespace stepgate {

/// Passes text to `dest`, control bytes but '\n' and '\t' as \xNN. Unbuffered: the
/// destination buffer keeps its own buffering and flushing.
class VisibleBuf final : public std::streambuf {
 public:
  explicit VisibleBuf(std::streambuf* dest) : dest_(dest) {}

 protected:
  int_type overflow(int_type c) override;
  std::streamsize xsputn(const char* s, std::streamsize n) override;
  int sync() override { return dest_->pubsync(); }

 private:
  std::streambuf* dest_;
};

/// Puts a VisibleBuf in front of std::cout and std::cerr while it lives.
class VisibleOutput {
 public:
  VisibleOutput();
  ~VisibleOutput();
  VisibleOutput(const VisibleOutput&) = delete;
  VisibleOutput& operator=(const VisibleOutput&) = delete;

 private:
  VisibleBuf out_, err_;
  std::streambuf* old_out_;
  std::streambuf* old_err_;
};

}  // namespace stepgate
