#include "stepgate/data/file_io.hpp"

#include <zlib.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <memory>

#include "stepgate/core/error.hpp"
#include "stepgate/core/input_file.hpp"

namespace stepgate {
namespace {

struct GzClose {
  void operator()(gzFile_s* f) const { gzclose(f); }
};

bool ends_with(const std::string& s, const char* suffix) {
  const std::size_t n = std::strlen(suffix);
  return s.size() >= n && s.compare(s.size() - n, n, suffix) == 0;
}

}  // namespace

std::string read_raw_file(const std::string& path) { return read_input_file(path); }

std::string read_gzip_file(const std::string& path) {
  check_input_file(path);
  std::unique_ptr<gzFile_s, GzClose> gz(gzopen(path.c_str(), "rb"));
  if (!gz) throw InputError(path, std::string("cannot open the file: ") + std::strerror(errno));
  std::string content;
  std::string block(1 << 16, '\0');
  int got;
  while ((got = gzread(gz.get(), block.data(), static_cast<unsigned>(block.size()))) > 0)
    content.append(block.data(), static_cast<std::size_t>(got));
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
  return ends_with(path, ".gz") ? read_gzip_file(path) : read_raw_file(path);
}

}  // namespace stepgate
