// A child process in a process group of its own, with its stdout and stderr read through pipes
// (POSIX). The group is what gets stopped, so grandchildren a trainer started go with it; every
// child is reaped. A descendant that left the group (setsid, a double fork) is still found: each
// child carries a tag in its environment (STEPGATE_PROCESS_TAG), which its descendants inherit,
// and every process carrying the tag is killed when the child is stopped or has exited. Only a
// descendant that clears its environment escapes this. Not thread-safe per object; many
// objects may live on many threads.
#pragma once
#include <chrono>
#include <map>
#include <optional>
#include <string>
#include <sys/types.h>
#include <vector>

namespace stepgate {

struct ChildOptions {
  std::vector<std::string> argv;          ///< argv[0] looked up on PATH
  std::string cwd;                        ///< "" = the tool's working directory
  std::map<std::string, std::string> env; ///< added to the tool's environment
  bool pipe_stdin = false;                ///< keep a pipe to the child's stdin (serving mode)
};

/// How a child ended.
struct ChildExit {
  bool signalled = false;
  int code = 0;    ///< exit status, or the signal number when signalled
};

class ChildProcess {
 public:
  /// Starts the child. Throws ToolError when it cannot be started at all: fork or pipe failure,
  /// a working directory it cannot enter, or an argv[0] that cannot be executed (not found, not
  /// executable); the message says which, with the system's reason.
  explicit ChildProcess(const ChildOptions& options);
  ~ChildProcess();  ///< kills the group (SIGKILL) and reaps the child if still running
  ChildProcess(const ChildProcess&) = delete;
  ChildProcess& operator=(const ChildProcess&) = delete;

  /// Waits up to `timeout` for output; appends complete stdout lines (without '\n') to `lines`.
  /// Returns false once stdout is closed and drained (the child closed it, or it and every
  /// process holding the pipe exited); then it only waits. A closed stdout does not mean the
  /// child has ended: see exited().
  bool read_lines(std::vector<std::string>& lines, std::chrono::milliseconds timeout);
  /// The child's exit, without waiting (reaps it when it has exited); nullopt while it runs.
  /// A run ends when its process exits, even if a grandchild still holds the pipe open.
  std::optional<ChildExit> exited();
  /// After exited(): appends what stdout holds now, without waiting for more (a last line
  /// without '\n' included). Bounded by `max_bytes`.
  void read_rest(std::vector<std::string>& lines, long max_bytes);
  /// Writes text to the child's stdin (serving mode); false when the pipe is closed.
  bool write(const std::string& text);
  void close_stdin();
  /// SIGTERM to the group, then SIGKILL after `grace` seconds if the child has not exited;
  /// always SIGKILL to the group at the end (leftover grandchildren). Reaps the child.
  ChildExit stop(double grace);
  /// Waits for the child to exit, then SIGKILLs what is left of its group and its tagged
  /// descendants.
  ChildExit wait();
  /// Bytes read so far from stdout and stderr together.
  long bytes_read() const { return bytes_; }
  /// The last lines of stderr (at most 20 lines, 4 kB).
  std::string stderr_tail() const;
  pid_t pid() const { return pid_; }

 private:
  void drain_stderr();
  /// Reads what stderr still holds, waiting up to `wait_ms` for each further chunk.
  void drain_stderr_for(int wait_ms);
  std::optional<ChildExit> try_reap(bool block);
  /// SIGKILL to the group and to every process carrying this child's tag; reaps those that
  /// became the tool's children.
  void end_descendants();
  void take_output(const char* buf, std::size_t got, std::vector<std::string>& lines);
  pid_t pid_ = -1;
  std::string tag_;  ///< this child's STEPGATE_PROCESS_TAG value
  int out_ = -1, err_ = -1, in_ = -1;
  std::string partial_, err_text_;
  long bytes_ = 0;
  std::optional<ChildExit> exit_;
};

}  // namespace stepgate
