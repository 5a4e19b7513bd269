#include "stepgate/optimizers/update_rules.hpp"

namespace stepgate::detail {

void GradientDescent::reset(Index p, Index lanes) { set_shape(p, lanes); }

void GradientDescent::step(Mat& P, const Mat& G, const Vec& rates) {
  check_step(P, G, rates);
  P.noalias() -= G * rates.asDiagonal();  // column k scaled by its rate; no temporary
}


}  // namespace stepgate::detail
