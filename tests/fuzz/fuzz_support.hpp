// Shared by the libFuzzer targets: what counts as a finding, and scratch files for readers that
// take a path. A reader may reject any input with InputError (that is its contract: exit 2 with a
// place and a reason); anything else that escapes is a finding, and so are crashes and sanitizer
// reports, which libFuzzer catches itself.
#pragma once
#include <unistd.h>

#include <cstdio>
#include <cstdlib>
#include <exception>
#include <filesystem>
#include <string>
#include <string_view>
#include <typeinfo>

#include "stepgate/core/error.hpp"

namespace stepgate::fuzz {

/// Runs `body`; InputError is an accepted answer, every other exception aborts with its type and
/// message so that libFuzzer keeps the input as a crash.
template <class Body>
void expect_input_errors(const char* target, Body&& body) {
  try {
    body();
  } catch (const InputError&) {
  } catch (const std::exception& e) {
    std::fprintf(stderr, "%s: unexpected exception %s: %s\n", target, typeid(e).name(), e.what());
    std::abort();
  } catch (...) {
    std::fprintf(stderr, "%s: unexpected exception of a non-std type\n", target);
    std::abort();
  }
}

/// A folder of this process's own (under $TMPDIR), made on first use and removed at exit.
inline const std::filesystem::path& scratch_folder() {
  static const std::filesystem::path folder = [] {
    namespace fs = std::filesystem;
    const fs::path p = fs::temp_directory_path() / ("stepgate-fuzz-" + std::to_string(::getpid()));
    fs::create_directories(p);
    std::atexit([] {
      std::error_code ec;
      fs::remove_all(scratch_folder(), ec);
    });
    return p;
  }();
  return folder;
}

/// Writes `bytes` to scratch_folder()/name (replacing it) and returns the path.
inline std::string scratch_file(const std::string& name, std::string_view bytes) {
  const std::string path = (scratch_folder() / name).string();
  std::FILE* f = std::fopen(path.c_str(), "wb");
  if (f == nullptr || std::fwrite(bytes.data(), 1, bytes.size(), f) != bytes.size() || std::fclose(f) != 0) {
    std::perror(path.c_str());  // the harness's own failure, not the reader's
    std::abort();
  }
  return path;
}

}  // namespace stepgate::fuzz
