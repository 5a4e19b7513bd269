#include "stepgate/core/output_files.hpp"

#include <dirent.h>
#include <fcntl.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include <csignal>
#include <cstdlib>
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
    if (S_ISREG(st.st_mode)) {
      // Never onto a file this command reads (the suite, a data set, the results or baseline
      // being reported): compared by device and inode, so hard links and symlinks are seen.
      if (const std::string input = input_path_of(st.st_dev, st.st_ino); !input.empty())
        throw InputError(place(where, path),
                         fmt::format("{}is the file this command reads as {}; an output is never written onto an "
                                     "input: choose another path",
                                     p.string() == path ? "" : "links to " + p.string() + ", which ", input));
      return p.string();
    }
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

namespace {

// Test hook (tests/catalogue, e2e): STEPGATE_TEST_KILL_IN_COMMIT=N kills the process with
// SIGKILL after N renames of a commit of several files, as a power cut or `kill -9` would.
long kill_after_renames() {
  const char* v = std::getenv("STEPGATE_TEST_KILL_IN_COMMIT");
  if (v == nullptr || *v == '\0') return -1;
  char* end = nullptr;
  const long n = std::strtol(v, &end, 10);
  return *end == '\0' && n >= 0 ? n : -1;
}

bool same_folder(const fs::path& a, const fs::path& b) {
  std::error_code ec;
  return fs::equivalent(a, b, ec) || fs::absolute(a).lexically_normal() == fs::absolute(b).lexically_normal();
}

// Writes the manifest into `dir` under a staged name and renames it into place.
void place_manifest(const fs::path& dir, const std::string& text) {
  const fs::path manifest = dir / kManifest;
  const std::string temp = (dir / fmt::format("{}.staged-{}", kManifest, ::getpid())).string();
  write_whole_file(temp, text, 0644, temp);
  if (::rename(temp.c_str(), manifest.c_str()) != 0) {
    const int error = errno;
    ::unlink(temp.c_str());
    throw ToolError(fmt::format("cannot commit the outputs in {}: {}", dir.string(), std::strerror(error)));
  }
  fsync_folder(dir);
}

}  // namespace

std::vector<std::string> OutputSet::commit() {
  const bool several = staged_.size() > 1;
  // The manifest goes into the set's folder (the commit point) and a copy into every other
  // folder a target is in, so that a reader of any file of the set sees an unfinished commit.
  std::vector<fs::path> folders{fs::path(manifest_dir_)};
  if (several) {
    for (const auto& [staged, target] : staged_) {
      fs::path folder = fs::path(target).parent_path();
      if (folder.empty()) folder = ".";
      bool known = false;
      for (const fs::path& f : folders) known = known || same_folder(f, folder);
      if (!known) folders.push_back(folder);
    }
    nlohmann::json renames = nlohmann::json::array(), listed = nlohmann::json::array();
    for (const auto& [staged, target] : staged_)
      renames.push_back({fs::absolute(staged).string(), fs::absolute(target).string()});
    for (const fs::path& f : folders) listed.push_back(fs::absolute(f).lexically_normal().string());
    const std::string text = nlohmann::json{{"renames", renames}, {"folders", listed}}.dump() + "\n";
    place_manifest(folders.front(), text);  // the commit point: from here on the set is finished, if need be by a reader
    for (std::size_t i = 1; i < folders.size(); ++i) place_manifest(folders[i], text);
  }
  committed_ = true;
  const long kill_after = several ? kill_after_renames() : -1;
  long renamed = 0;
  for (const auto& [staged, target] : staged_) {
    if (renamed++ == kill_after) ::kill(::getpid(), SIGKILL);
    if (::rename(staged.c_str(), target.c_str()) != 0)
      throw ToolError(fmt::format("cannot rename {} to {}: {}", staged, target, std::strerror(errno)));
    fsync_folder(fs::path(target).parent_path());
  }
  if (several)  // the copies first, the commit point's manifest last
    for (std::size_t i = folders.size(); i-- > 0;) {
      ::unlink((folders[i] / kManifest).c_str());
      fsync_folder(folders[i]);
    }
  return paths_;
}

