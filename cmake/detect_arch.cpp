// Prints the best x86-64 micro-architecture level this machine runs (CMake's STEPGATE_ARCH=auto).
#include <cstdio>
int main() {
#if defined(__x86_64__)
  __builtin_cpu_init();
  const bool v2 = __builtin_cpu_supports("sse4.2") && __builtin_cpu_supports("popcnt");
  const bool v3 = v2 && __builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma") &&
                  __builtin_cpu_supports("bmi2");
  const bool v4 = v3 && __builtin_cpu_supports("avx512f") && __builtin_cpu_supports("avx512dq") &&
                  __builtin_cpu_supports("avx512bw") && __builtin_cpu_supports("avx512vl");
  std::puts(v4 ? "v4" : v3 ? "v3" : v2 ? "v2" : "portable");
#else
  std::puts("portable");
#endif
}
