// Mini-batches of rows, drawn as OptimizerSpec::sampling says (core/optimizer_spec.hpp):
// - epochs: each epoch a fresh permutation of the samples, seeded by (run seed, epoch), cut into
//   consecutive batches (the last one may be smaller). Batches of one epoch are disjoint, so
//   successive steps are not independent.
// - independent: each step b distinct rows, uniform over all b-subsets, independent of earlier
//   steps (a partial Fisher–Yates shuffle with fresh draws).
// - replacement: each step b rows drawn uniformly with replacement, independent of earlier steps.
// Every draw comes from `seed` (the run's coordinates); the sequence of batches depends on
// nothing else, so every lane of a batch of runs sees the same batches.
#pragma once
#include <cstdint>
#include <random>
#include <span>
#include <vector>

#include "stepgate/core/optimizer_spec.hpp"
#include "stepgate/core/types.hpp"

namespace stepgate {

class MiniBatches {
 public:
  /// batch_size is clamped to 1..samples.
  MiniBatches(Index samples, Index batch_size, std::uint64_t seed,
              BatchSampling sampling = BatchSampling::epochs);
  /// The rows of the next batch (valid until the next call).
  std::span<const Index> next();
  Index batches_per_epoch() const { return (samples_ + batch_ - 1) / batch_; }

 private:
  void shuffle();
  Index samples_, batch_;
  std::uint64_t seed_;
  BatchSampling sampling_;
  std::uint64_t epoch_ = 0;
  Index pos_ = 0;
  std::vector<Index> order_;
  std::mt19937_64 rng_;  ///< independent and replacement: one stream for the whole run
};

}  // namespace stepgate
