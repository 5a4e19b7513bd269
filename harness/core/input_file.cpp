#include "stepgate/core/input_file.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <mutex>
#include <vector>

#include <fmt/format.h>

#include "stepgate/core/error.hpp"

namespace stepgate {

namespace {

// The file's type, or an InputError naming what is wrong with it.
mode_t checked_mode(const std::string& path) {
  if (path.empty()) throw InputError("", "expected a file name, found an empty one");
  struct stat st {};
  if (::stat(path.c_str(), &st) != 0) throw InputError(path, fmt::format("cannot read the file: {}", std::strerror(errno)));
  if (!S_ISREG(st.st_mode))
    throw InputError(path, fmt::format("is {}; expected a regular file", file_kind(st.st_mode)));
  return st.st_mode;
}

struct RememberedInput {
  dev_t dev;
  ino_t ino;
  std::string path;
};

std::mutex inputs_mutex;
int scope_depth = 0;  // CommandInputs alive (under inputs_mutex)
std::vector<RememberedInput>& remembered_inputs() {
  static std::vector<RememberedInput> inputs;
  return inputs;
}

}  // namespace

CommandInputs::CommandInputs() {
  const std::lock_guard lock(inputs_mutex);
  ++scope_depth;
}

CommandInputs::~CommandInputs() {
  const std::lock_guard lock(inputs_mutex);
  if (--scope_depth == 0) remembered_inputs().clear();
}

void remember_input(const std::string& path) {
  struct stat st {};
  if (path.empty() || ::stat(path.c_str(), &st) != 0) return;
  const std::lock_guard lock(inputs_mutex);
  if (scope_depth == 0) return;
  for (const RememberedInput& r : remembered_inputs())
    if (r.dev == st.st_dev && r.ino == st.st_ino && r.path == path) return;
  remembered_inputs().push_back({st.st_dev, st.st_ino, path});
}

std::string input_path_of(unsigned long dev, unsigned long ino) {
  const std::lock_guard lock(inputs_mutex);
  for (const RememberedInput& r : remembered_inputs()) {
    if (r.dev != dev || r.ino != ino) continue;
    struct stat st {};
    if (::stat(r.path.c_str(), &st) == 0 && st.st_dev == r.dev && st.st_ino == r.ino) return r.path;
  }
  return "";
}

std::string file_kind(unsigned mode) {
  if (S_ISDIR(mode)) return "a directory";
  if (S_ISCHR(mode)) return "a character device";
  if (S_ISBLK(mode)) return "a block device";
  if (S_ISFIFO(mode)) return "a fifo";
  if (S_ISSOCK(mode)) return "a socket";
  if (S_ISREG(mode)) return "a regular file";
  return "not a regular file";
}

void check_input_file(const std::string& path) {
  checked_mode(path);
  remember_input(path);
}

std::string read_input_file(const std::string& path, ReadAs as) {
  const mode_t mode = checked_mode(path);
  if (as == ReadAs::input) remember_input(path);
  const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) throw InputError(path, fmt::format("cannot read the file: {}", std::strerror(errno)));
  std::string content;
  if (struct stat st {}; S_ISREG(mode) && ::fstat(fd, &st) == 0) content.reserve(static_cast<std::size_t>(st.st_size));
  char block[1 << 16];
  for (;;) {
    const ssize_t got = ::read(fd, block, sizeof block);
    if (got < 0) {
      if (errno == EINTR) continue;
      const int error = errno;
      ::close(fd);
      throw InputError(path, fmt::format("cannot read the file: {}", std::strerror(error)));
    }
    if (got == 0) break;
    content.append(block, static_cast<std::size_t>(got));
    if (!S_ISREG(mode) && content.size() > kMaxPipeBytes) {
      ::close(fd);
      throw InputError(path, fmt::format("read more than {} bytes from this pipe; expected a file", kMaxPipeBytes));
    }
  }
  ::close(fd);
  return content;
}

}  // namespace stepgate
