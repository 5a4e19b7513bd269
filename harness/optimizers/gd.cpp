#include "stepgate/optimizers/update_rules.hpp"

namespace stepgate::detail {

void GradientDescent::step(Mat& P, const Mat& G, const Vec& rates) {
  check_step(P, G, rates);
  P.noalias() -= G * rates.asDiagonal();  // column k scaled by its rate; no temporary
}

}  // namespace stepgate::detail
