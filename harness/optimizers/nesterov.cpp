// Nesterov momentum in the form of Bengio, Boulanger-Lewandowski & Pascanu (2013), "Advances
// in optimizing recurrent networks", eq. (7)/(8). The tracked point is the look-ahead point
// Θ = x + β v, where the gradient is evaluated:
//   Θ_{t+1} = Θ_t + β² v_t − (1 + β) α ∇f(Θ_t),   v_{t+1} = β v_t − α ∇f(Θ_t).
// This is the same sequence as Sutskever, Martens, Dahl & Hinton (2013),
//   v_{t+1} = β v_t − α ∇f(x_t + β v_t),   x_{t+1} = x_t + v_{t+1},
// shifted to Θ_t = x_t + β v_t: Θ_{t+1} = x_t + (1 + β) v_{t+1} = Θ_t − β v_t + (1 + β) v_{t+1}.
// With v_0 = 0 both start at Θ_0 = x_0. One gradient per iteration, at the point we hold.
#include "stepgate/optimizers/update_rules.hpp"

namespace stepgate::detail {

void Nesterov::step(Mat& P, const Mat& G, const Vec& rates) {
  check_step(P, G, rates);
  const double b2 = beta_ * beta_;
  const double one_plus_b = 1.0 + beta_;
  P.noalias() += b2 * V_ - one_plus_b * (G * rates.asDiagonal());  // uses the old V
  V_ = beta_ * V_ - G * rates.asDiagonal();
}

}  // namespace stepgate::detail
