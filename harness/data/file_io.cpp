#include "stepgate/data/file_io.hpp"

#include <fcntl.h>
#include <sys/resource.h>
#include <sys/stat.h>
#include <unistd.h>
#include <zlib.h>

#include <algorithm>
#include <functional>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <memory>

#include "stepgate/core/error.hpp"
#include "stepgate/core/input_file.hpp"

#include <fmt/format.h>

namespace stepgate {
namespace {

struct GzClose {
  void operator()(gzFile_s* f) const { gzclose(f); }
};

bool ends_with(const std::string& s, const char* suffix) {
  const std::size_t n = std::strlen(suffix);
  return s.size() >= n && s.compare(s.size() - n, n, suffix) == 0;
}

std::string gib(double bytes) { return fmt::format("{:.2f} GiB", bytes / double(1 << 30)); }

[[noreturn]] void too_large(const std::string& path, const std::string& what, double bytes) {
  throw InputError(path, fmt::format("{} {}; holding it in memory would take about {} (its text, the values parsed and "
                                     "a scaled copy), more than this machine or the process's limits allow for one "
                                     "data set (at most {} of content); expected a smaller file, or max_rows",
                                     what, gib(bytes), gib(9.0 * bytes), gib(double(max_read_bytes()))));
}

// The size a gzip file states in its trailer (the last 4 bytes: the content's length mod 2^32),
// or 0 when it cannot be read.
std::size_t gzip_stated_size(const std::string& path) {
  const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) return 0;
  unsigned char t[4] = {0, 0, 0, 0};
  const off_t end = ::lseek(fd, -4, SEEK_END);
  const bool ok = end >= 0 && ::read(fd, t, 4) == 4;
  ::close(fd);
  return ok ? std::size_t(t[0]) | std::size_t(t[1]) << 8 | std::size_t(t[2]) << 16 | std::size_t(t[3]) << 24 : 0;
}

// Reads the content (gzip when the name ends in .gz) in blocks, giving each to `take`; stops
// when `take` returns false. Caps what is read at max_read_bytes().
void read_blocks(const std::string& path, const std::function<bool(const char*, std::size_t)>& take) {
  check_input_file(path);
  const std::size_t cap = max_read_bytes();
  std::size_t total = 0;
  std::string block(1 << 16, '\0');
  if (!ends_with(path, ".gz")) {
    const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
    if (fd < 0) throw InputError(path, std::string("cannot open the file: ") + std::strerror(errno));
    for (;;) {
      const ssize_t got = ::read(fd, block.data(), block.size());
      if (got < 0 && errno == EINTR) continue;
      if (got < 0) {
        const int error = errno;
        ::close(fd);
        throw InputError(path, std::string("cannot read the file: ") + std::strerror(error));
      }
      if (got == 0) break;
      total += static_cast<std::size_t>(got);
      if (total > cap) ::close(fd), too_large(path, "holds more than", double(cap));
      if (!take(block.data(), static_cast<std::size_t>(got))) break;
    }
    ::close(fd);
    return;
  }
  std::unique_ptr<gzFile_s, GzClose> gz(gzopen(path.c_str(), "rb"));
  if (!gz) throw InputError(path, std::string("cannot open the file: ") + std::strerror(errno));
  int got;
  while ((got = gzread(gz.get(), block.data(), static_cast<unsigned>(block.size()))) > 0) {
    total += static_cast<std::size_t>(got);
    if (total > cap) too_large(path, "expands to more than", double(cap));
    if (!take(block.data(), static_cast<std::size_t>(got))) return;
  }
  int code = Z_OK;
  const char* message = gzerror(gz.get(), &code);
  if (got < 0 || (code != Z_OK && code != Z_STREAM_END))
    throw InputError(path, std::string("found a corrupt or truncated gzip stream (zlib: ") +
                               (message ? message : "unknown error") + "); expected a complete gzip file");
  if (gzdirect(gz.get()))
    throw InputError(path, "found content that is not gzip (no 1f 8b header); expected a gzip-compressed file, as the "
                           "name ends in .gz");
}

}  // namespace

