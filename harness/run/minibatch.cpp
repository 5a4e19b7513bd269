#include "stepgate/run/minibatch.hpp"

#include <algorithm>
#include <numeric>
#include <random>

#include "stepgate/core/seed.hpp"

namespace stepgate {

MiniBatches::MiniBatches(Index samples, Index batch_size, std::uint64_t seed)
    : samples_(samples), batch_(std::clamp<Index>(batch_size, 1, std::max<Index>(samples, 1))),
      seed_(seed), order_(static_cast<std::size_t>(samples)) {
  shuffle();
}

void MiniBatches::shuffle() {
  std::iota(order_.begin(), order_.end(), Index{0});
  // Fisher–Yates with our own bounded draw: std::shuffle's use of the engine is
  // implementation-defined, this is the same on every standard library.
  std::mt19937_64 rng(derive_seed({seed_, std::string_view("epoch"), epoch_}));
  for (Index i = samples_ - 1; i > 0; --i) {
    const std::uint64_t bound = static_cast<std::uint64_t>(i) + 1;
    const std::uint64_t limit = UINT64_MAX - UINT64_MAX % bound;
    std::uint64_t r;
    do r = rng(); while (r >= limit);
    std::swap(order_[i], order_[static_cast<Index>(r % bound)]);
  }
  pos_ = 0;
}

std::span<const Index> MiniBatches::next() {
  if (pos_ >= samples_) {
    ++epoch_;
    shuffle();
  }
  const Index len = std::min(batch_, samples_ - pos_);
  std::span<const Index> out(order_.data() + pos_, static_cast<std::size_t>(len));
  pos_ += len;
  return out;
}

}  // namespace stepgate
