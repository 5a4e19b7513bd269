// A binary built for x86-64-v3 or -v4 (STEPGATE_ARCH) would die of SIGILL on an older CPU, at
// some unhelpful point. This check runs before main and before other static initialisers
// (constructor priority 101), and is itself compiled for the baseline x86-64 (CMakeLists.txt),
// so it can say what is missing and how to build a binary that runs here.
#include <unistd.h>

#include <cstdio>
#include <cstring>

#include "stepgate/core/error.hpp"

namespace {

#if defined(__x86_64__)
__attribute__((constructor(101))) void refuse_a_cpu_below_the_build() {
  const char* level = STEPGATE_KERNELS;
  const char* missing = nullptr;
  __builtin_cpu_init();
  const bool v4 = std::strcmp(level, "x86-64-v4") == 0;
  const bool v3 = v4 || std::strcmp(level, "x86-64-v3") == 0;
  const bool v2 = v3 || std::strcmp(level, "x86-64-v2") == 0;
  // (__builtin_cpu_supports takes string literals only, hence no table)
  if (v4 && !__builtin_cpu_supports("avx512f")) missing = "avx512f";
  else if (v4 && !__builtin_cpu_supports("avx512dq")) missing = "avx512dq";
  else if (v4 && !__builtin_cpu_supports("avx512bw")) missing = "avx512bw";
  else if (v4 && !__builtin_cpu_supports("avx512vl")) missing = "avx512vl";
  else if (v3 && !__builtin_cpu_supports("avx2")) missing = "avx2";
  else if (v3 && !__builtin_cpu_supports("fma")) missing = "fma";
  else if (v3 && !__builtin_cpu_supports("bmi2")) missing = "bmi2";
  else if (v2 && !__builtin_cpu_supports("sse4.2")) missing = "sse4.2";
  else if (v2 && !__builtin_cpu_supports("popcnt")) missing = "popcnt";
  if (!missing) return;
  std::fprintf(stderr,
               "stepgate: failure: this binary was built for %s, and this CPU lacks %s; build one for this "
               "machine with cmake -DSTEPGATE_ARCH=auto (or portable)\n",
               level, missing);
  ::_exit(stepgate::kExitToolFailure);
}
#endif

}  // namespace
