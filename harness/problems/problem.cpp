#include "stepgate/problems/problem.hpp"

#include <stdexcept>

namespace stepgate {

void Problem::gradient_rows(const Mat&, std::span<const Index>, Mat&, Scratch&) const {
  throw std::logic_error("problem '" + std::string(kind()) + "' has no samples to draw mini-batches from");
}

std::function<void(const Vec& v, Vec& out)> Problem::hessian_at(const Vec& w) const {
  return [this, w](const Vec& v, Vec& out) { hessian_vector(w, v, out); };
}

Mat Problem::hessian(const Vec& w) const {
  const Index p = dim();
  Mat H(p, p);
  Vec e = Vec::Zero(p), col(p);
  for (Index j = 0; j < p; ++j) {
    e[j] = 1.0;
    hessian_vector(w, e, col);
    H.col(j) = col;
    e[j] = 0.0;
  }
  return (0.5 * (H + H.transpose())).eval();
}

}  // namespace stepgate
