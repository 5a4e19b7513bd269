#include "stepgate/core/output_files.hpp"

#include <dirent.h>
#include <fcntl.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <filesystem>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "stepgate/core/error.hpp"
#include "stepgate/core/input_file.hpp"

namespace stepgate {

namespace fs = std::filesystem;

namespace {

constexpr const char* kManifest = ".stepgate-commit";
constexpr int kMaxLinks = 40;  // as the kernel's own limit on nested symlinks

std::string place(const std::string& where, const std::string& path) {
  return where.empty() ? path : where + " " + path;
}

void fsync_folder(const fs::path& dir) {
  const int fd = ::open(dir.empty() ? "." : dir.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (fd < 0) return;  // the rename itself succeeded; durability of the entry is best effort here
  ::fsync(fd);
  ::close(fd);
}

// ".NAME.staged-PID" (ours) or "NAME.tmp-PID" (the single-file writer of earlier versions):
// the PID that left it, or 0 when the name is neither.
long leftover_pid(const std::string& name) {
  for (const char* marker : {".staged-", ".tmp-"}) {
    const auto at = name.rfind(marker);
    if (at == std::string::npos) continue;
    const std::string digits = name.substr(at + std::strlen(marker));
    if (digits.empty() || digits.size() > 9 || digits.find_first_not_of("0123456789") != std::string::npos) continue;
    return std::stol(digits);
  }
  return 0;
}

// Writes and flushes `path`; errors name `shown` (the file the user asked for).
void write_whole_file(const std::string& path, const std::string& text, mode_t mode, const std::string& shown) {
  const int fd = ::open(path.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, mode);
  if (fd < 0) throw ToolError(fmt::format("cannot write {}: {}", shown, std::strerror(errno)));
  std::size_t done = 0;
  int error = 0;
  while (done < text.size()) {
    const ssize_t n = ::write(fd, text.data() + done, text.size() - done);
    if (n < 0) {
      if (errno == EINTR) continue;
      error = errno;
      break;
    }
    done += static_cast<std::size_t>(n);
  }
  if (error == 0 && ::fsync(fd) != 0) error = errno;
  if (::close(fd) != 0 && error == 0) error = errno;
  if (error != 0) {
    ::unlink(path.c_str());
    throw ToolError(fmt::format("cannot write {}: {}", shown, std::strerror(error)));
  }
}

}  // namespace

std::string output_target(const std::string& path, const std::string& where) {
  if (path.empty()) throw InputError(where, "expected a file name, found an empty one");
  fs::path p(path);
  for (int hop = 0; hop <= kMaxLinks; ++hop) {
    struct stat st {};
    if (::lstat(p.c_str(), &st) != 0) {
      if (errno != ENOENT) throw InputError(place(where, path), fmt::format("cannot use it as an output: {}", std::strerror(errno)));
      const fs::path parent = p.parent_path();
      struct stat pst {};
      if (!parent.empty() && ::stat(parent.c_str(), &pst) == 0 && !S_ISDIR(pst.st_mode))
        throw InputError(place(where, path), fmt::format("its folder {} is {}, not a folder", parent.string(), file_kind(pst.st_mode)));
      return p.string();
    }
    if (S_ISLNK(st.st_mode)) {
      std::error_code ec;
      const fs::path link = fs::read_symlink(p, ec);
      if (ec) throw InputError(place(where, path), fmt::format("cannot read the symlink: {}", ec.message()));
      p = link.is_absolute() ? link : p.parent_path() / link;
      continue;
    }
    if (S_ISREG(st.st_mode)) return p.string();
    throw InputError(place(where, path), fmt::format("{}{}; an output must be a regular file or not exist yet",
                                                     p.string() == path ? "is " : "links to " + p.string() + ", ",
                                                     file_kind(st.st_mode)));
  }
  throw InputError(place(where, path), "too many levels of symbolic links");
}

OutputSet::OutputSet(std::string manifest_dir) : manifest_dir_(std::move(manifest_dir)) {
  if (manifest_dir_.empty()) manifest_dir_ = ".";
}

OutputSet::~OutputSet() {
  if (committed_) return;
  for (const auto& [staged, target] : staged_) ::unlink(staged.c_str());
}

void OutputSet::stage(const std::string& path, const std::string& text) {
  const fs::path target(output_target(path));
  const fs::path folder = target.parent_path();
  std::error_code ec;
  if (!folder.empty()) {
    fs::create_directories(folder, ec);
    if (ec) throw ToolError(fmt::format("cannot create the folder of {}: {}", path, ec.message()));
  }
  // Keep the permissions of a file being replaced; new files get 0666 less the umask.
  mode_t mode = 0666;
  if (struct stat st {}; ::stat(target.c_str(), &st) == 0) mode = st.st_mode & 07777;
  const fs::path staged = folder / fmt::format(".{}.staged-{}", target.filename().string(), ::getpid());
  write_whole_file(staged.string(), text, mode, path);
  if (mode != 0666) ::chmod(staged.c_str(), mode);
  staged_.emplace_back(staged.string(), target.string());
  paths_.push_back(path);
}

std::vector<std::string> OutputSet::commit() {
  const fs::path manifest = fs::path(manifest_dir_) / kManifest;
  const bool several = staged_.size() > 1;
  if (several) {
    nlohmann::json renames = nlohmann::json::array();
    for (const auto& [staged, target] : staged_)
      renames.push_back({fs::absolute(staged).string(), fs::absolute(target).string()});
    const std::string temp = (fs::path(manifest_dir_) / fmt::format("{}.staged-{}", kManifest, ::getpid())).string();
    write_whole_file(temp, nlohmann::json{{"renames", renames}}.dump() + "\n", 0644, temp);
    if (::rename(temp.c_str(), manifest.c_str()) != 0) {
      const int error = errno;
      ::unlink(temp.c_str());
      throw ToolError(fmt::format("cannot commit the outputs in {}: {}", manifest_dir_, std::strerror(error)));
    }
    fsync_folder(manifest_dir_);  // the commit point: from here on the set is finished, if need be by the next run
  }
  committed_ = true;
  for (const auto& [staged, target] : staged_) {
    if (::rename(staged.c_str(), target.c_str()) != 0)
      throw ToolError(fmt::format("cannot rename {} to {}: {}", staged, target, std::strerror(errno)));
    fsync_folder(fs::path(target).parent_path());
  }
  if (several) {
    ::unlink(manifest.c_str());
    fsync_folder(manifest_dir_);
  }
  return paths_;
}

void recover_output_folder(const std::string& dir) {
  const fs::path manifest = fs::path(dir) / kManifest;
  if (::access(manifest.c_str(), F_OK) == 0) {
    const nlohmann::json j = nlohmann::json::parse(read_input_file(manifest.string()), nullptr, false);
    if (j.is_object() && j.contains("renames") && j["renames"].is_array())
      for (const nlohmann::json& r : j["renames"])
        if (r.is_array() && r.size() == 2 && r[0].is_string() && r[1].is_string()) {
          const std::string staged = r[0].get<std::string>(), target = r[1].get<std::string>();
          if (::access(staged.c_str(), F_OK) == 0 && ::rename(staged.c_str(), target.c_str()) != 0)
            throw ToolError(fmt::format("cannot finish an interrupted commit ({} to {}): {}", staged, target,
                                        std::strerror(errno)));
        }
    ::unlink(manifest.c_str());
    fsync_folder(dir);
  }
  std::error_code ec;
  for (const fs::directory_entry& e : fs::directory_iterator(dir, ec)) {
    const long pid = leftover_pid(e.path().filename().string());
    // Under the folder's lock no other stepgate process is writing here: what is left is stale.
    if (pid != 0 && pid != ::getpid() && e.is_regular_file(ec)) fs::remove(e.path(), ec);
  }
}

OutputFolder::OutputFolder(const std::string& dir, const std::string& where) : dir_(dir.empty() ? "." : dir) {
  std::error_code ec;
  const std::string at = place(where, dir_);
  if (struct stat st {}; ::stat(dir_.c_str(), &st) == 0 && !S_ISDIR(st.st_mode))
    throw InputError(at, fmt::format("is {}; expected a folder for the outputs", file_kind(st.st_mode)));
  fs::create_directories(dir_, ec);
  if (ec) throw InputError(at, fmt::format("cannot create the output folder: {}", ec.message()));
  fd_ = ::open(dir_.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (fd_ < 0) throw InputError(at, fmt::format("cannot open the output folder: {}", std::strerror(errno)));
  if (::flock(fd_, LOCK_EX | LOCK_NB) != 0) {
    const int error = errno;
    ::close(fd_);
    fd_ = -1;
    if (error == EWOULDBLOCK)
      throw InputError(at, "another stepgate process is writing to this folder; wait for it to finish or choose another folder");
    throw InputError(at, fmt::format("cannot lock the output folder: {}", std::strerror(error)));
  }
  // Try a write now: a read-only or pseudo file system is found before any work is done.
  const std::string probe = (fs::path(dir_) / fmt::format(".stepgate-probe.staged-{}", ::getpid())).string();
  const int fd = ::open(probe.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0600);
  if (fd < 0 || ::write(fd, "x", 1) != 1) {
    const int error = errno;
    if (fd >= 0) ::close(fd), ::unlink(probe.c_str());
    ::close(fd_);
    fd_ = -1;
    throw InputError(at, fmt::format("cannot write into the output folder: {}", std::strerror(error)));
  }
  ::close(fd);
  ::unlink(probe.c_str());
  recover_output_folder(dir_);
}

OutputFolder::OutputFolder(OutputFolder&& other) noexcept : dir_(std::move(other.dir_)), fd_(other.fd_) { other.fd_ = -1; }

OutputFolder& OutputFolder::operator=(OutputFolder&& other) noexcept {
  if (this != &other) {
    if (fd_ >= 0) ::close(fd_);
    dir_ = std::move(other.dir_);
    fd_ = other.fd_;
    other.fd_ = -1;
  }
  return *this;
}

OutputFolder::~OutputFolder() {
  if (fd_ >= 0) ::close(fd_);  // closing the descriptor releases the flock
}

void write_file_committed(const std::string& path, const std::string& text) {
  const fs::path target(output_target(path));
  OutputSet set(target.parent_path().string());
  set.stage(path, text);
  set.commit();
}

}  // namespace stepgate
