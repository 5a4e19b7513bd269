// RMSProp (Tieleman & Hinton 2012, unpublished; written: Goodfellow, Bengio & Courville 2016,
// *Deep Learning*, Algorithm 8.5): a running mean square of the gradient,
// S = ρ S + (1 − ρ) G², divides the step: P −= α G / (√S + ε).
#include "stepgate/optimizers/update_rules.hpp"

namespace stepgate::detail {

void RMSProp::step(Mat& P, const Mat& G, const Vec& rates) {
  check_step(P, G, rates);
  S_.array() = rho_ * S_.array() + (1.0 - rho_) * G.array().square();
  P.noalias() -= (G.array() / (S_.array().sqrt() + eps_)).matrix() * rates.asDiagonal();
}

}  // namespace stepgate::detail
