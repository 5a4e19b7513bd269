// Times optimizer steps on batched lanes and counts heap allocations inside step().
// Prints ns per lane-parameter update; exits 1 if any step allocated.
#include <chrono>
#include <cstdio>
#include <cstdlib>

#include "stepgate/optimizers/optimizer.hpp"

// Eigen allocates with std::malloc, not operator new, so malloc itself is counted: glibc lets a
// program interpose malloc and forward to its __libc_* entry points. Elsewhere nothing is counted.
namespace {
long g_allocations = 0;  // single-threaded program
}
#if defined(__GLIBC__)
extern "C" {
void* __libc_malloc(std::size_t);
void* __libc_calloc(std::size_t, std::size_t);
void* __libc_realloc(void*, std::size_t);
void* malloc(std::size_t n) noexcept {
  ++g_allocations;
  return __libc_malloc(n);
}
void* calloc(std::size_t n, std::size_t size) noexcept {
  ++g_allocations;
  return __libc_calloc(n, size);
}
void* realloc(void* p, std::size_t n) noexcept {
  ++g_allocations;
  return __libc_realloc(p, n);
}
}
constexpr bool kCounting = true;
#else
constexpr bool kCounting = false;
#endif

namespace {

using namespace stepgate;

struct Result {
  double ns_per_update;
  long allocations;
  double checksum;  // keeps the work observable
};

Result time_steps(OptimizerKind kind, Index p, Index lanes, int steps) {
  OptimizerSpec spec;
  spec.kind = kind;
  if (kind == OptimizerKind::sgd) spec.batch_size = 1;
  auto opt = make_optimizer(spec);
  opt->reset(p, lanes);
  Mat P = Mat::Zero(p, lanes);
  Mat G(p, lanes);
  for (Index k = 0; k < lanes; ++k)
    for (Index i = 0; i < p; ++i) G(i, k) = 1e-3 * static_cast<double>((i * 7 + k * 3) % 11 - 5);
  Vec rates(lanes);
  for (Index k = 0; k < lanes; ++k) rates(k) = 1e-4 * static_cast<double>(k + 1);

  opt->step(P, G, rates);  // warm the caches
  const long before = g_allocations;
  const auto start = std::chrono::steady_clock::now();
  for (int s = 0; s < steps; ++s) opt->step(P, G, rates);
  const auto stop = std::chrono::steady_clock::now();
  const long allocations = g_allocations - before;
  const double ns = std::chrono::duration<double, std::nano>(stop - start).count();
  return {ns / (static_cast<double>(steps) * static_cast<double>(p * lanes)), allocations,
          P.sum()};
}

}  // namespace

int main() {
  const Index p = 1000, lanes = 8;
  const int steps = 10000;
  std::printf("optimizer step, p = %ld, K = %ld, %d steps\n", static_cast<long>(p),
              static_cast<long>(lanes), steps);
  if (!kCounting) std::printf("(allocations are not counted on this platform)\n");
  std::printf("%-10s %22s %12s %14s\n", "optimizer", "ns/lane-param update", "allocations",
              "checksum");
  bool allocated = false;
  for (OptimizerKind kind : {OptimizerKind::gd, OptimizerKind::momentum, OptimizerKind::nesterov,
                             OptimizerKind::adagrad, OptimizerKind::rmsprop, OptimizerKind::adam}) {
    const Result r = time_steps(kind, p, lanes, steps);
    std::printf("%-10s %22.3f %12ld %14.6g\n", std::string(to_string(kind)).c_str(),
                r.ns_per_update, r.allocations, r.checksum);
    allocated = allocated || r.allocations != 0;
  }
  return allocated ? 1 : 0;
}
