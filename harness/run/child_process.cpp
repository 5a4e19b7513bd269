#include "stepgate/run/child_process.hpp"

#include <algorithm>
#include <atomic>
#include <cerrno>
#include <csignal>
#include <cstring>
#include <dirent.h>
#include <fcntl.h>
#include <poll.h>
#include <sys/prctl.h>
#include <sys/wait.h>
#include <thread>
#include <unistd.h>

#include <fmt/format.h>

#include "stepgate/core/error.hpp"

extern char** environ;

namespace stepgate {

namespace {

// Grandchildren left in a stopped group are reparented to the tool (a child subreaper) rather
// than to PID 1, which in a container may never reap them; then the tool reaps them itself.
void become_subreaper() {
  static const bool done = [] {
    ::prctl(PR_SET_CHILD_SUBREAPER, 1);
    return true;
  }();
  (void)done;
}

// Reaps what is left of a killed group (members that became the tool's children), for at most
// half a second: SIGKILL has been sent, so they are dying.
void reap_group(pid_t pgid) {
  const auto until = std::chrono::steady_clock::now() + std::chrono::milliseconds(500);
  while (std::chrono::steady_clock::now() < until) {
    int status = 0;
    const pid_t r = ::waitpid(-pgid, &status, WNOHANG);
    if (r > 0) continue;
    if (r < 0 && errno == EINTR) continue;
    if (r < 0) return;  // ECHILD: none of the group is (or will be) the tool's child any more
    if (::kill(-pgid, 0) != 0) return;  // the group is empty
    std::this_thread::sleep_for(std::chrono::milliseconds(5));
  }
}

void close_fd(int& fd) {
  if (fd >= 0) ::close(fd);
  fd = -1;
}

constexpr const char* kTagName = "STEPGATE_PROCESS_TAG";

// A tag no other child of any stepgate process shares: this process's id and a counter.
std::string new_tag() {
  static std::atomic<long> counter{0};
  return fmt::format("{}.{}", ::getpid(), counter.fetch_add(1) + 1);
}

// The processes (other than this one) whose environment holds the entry NAME=tag exactly.
// Processes of other users cannot be read and are not ours; a zombie has no environment.
std::vector<pid_t> tagged_processes(const std::string& tag) {
  const std::string entry = std::string(kTagName) + "=" + tag;
  std::vector<pid_t> found;
  DIR* proc = ::opendir("/proc");
  if (proc == nullptr) return found;
  std::string env;
  char buf[65536];
  while (const dirent* e = ::readdir(proc)) {
    char* end = nullptr;
    const long pid = std::strtol(e->d_name, &end, 10);
    if (pid <= 0 || *end != '\0' || pid == ::getpid()) continue;
    const int fd = ::open(fmt::format("/proc/{}/environ", pid).c_str(), O_RDONLY | O_CLOEXEC);
    if (fd < 0) continue;
    env.clear();
    for (ssize_t got; env.size() < (std::size_t{4} << 20) && (got = ::read(fd, buf, sizeof buf)) > 0;)
      env.append(buf, static_cast<std::size_t>(got));
    ::close(fd);
    for (std::size_t at = 0; at < env.size();) {
      const std::size_t stop = std::min(env.find('\0', at), env.size());
      if (env.compare(at, stop - at, entry) == 0) {
        found.push_back(static_cast<pid_t>(pid));
        break;
      }
      at = stop + 1;
    }
  }
  ::closedir(proc);
  return found;
}

std::vector<std::string> merged_environment(const std::map<std::string, std::string>& extra) {
  std::map<std::string, std::string> env;
  for (char** e = environ; e && *e; ++e) {
    const std::string kv(*e);
    const auto eq = kv.find('=');
    if (eq != std::string::npos) env[kv.substr(0, eq)] = kv.substr(eq + 1);
  }
  for (const auto& [k, v] : extra) env[k] = v;
  std::vector<std::string> out;
  for (const auto& [k, v] : env) out.push_back(k + "=" + v);
  return out;
}

}  // namespace

ChildProcess::ChildProcess(const ChildOptions& o) {
  if (o.argv.empty()) throw ToolError("command: empty argv");
  std::signal(SIGPIPE, SIG_IGN);  // a child that closed its stdin must not kill the tool
  become_subreaper();
  // Everything the child needs is built before fork: after it, only async-signal-safe calls.
  tag_ = new_tag();
  std::map<std::string, std::string> env = o.env;
  env[kTagName] = tag_;
  std::vector<std::string> env_strings = merged_environment(env);
  std::vector<char*> argv, envp;
  for (const std::string& a : o.argv) argv.push_back(const_cast<char*>(a.c_str()));
  argv.push_back(nullptr);
  for (std::string& e : env_strings) envp.push_back(e.data());
  envp.push_back(nullptr);
  int out[2], err[2], in[2] = {-1, -1}, status[2];
  // `status` tells the parent whether exec worked: it is closed by a successful exec (CLOEXEC)
  // and carries errno otherwise.
  if (::pipe2(out, O_CLOEXEC) != 0 || ::pipe2(err, O_CLOEXEC) != 0 || ::pipe2(status, O_CLOEXEC) != 0 ||
      (o.pipe_stdin && ::pipe2(in, O_CLOEXEC) != 0))
    throw ToolError(std::string("command: cannot create pipes: ") + std::strerror(errno));
  const std::string cwd = o.cwd;
  pid_ = ::fork();
  if (pid_ < 0) throw ToolError(std::string("command: cannot fork: ") + std::strerror(errno));
  if (pid_ == 0) {
    ::setpgid(0, 0);
    ::dup2(out[1], 1);
    ::dup2(err[1], 2);
    if (in[0] >= 0) ::dup2(in[0], 0);
    else {
      const int devnull = ::open("/dev/null", O_RDONLY);
      if (devnull >= 0) ::dup2(devnull, 0);
    }
    std::signal(SIGPIPE, SIG_DFL);
    ::close(status[0]);
    int stage = 0;  // 0: chdir failed, 1: exec failed
    if (cwd.empty() || ::chdir(cwd.c_str()) == 0) {
      stage = 1;
      ::execvpe(argv[0], argv.data(), envp.data());
    }
    const int report[2] = {stage, errno};
    (void)!::write(status[1], report, sizeof report);
    ::_exit(127);
  }
  ::close(status[1]);
  int report[2] = {0, 0};
  ssize_t got;
  do got = ::read(status[0], report, sizeof report);
  while (got < 0 && errno == EINTR);
  ::close(status[0]);
  if (got == static_cast<ssize_t>(sizeof report)) {  // the program could not be started at all
    int ignored;
    ::waitpid(pid_, &ignored, 0);
    exit_ = ChildExit{false, 127};
    ::close(out[0]), ::close(out[1]), ::close(err[0]), ::close(err[1]);
    if (in[0] >= 0) ::close(in[0]), ::close(in[1]);
    throw ToolError(report[0] == 0 ? "command: cannot enter the working directory " + cwd + ": " + std::strerror(report[1])
                                   : "command: cannot execute '" + o.argv.front() + "': " + std::strerror(report[1]));
  }
  ::setpgid(pid_, pid_);  // also here, so the group exists before either side goes on
  ::close(out[1]);
  ::close(err[1]);
  if (in[0] >= 0) ::close(in[0]);
  out_ = out[0];
  err_ = err[0];
  in_ = in[1];
}

ChildProcess::~ChildProcess() {
  if (!exit_ && pid_ > 0) {
    ::kill(-pid_, SIGKILL);
    try_reap(true);
    end_descendants();
  }
  close_fd(out_);
  close_fd(err_);
  close_fd(in_);
}

bool ChildProcess::read_lines(std::vector<std::string>& lines, std::chrono::milliseconds timeout) {
  if (out_ < 0) {  // only waiting now (for the exit, or the caller's timeout)
    if (err_ >= 0) drain_stderr_for(static_cast<int>(timeout.count()));
    else std::this_thread::sleep_for(timeout);
    return false;
  }
  pollfd fds[2] = {{out_, POLLIN, 0}, {err_, POLLIN, 0}};
  const int n = ::poll(fds, err_ >= 0 ? 2 : 1, static_cast<int>(timeout.count()));
  if (n < 0 && errno != EINTR) throw ToolError(std::string("command: poll failed: ") + std::strerror(errno));
  if (err_ >= 0 && (fds[1].revents & (POLLIN | POLLHUP))) drain_stderr();
  if (fds[0].revents & (POLLIN | POLLHUP)) {
    char buf[65536];
    const ssize_t got = ::read(out_, buf, sizeof buf);
    if (got <= 0) {
      if (!partial_.empty()) lines.push_back(std::move(partial_)), partial_.clear();
      close_fd(out_);
      return false;
    }
    take_output(buf, static_cast<std::size_t>(got), lines);
  }
  return true;
}

void ChildProcess::take_output(const char* buf, std::size_t got, std::vector<std::string>& lines) {
  bytes_ += static_cast<long>(got);
  std::size_t start = 0;
  for (std::size_t i = 0; i < got; ++i)
    if (buf[i] == '\n') {
      partial_.append(buf + start, i - start);
      lines.push_back(std::move(partial_));
      partial_.clear();
      start = i + 1;
    }
  partial_.append(buf + start, got - start);
  // A line without end counts as output too; it is bounded by the caller's size cap.
}

std::optional<ChildExit> ChildProcess::exited() { return try_reap(false); }

void ChildProcess::read_rest(std::vector<std::string>& lines, long max_bytes) {
  const long start = bytes_;
  while (out_ >= 0 && bytes_ - start <= max_bytes) {
    pollfd p{out_, POLLIN, 0};
    if (::poll(&p, 1, 0) <= 0 || !(p.revents & (POLLIN | POLLHUP))) break;  // nothing more now
    char buf[65536];
    const ssize_t got = ::read(out_, buf, sizeof buf);
    if (got <= 0) {
      close_fd(out_);
      break;
    }
    take_output(buf, static_cast<std::size_t>(got), lines);
  }
  if (!partial_.empty()) lines.push_back(std::move(partial_)), partial_.clear();
  drain_stderr_for(0);
}

void ChildProcess::drain_stderr_for(int wait_ms) {
  // At most wait_ms in all: a descendant that keeps writing to stderr cannot hold the tool here.
  const auto until = std::chrono::steady_clock::now() + std::chrono::milliseconds(wait_ms);
  while (err_ >= 0) {
    const auto left = std::chrono::duration_cast<std::chrono::milliseconds>(until - std::chrono::steady_clock::now());
    pollfd p{err_, POLLIN, 0};
    if (::poll(&p, 1, static_cast<int>(std::max<long>(0, left.count()))) <= 0) return;
    drain_stderr();
    if (left.count() <= 0) return;
  }
}

void ChildProcess::drain_stderr() {
  char buf[65536];
  const ssize_t got = ::read(err_, buf, sizeof buf);
  if (got <= 0) {
    close_fd(err_);
    return;
  }
  bytes_ += got;
  err_text_.append(buf, static_cast<std::size_t>(got));
  if (err_text_.size() > 16384) err_text_.erase(0, err_text_.size() - 8192);
}

bool ChildProcess::write(const std::string& text) {
  if (in_ < 0) return false;
  std::size_t done = 0;
  while (done < text.size()) {
    const ssize_t n = ::write(in_, text.data() + done, text.size() - done);
    if (n < 0) {
      if (errno == EINTR) continue;
      close_fd(in_);
      return false;
    }
    done += static_cast<std::size_t>(n);
  }
  return true;
}

void ChildProcess::close_stdin() { close_fd(in_); }

std::optional<ChildExit> ChildProcess::try_reap(bool block) {
  if (exit_) return exit_;
  int status = 0;
  pid_t r;
  do r = ::waitpid(pid_, &status, block ? 0 : WNOHANG);
  while (r < 0 && errno == EINTR);
  if (r != pid_) return std::nullopt;
  exit_ = WIFSIGNALED(status) ? ChildExit{true, WTERMSIG(status)} : ChildExit{false, WEXITSTATUS(status)};
  return exit_;
}

void ChildProcess::end_descendants() {
  ::kill(-pid_, SIGKILL);
  std::vector<pid_t> killed;
  for (int round = 0; round < 20; ++round) {
    const std::vector<pid_t> found = tagged_processes(tag_);
    if (found.empty()) break;
    for (pid_t p : found) {
      ::kill(p, SIGKILL);
      killed.push_back(p);
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(2));
  }
  reap_group(pid_);
  // Those that became the tool's children (orphans come to a subreaper) are reaped; for the
  // others waitpid says ECHILD at once.
  const auto until = std::chrono::steady_clock::now() + std::chrono::milliseconds(500);
  while (!killed.empty() && std::chrono::steady_clock::now() < until) {
    std::erase_if(killed, [](pid_t p) {
      int status = 0;
      const pid_t r = ::waitpid(p, &status, WNOHANG);
      return r == p || (r < 0 && errno != EINTR);
    });
    if (!killed.empty()) std::this_thread::sleep_for(std::chrono::milliseconds(2));
  }
}

ChildExit ChildProcess::stop(double grace) {
  if (!exit_) {
    ::kill(-pid_, SIGTERM);
    const auto until = std::chrono::steady_clock::now() + std::chrono::duration<double>(grace);
    while (!try_reap(false) && std::chrono::steady_clock::now() < until) {
      std::vector<std::string> ignored;
      if (out_ >= 0) read_lines(ignored, std::chrono::milliseconds(10));  // keep its pipes from filling
      else std::this_thread::sleep_for(std::chrono::milliseconds(10));
    }
  }
  ::kill(-pid_, SIGKILL);  // the child if it ignored SIGTERM, and whatever it left in its group
  try_reap(true);
  end_descendants();
  drain_stderr_for(0);
  return *exit_;
}

ChildExit ChildProcess::wait() {
  try_reap(true);
  end_descendants();
  drain_stderr_for(100);
  return *exit_;
}

std::string ChildProcess::stderr_tail() const {
  std::string t = err_text_;
  while (!t.empty() && (t.back() == '\n' || t.back() == '\r')) t.pop_back();
  std::size_t pos = t.size();
  for (int lines = 0; lines < 20 && pos > 0; ++lines) {
    const auto nl = t.rfind('\n', pos - 1);
    if (nl == std::string::npos) { pos = 0; break; }
    pos = nl;
  }
  std::string tail = t.substr(pos == 0 ? 0 : pos + 1);
  if (tail.size() > 4096) tail = tail.substr(tail.size() - 4096);
  return tail;
}

}  // namespace stepgate
