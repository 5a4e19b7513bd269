// Column bookkeeping of batched lanes (the K runs of a batch are the K columns of a matrix):
// the one implementation used by the runner and by every optimizer's state.
#pragma once
#include <span>

#include "stepgate/core/types.hpp"

namespace stepgate {

/// Moves column keep[j] to j and drops the rest. `keep` must be strictly increasing (then
/// keep[j] >= j, so the moves are safe in place).
inline void keep_columns(Mat& X, std::span<const Index> keep) {
  for (std::size_t j = 0; j < keep.size(); ++j) {
    const auto dst = static_cast<Index>(j);
    if (keep[j] != dst) X.col(dst) = X.col(keep[j]);
  }
  X.conservativeResize(X.rows(), static_cast<Index>(keep.size()));
}

/// The same for the entries of a vector (one per lane).
inline void keep_entries(Vec& v, std::span<const Index> keep) {
  for (std::size_t j = 0; j < keep.size(); ++j) v[static_cast<Index>(j)] = v[keep[j]];
  v.conservativeResize(static_cast<Index>(keep.size()));
}

/// Appends copies of the columns `from` (indices into the current columns) at the end.
inline void append_columns(Mat& X, std::span<const Index> from) {
  const Index old = X.cols();
  X.conservativeResize(X.rows(), old + static_cast<Index>(from.size()));
  for (std::size_t j = 0; j < from.size(); ++j) X.col(old + static_cast<Index>(j)) = X.col(from[j]);
}

/// The same for the entries of a vector.
inline void append_entries(Vec& v, std::span<const Index> from) {
  const Index old = v.size();
  v.conservativeResize(old + static_cast<Index>(from.size()));
  for (std::size_t j = 0; j < from.size(); ++j) v[old + static_cast<Index>(j)] = v[from[j]];
}

}  // namespace stepgate
