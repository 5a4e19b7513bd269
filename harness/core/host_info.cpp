// Facts about this build and this machine, recorded in results.json (never compared).
#include <sys/utsname.h>

#include <ctime>
#include <thread>

#include <Eigen/Core>
#include <fmt/format.h>

#include "stepgate/core/results.hpp"

#ifndef STEPGATE_KERNELS
#define STEPGATE_KERNELS "unknown"  // CMake defines it from STEPGATE_ARCH
#endif
#ifndef STEPGATE_VERSION
#define STEPGATE_VERSION "unknown"  // CMake defines it from project(VERSION)
#endif

namespace stepgate {

namespace {

std::string compiler_name() {
#if defined(__clang__)  // first: clang defines __GNUC__ as well
  return fmt::format("Clang {}.{}.{}", __clang_major__, __clang_minor__, __clang_patchlevel__);
#elif defined(__GNUC__)
  return fmt::format("GCC {}.{}.{}", __GNUC__, __GNUC_MINOR__, __GNUC_PATCHLEVEL__);
#else
  return "unknown compiler";
#endif
}

}  // namespace

ToolInfo this_tool() {
#ifdef NDEBUG
  const char* build = "Release";
#else
  const char* build = "Debug";
#endif
  return {STEPGATE_VERSION, compiler_name(),
          fmt::format("{}, Eigen {}.{}.{}", build, EIGEN_WORLD_VERSION, EIGEN_MAJOR_VERSION,
                      EIGEN_MINOR_VERSION)};
}

HostInfo this_host() {
  HostInfo h;
  if (utsname u{}; ::uname(&u) == 0) {
    h.os = fmt::format("{} {}", u.sysname, u.release);
    h.machine = u.machine;
    h.hostname = u.nodename;
  }
  h.cores = std::thread::hardware_concurrency();  // 0 when unknown
  h.kernels = fmt::format("{}; Eigen: {}", STEPGATE_KERNELS, Eigen::SimdInstructionSetsInUse());
  return h;
}

std::string utc_now() {
  const std::time_t now = std::time(nullptr);
  std::tm utc{};
  ::gmtime_r(&now, &utc);
  char text[32];
  const std::size_t n = std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &utc);
  return std::string(text, n);
}

}  // namespace stepgate
