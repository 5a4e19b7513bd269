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

  Index rows() const { return X.rows(); }
  Index cols() const { return X.cols(); }
};

}  // namespace stepgate
