// Helpers shared by the data tests (test_data.cpp, test_data_scaling.cpp): temporary files
// under the build directory, gzip writing, and running Python as an outside reference.
#pragma once
#include <zlib.h>

#include <catch2/catch.hpp>
#include <cstdint>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <functional>
#include <string>
#include <vector>

namespace data_test {

namespace fs = std::filesystem;

inline std::string temp_path(const std::string& file) {
  const fs::path dir = fs::path(STEPGATE_BINARY_DIR) / "test_data_tmp";
  fs::create_directories(dir);
  return (dir / file).string();
}

inline void write_file(const std::string& path, const std::string& bytes) {
  std::ofstream(path, std::ios::binary) << bytes;
}

inline void write_gzip(const std::string& path, const std::string& bytes) {
  gzFile gz = gzopen(path.c_str(), "wb");
  REQUIRE(gz != nullptr);
  REQUIRE(gzwrite(gz, bytes.data(), static_cast<unsigned>(bytes.size())) == int(bytes.size()));
  REQUIRE(gzclose(gz) == Z_OK);
}

// Runs /usr/bin/python3 on a script file with arguments; its stdout, or "" when Python is
// missing or the script fails.
inline std::string run_python_file(const std::string& path, const std::string& args = "") {
  if (!fs::exists("/usr/bin/python3")) return "";
  std::FILE* pipe = popen(("/usr/bin/python3 " + path + (args.empty() ? "" : " " + args) + " 2>/dev/null").c_str(), "r");
  if (!pipe) return "";
  std::string out;
  char block[4096];
  std::size_t got;
  while ((got = std::fread(block, 1, sizeof block, pipe)) > 0) out.append(block, got);
  return pclose(pipe) == 0 ? out : "";
}

// Runs /usr/bin/python3 on a script; "" when Python or the module is unavailable.
inline std::string run_python(const std::string& script) {
  if (!fs::exists("/usr/bin/python3")) return "";
  // One file per script, so that tests run in parallel by ctest do not overwrite each other's.
  const std::string path = temp_path("reference-" + std::to_string(std::hash<std::string>{}(script)) + ".py");
  write_file(path, script);
  return run_python_file(path);
}

inline std::string idx_bytes(std::uint32_t magic, const std::vector<std::uint32_t>& dims,
                      const std::string& payload) {
  std::string bytes;
  auto put = [&](std::uint32_t v) {
    for (int shift = 24; shift >= 0; shift -= 8) bytes += char((v >> shift) & 0xff);
  };
  put(magic);
  for (std::uint32_t d : dims) put(d);
  return bytes + payload;
}

}  // namespace data_test
