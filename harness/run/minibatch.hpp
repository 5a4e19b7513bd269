// Mini-batches drawn without replacement: each epoch is a fresh permutation of the samples,
// seeded by (run seed, epoch), cut into consecutive batches (the last one may be smaller).
#pragma once
#include <cstdint>
#include <span>
#include <vector>

#include "stepgate/core/types.hpp"

namespace stepgate {

class MiniBatches {
 public:
  MiniBatches(Index samples, Index batch_size, std::uint64_t seed);
  /// The rows of the next batch (valid until the next call).
  std::span<const Index> next();
  Index batches_per_epoch() const { return (samples_ + batch_ - 1) / batch_; }

 private:
  void shuffle();
  Index samples_, batch_;
  std::uint64_t seed_;
  std::uint64_t epoch_ = 0;
  Index pos_ = 0;
  std::vector<Index> order_;
};

}  // namespace stepgate
