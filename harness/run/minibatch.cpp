#include "stepgate/run/minibatch.hpp"

#include <algorithm>
#include <numeric>
#include <string_view>

#include "stepgate/core/seed.hpp"

namespace stepgate {

namespace {

// A uniform draw from 0..bound-1 by rejection: std::uniform_int_distribution's use of the engine
// is implementation-defined, this is the same on every standard library.
Index uniform_below(std::mt19937_64& rng, Index bound) {
  const std::uint64_t b = static_cast<std::uint64_t>(bound);
  const std::uint64_t limit = UINT64_MAX - UINT64_MAX % b;
  std::uint64_t r;
  do r = rng(); while (r >= limit);
  return static_cast<Index>(r % b);
}

}  // namespace

MiniBatches::MiniBatches(Index samples, Index batch_size, std::uint64_t seed, BatchSampling sampling)
    : samples_(samples), batch_(std::clamp<Index>(batch_size, 1, std::max<Index>(samples, 1))),
      seed_(seed), sampling_(sampling), order_(static_cast<std::size_t>(samples)) {
  std::iota(order_.begin(), order_.end(), Index{0});
  if (sampling_ == BatchSampling::epochs) {
    shuffle();
  } else {
    rng_.seed(derive_seed({seed_, std::string_view(to_string(sampling_))}));
    if (sampling_ == BatchSampling::replacement) order_.resize(static_cast<std::size_t>(batch_));
  }
}

void MiniBatches::shuffle() {
  std::iota(order_.begin(), order_.end(), Index{0});
  // Fisher–Yates with our own bounded draw.
  std::mt19937_64 rng(derive_seed({seed_, std::string_view("epoch"), epoch_}));
  for (Index i = samples_ - 1; i > 0; --i) std::swap(order_[i], order_[uniform_below(rng, i + 1)]);
  pos_ = 0;
}

std::span<const Index> MiniBatches::next() {
  if (samples_ == 0) return {};
  switch (sampling_) {
    case BatchSampling::independent:
      // The first b steps of a Fisher–Yates shuffle of the current order: a uniform b-subset
      // whatever the order left by earlier steps, and drawn with fresh numbers.
      for (Index i = 0; i < batch_; ++i) std::swap(order_[i], order_[i + uniform_below(rng_, samples_ - i)]);
      return {order_.data(), static_cast<std::size_t>(batch_)};
    case BatchSampling::replacement:
      for (Index& row : order_) row = uniform_below(rng_, samples_);
      return {order_.data(), static_cast<std::size_t>(batch_)};
    case BatchSampling::epochs: break;
  }
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