std::size_t max_read_bytes() {
  double available = double(::sysconf(_SC_PHYS_PAGES)) * double(::sysconf(_SC_PAGESIZE));
  if (struct rlimit r {}; ::getrlimit(RLIMIT_AS, &r) == 0 && r.rlim_cur != RLIM_INFINITY)
    available = std::min(available, double(r.rlim_cur));
  if (!(available > 0)) available = double(std::size_t{1} << 32);
  return static_cast<std::size_t>(available / 9.0);
}

std::string read_text_lines(const std::string& path, long lines, char quote) {
  std::string content;
  long found = 0;
  bool in_quote = false, blank = true;
  read_blocks(path, [&](const char* data, std::size_t n) {
    for (std::size_t i = 0; i < n; ++i) {
      const char c = data[i];
      if (quote != '\0' && c == quote) in_quote = !in_quote;
      if (c == '\n' && !in_quote) {
        if (!blank && ++found == lines) {
          content.append(data, i + 1);
          return false;
        }
        blank = true;
      } else if (c != ' ' && c != '\t' && c != '\r') {
        blank = false;
      }
    }
    content.append(data, n);
    return true;
  });
  return content;
}

std::optional<std::size_t> stated_content_size(const std::string& path) {
  struct stat st {};
  if (::stat(path.c_str(), &st) != 0 || !S_ISREG(st.st_mode)) return std::nullopt;
  if (!ends_with(path, ".gz")) return static_cast<std::size_t>(st.st_size);
  if (st.st_size < 18) return std::nullopt;  // shorter than a gzip header and trailer
  return gzip_stated_size(path);
}

std::string read_text_prefix(const std::string& path, std::size_t bytes) {
  std::string content;
  if (bytes == 0) return content;
  read_blocks(path, [&](const char* data, std::size_t n) {
    content.append(data, std::min(n, bytes - content.size()));
    return content.size() < bytes;
  });
  return content;
}

std::string read_raw_file(const std::string& path) { return read_input_file(path); }

std::string read_gzip_file(const std::string& path) {
  check_input_file(path);
  if (const std::size_t stated = gzip_stated_size(path); stated > max_read_bytes())
    too_large(path, "states in its gzip trailer that it expands to", double(stated));
  std::unique_ptr<gzFile_s, GzClose> gz(gzopen(path.c_str(), "rb"));
  if (!gz) throw InputError(path, std::string("cannot open the file: ") + std::strerror(errno));
  std::string content;
  std::string block(1 << 16, '\0');
  int got;
  const std::size_t cap = max_read_bytes();
  while ((got = gzread(gz.get(), block.data(), static_cast<unsigned>(block.size()))) > 0) {
    content.append(block.data(), static_cast<std::size_t>(got));
    if (content.size() > cap) too_large(path, "expands to more than", double(cap));
  }
  int code = Z_OK;
  const char* message = gzerror(gz.get(), &code);
  // Z_BUF_ERROR at the end means the compressed stream was cut short.
  if (got < 0 || (code != Z_OK && code != Z_STREAM_END))
    throw InputError(path, std::string("found a corrupt or truncated gzip stream (zlib: ") +
                               (message ? message : "unknown error") +
                               "); expected a complete gzip file");
  // gzread passes non-gzip files through unchanged; a .gz name promises compression.
  if (gzdirect(gz.get()))
    throw InputError(path, "found content that is not gzip (no 1f 8b header); expected a "
                           "gzip-compressed file, as the name ends in .gz");
  return content;
}

std::string read_text_file(const std::string& path) {
  if (ends_with(path, ".gz")) return read_gzip_file(path);
  if (struct stat st {}; ::stat(path.c_str(), &st) == 0 && S_ISREG(st.st_mode) && std::size_t(st.st_size) > max_read_bytes())
    too_large(path, "is", double(st.st_size));
  return read_raw_file(path);
}

}  // namespace stepgate
