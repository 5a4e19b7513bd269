#include "stepgate/core/feature_map.hpp"

namespace stepgate {

void map_back_linear(const FeatureMap& map, Mat& w, Vec& b) {
  w.array().colwise() /= map.scale.array();
  b.noalias() -= w.transpose() * map.shift;
}

}  // namespace stepgate
