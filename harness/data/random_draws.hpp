// Random draws that are the same bits with every standard library: std::mt19937_64 is fully
// specified by the standard, but std::uniform_real_distribution and std::normal_distribution
// are not, so uniforms and normals are computed here by hand from the raw 64-bit output.
// (std::log, std::cos and std::sin come from the C library; glibc's are correctly rounded in
// practice, other C libraries may differ in the last bit.)
#pragma once
#include <cmath>
#include <cstdint>
#include <random>

namespace stepgate {

/// Uniform on [0, 1): the top 53 bits of one draw.
inline double uniform01(std::mt19937_64& rng) {
  return static_cast<double>(rng() >> 11) * 0x1.0p-53;
}

/// Standard normal draws by the Box–Muller transform (Box & Muller 1958): each pair of
/// uniforms gives two normals; the second is kept for the next call.
class NormalDraws {
 public:
  explicit NormalDraws(std::uint64_t seed) : rng_(seed) {}

  double next() {
    if (has_spare_) {
      has_spare_ = false;
      return spare_;
    }
    const double u1 = 1.0 - uniform01(rng_);  // (0, 1]: log(u1) is finite
    const double u2 = uniform01(rng_);
    const double radius = std::sqrt(-2.0 * std::log(u1));
    const double angle = 6.283185307179586476925286766559 * u2;
    spare_ = radius * std::sin(angle);
    has_spare_ = true;
    return radius * std::cos(angle);
  }

  /// Moves a fresh stream on by `count` normals, so that the next call returns the one a
  /// fresh stream would return after `count` calls: a long stream can be drawn in parts in
  /// parallel with the same bits. Each pair costs two raw draws and no transcendental.
  void skip(std::uint64_t count) {
    rng_.discard(2 * (count / 2));
    has_spare_ = false;
    if (count % 2 == 1) (void)next();  // the pair's first half; its spare comes next
  }

  std::mt19937_64& engine() { return rng_; }

 private:
  std::mt19937_64 rng_;
  double spare_ = 0.0;
  bool has_spare_ = false;
};

}  // namespace stepgate
