// Heavy ball, Polyak (1964), "Some methods of speeding up the convergence of iteration
// methods": x_{k+1} = x_k − α g_k + β (x_k − x_{k−1}), written with V_k = x_k − x_{k−1}.
#include "stepgate/optimizers/update_rules.hpp"

namespace stepgate::detail {

void HeavyBall::step(Mat& P, const Mat& G, const Vec& rates) {
  check_step(P, G, rates);
  V_ = beta_ * V_ - G * rates.asDiagonal();  // coefficient-wise, so no aliasing temporary
  P += V_;
}

}  // namespace stepgate::detail
