// Adam: Kingma & Ba (2015), "Adam: A method for stochastic optimization", ICLR, Algorithm 1,
// with ε added to √v̂ exactly as there (not the "efficient" variant of their section 2, which
// moves ε and so changes the rule slightly).
#include "stepgate/optimizers/update_rules.hpp"

namespace stepgate::detail {

void Adam::step(Mat& P, const Mat& G, const Vec& rates) {
  check_step(P, G, rates);
  ++t_;
  beta1_t_ *= beta1_;
  beta2_t_ *= beta2_;
  const double c1 = 1.0 - beta1_t_;  // bias corrections 1 − β1^t, 1 − β2^t
  const double c2 = 1.0 - beta2_t_;
  M_.array() = beta1_ * M_.array() + (1.0 - beta1_) * G.array();
  V_.array() = beta2_ * V_.array() + (1.0 - beta2_) * G.array().square();
  P.noalias() -=
      ((M_.array() / c1) / ((V_.array() / c2).sqrt() + eps_)).matrix() * rates.asDiagonal();
}

}  // namespace stepgate::detail
