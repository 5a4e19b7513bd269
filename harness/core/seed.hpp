// Seeds derived from a run's coordinates, never from time or thread: the same coordinates
// give the same stream on every machine and with any number of jobs.
#pragma once
#include <cstdint>
#include <initializer_list>
#include <string_view>
#include <variant>

namespace stepgate {

/// One coordinate of a run: a name (case id, purpose such as "shuffle") or a number (seed index).
using SeedPart = std::variant<std::string_view, std::uint64_t>;

/// SplitMix64 finaliser (Steele, Lea & Flood 2014): a bijective 64-bit mixer.
std::uint64_t splitmix64(std::uint64_t x);

/// Combines the parts in order (FNV-1a over strings, SplitMix64 between parts).
std::uint64_t derive_seed(std::initializer_list<SeedPart> parts);

}  // namespace stepgate
