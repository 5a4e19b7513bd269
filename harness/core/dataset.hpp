// A table of samples as problems consume it. data/ produces it (reading, generating,
// scaling); problems/ only reads it.
#pragma once
#include <string>
#include <vector>

#include "stepgate/core/feature_map.hpp"
#include "stepgate/core/types.hpp"

namespace stepgate {

struct Dataset {
  std::string name;                   ///< as named in the suite
  Mat X;                              ///< n x d features (after scaling, if any)
  Vec y;                              ///< n targets: real values, 0/1 labels, or class ids 0..C-1
  std::vector<std::string> features;  ///< d column names
  std::string target;                 ///< target column name
  FeatureMap map;                     ///< scaling applied to X (identity when none)
  std::string sha256;                 ///< hash of the source file's bytes ("" for generated data)
  // Where each row's target was read, for messages about a label (row_location). CSV: the
  // file and the 1-based line where each row starts; IDX: the labels file, row i being the
  // byte at target_first_byte + i; generated data: neither.
  std::string target_file;
  std::vector<long> target_lines;
  long target_first_byte = -1;

  /// "file:line" (CSV), "file:byte N" (IDX) or "row i+1 of data set 'name'" (generated).
  std::string row_location(Index i) const {
    if (!target_lines.empty() && i < static_cast<Index>(target_lines.size()))
      return target_file + ":" + std::to_string(target_lines[static_cast<std::size_t>(i)]);
    if (target_first_byte >= 0) return target_file + ":byte " + std::to_string(target_first_byte + i);
    return "row " + std::to_string(i + 1) + " of data set '" + name + "'";
  }

  Index rows() const { return X.rows(); }
  Index cols() const { return X.cols(); }
};

}  // namespace stepgate
