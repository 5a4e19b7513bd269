// Runs the stepgate CLI (or any command line) for the end-to-end tests: in a given working
// directory, with stdout and stderr captured to files, returning the exit code.
#pragma once
#include <sys/wait.h>
#include <unistd.h>

#include <atomic>
#include <chrono>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <system_error>

namespace stepgate::e2e {

namespace fs = std::filesystem;

/// The CLI binary of this build.
inline std::string stepgate_binary() { return STEPGATE_BINARY_DIR "/stepgate"; }
/// The repository root (suites/, references/, tests/e2e/...).
inline fs::path source_dir() { return STEPGATE_SOURCE_DIR; }

/// Single-quotes a word for /bin/sh (paths may hold spaces).
inline std::string quoted(const std::string& word) {
  std::string out = "'";
  for (char ch : word) out += ch == '\'' ? std::string("'\\''") : std::string(1, ch);
  return out + "'";
}

inline std::string read_text(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

inline void write_text(const fs::path& path, const std::string& text) {
  fs::create_directories(path.parent_path());
  std::ofstream(path, std::ios::binary) << text;
}

struct CliResult {
  int exit_code = -1;    ///< WEXITSTATUS, or -1 when the command did not exit normally
  std::string out, err;  ///< captured stdout and stderr
  double seconds = 0.0;  ///< wall time
};

/// Runs `command_line` (a /bin/sh command line) in `working_dir`; stdout and stderr go to
/// files in `capture_dir` (created; default: working_dir) and are read back.
inline CliResult run_command_line(const std::string& command_line, const fs::path& working_dir,
                                  fs::path capture_dir = {}) {
  static std::atomic<int> counter{0};
  if (capture_dir.empty()) capture_dir = working_dir;
  fs::create_directories(capture_dir);
  const std::string tag = std::to_string(counter++);
  const fs::path out = capture_dir / ("cli-" + tag + ".stdout"), err = capture_dir / ("cli-" + tag + ".stderr");
  const std::string full = "cd " + quoted(working_dir.string()) + " && " + command_line + " >" + quoted(out.string()) +
                           " 2>" + quoted(err.string()) + " </dev/null";
  const auto start = std::chrono::steady_clock::now();
  const int status = std::system(full.c_str());
  CliResult r;
  r.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  r.exit_code = status != -1 && WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  r.out = read_text(out);
  r.err = read_text(err);
  return r;
}

/// Runs `stepgate ARGS` (ARGS already quoted where needed) in `working_dir`.
inline CliResult stepgate(const std::string& args, const fs::path& working_dir, fs::path capture_dir = {}) {
  return run_command_line(quoted(stepgate_binary()) + " " + args, working_dir, std::move(capture_dir));
}

/// A fresh, empty directory under the system temp dir, removed with everything in it when
/// the object goes out of scope.
class TempDir {
 public:
  explicit TempDir(const std::string& label) {
    static std::atomic<int> counter{0};
    const auto now = std::chrono::steady_clock::now().time_since_epoch().count();
    path_ = fs::temp_directory_path() / ("stepgate-e2e-" + label + "-" + std::to_string(::getpid()) + "-" +
                                         std::to_string(counter++) + "-" + std::to_string(now));
    fs::create_directories(path_);
  }
  ~TempDir() {
    std::error_code ignored;
    fs::remove_all(path_, ignored);
  }
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;
  const fs::path& path() const { return path_; }
  std::string str() const { return path_.string(); }
  fs::path operator/(const std::string& part) const { return path_ / part; }

 private:
  fs::path path_;
};

}  // namespace stepgate::e2e