void recover_output_folder(const std::string& dir) {
  const fs::path manifest = fs::path(dir) / kManifest;
  if (::access(manifest.c_str(), F_OK) == 0) {
    const nlohmann::json j = nlohmann::json::parse(read_input_file(manifest.string(), ReadAs::previous_output), nullptr, false);
    if (j.is_object() && j.contains("renames") && j["renames"].is_array())
      for (const nlohmann::json& r : j["renames"])
        if (r.is_array() && r.size() == 2 && r[0].is_string() && r[1].is_string()) {
          const std::string staged = r[0].get<std::string>(), target = r[1].get<std::string>();
          if (::access(staged.c_str(), F_OK) == 0 && ::rename(staged.c_str(), target.c_str()) != 0)
            throw ToolError(fmt::format("cannot finish an interrupted commit ({} to {}): {}", staged, target,
                                        std::strerror(errno)));
        }
    // The copies in the set's other folders, then this one.
    if (j.is_object() && j.contains("folders") && j["folders"].is_array())
      for (const nlohmann::json& f : j["folders"])
        if (f.is_string() && !same_folder(f.get<std::string>(), dir)) {
          const fs::path copy = fs::path(f.get<std::string>()) / kManifest;
          ::unlink(copy.c_str());
          fsync_folder(copy.parent_path());
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

void finish_interrupted_commit(const std::string& path) {
  std::vector<fs::path> dirs{fs::path(path).parent_path()};
  std::error_code ec;
  if (const fs::path real = fs::canonical(path, ec); !ec) dirs.push_back(real.parent_path());
  for (fs::path& dir : dirs) {
    if (dir.empty()) dir = ".";
    if (::access((dir / kManifest).c_str(), F_OK) != 0) continue;
    const int fd = ::open(dir.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
    if (fd < 0) throw InputError(path, fmt::format("its folder holds an unfinished commit of outputs that cannot be "
                                                   "finished ({}); expected a whole set", std::strerror(errno)));
    // A writer holds the folder's lock while it commits (milliseconds); a killed one holds nothing.
    bool finished = false;
    for (int attempt = 0; attempt < 100 && !finished; ++attempt) {
      if (::access((dir / kManifest).c_str(), F_OK) != 0) {
        finished = true;
      } else if (::flock(fd, LOCK_EX | LOCK_NB) == 0) {
        try {
          recover_output_folder(dir.string());
        } catch (const std::exception& e) {
          ::close(fd);
          throw InputError(path, fmt::format("its folder holds a commit of outputs that was interrupted between its "
                                             "renames, and it cannot be finished: {}", e.what()));
        }
        finished = true;
      } else {
        ::usleep(50'000);
      }
    }
    ::close(fd);  // releases the lock
    if (!finished)
      throw InputError(path, fmt::format("another stepgate process has been committing outputs in {} for 5 s; try "
                                         "again when it has finished", dir.string()));
  }
}

OutputFolder::OutputFolder(const std::string& dir, const std::string& where) : dir_(dir.empty() ? "." : dir) {
  std::error_code ec;
  const std::string at = place(where, dir_);
  if (struct stat st {}; ::stat(dir_.c_str(), &st) == 0 && !S_ISDIR(st.st_mode))
    throw InputError(at, fmt::format("is {}; expected a folder for the outputs", file_kind(st.st_mode)));
  created_ = fs::create_directories(dir_, ec);
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

OutputFolder::OutputFolder(OutputFolder&& other) noexcept : dir_(std::move(other.dir_)), fd_(other.fd_), created_(other.created_) {
  other.fd_ = -1;
  other.created_ = false;
}

OutputFolder& OutputFolder::operator=(OutputFolder&& other) noexcept {
  if (this != &other) {
    if (fd_ >= 0) ::close(fd_);
    dir_ = std::move(other.dir_);
    fd_ = other.fd_;
    created_ = other.created_;
    other.fd_ = -1;
    other.created_ = false;
  }
  return *this;
}

OutputFolder::~OutputFolder() {
  if (fd_ >= 0) ::close(fd_);  // closing the descriptor releases the flock
  // A folder made for a command that then wrote nothing (bad input found later) is not left
  // behind; rmdir removes only an empty folder.
  if (created_) ::rmdir(dir_.c_str());
}

void write_file_committed(const std::string& path, const std::string& text) {
  const fs::path target(output_target(path));
  OutputSet set(target.parent_path().string());
  set.stage(path, text);
  set.commit();
}

}  // namespace stepgate
