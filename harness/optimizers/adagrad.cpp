// AdaGrad, diagonal form: Duchi, Hazan & Singer (2011), "Adaptive subgradient methods for
// online learning and stochastic optimization", JMLR 12. ε is added to the root, as is usual
// in implementations (common practice), so that a zero gradient coordinate does not divide 0/0.
#include "stepgate/optimizers/update_rules.hpp"

namespace stepgate::detail {

void AdaGrad::step(Mat& P, const Mat& G, const Vec& rates) {
  check_step(P, G, rates);
  S_.array() += G.array().square();
  P.noalias() -= (G.array() / (S_.array().sqrt() + eps_)).matrix() * rates.asDiagonal();
}

}  // namespace stepgate::detail
