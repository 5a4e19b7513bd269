#include "stepgate/core/seed.hpp"

namespace stepgate {

std::uint64_t splitmix64(std::uint64_t x) {
  x += 0x9e3779b97f4a7c15ULL;
  x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9ULL;
  x = (x ^ (x >> 27)) * 0x94d049bb133111ebULL;
  return x ^ (x >> 31);
}

std::uint64_t derive_seed(std::initializer_list<SeedPart> parts) {
  std::uint64_t h = 0x5354455047415445ULL;  // "STEPGATE"
  for (const SeedPart& part : parts) {
    std::uint64_t v;
    if (const auto* s = std::get_if<std::string_view>(&part)) {
      v = 0xcbf29ce484222325ULL;  // FNV-1a offset basis
      for (unsigned char c : *s) v = (v ^ c) * 0x100000001b3ULL;
    } else {
      v = std::get<std::uint64_t>(part);
    }
    h = splitmix64(h ^ splitmix64(v));
  }
  return h;
}

}  // namespace stepgate
