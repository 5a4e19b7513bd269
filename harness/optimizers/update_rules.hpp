// The concrete update rules behind make_optimizer (internal to optimizers/; callers use
// Optimizer). Every rule is element-wise per lane, so lane k of a batch gets the same bits
// as the same run alone.
#pragma once
#include <span>
#include <stdexcept>
#include <string>
#include <vector>

#include "stepgate/core/lanes.hpp"
#include "stepgate/optimizers/optimizer.hpp"

namespace stepgate::detail {

/// Shape and state bookkeeping shared by all rules: p parameters, K lanes, checked on every
/// step. A rule registers its per-lane state matrices (p x K) with track() in its constructor;
/// reset, keep_lanes and append_lanes then act on all of them, so each rule writes only step()
/// (and on_reset() when it keeps state other than matrices, as Adam's step count).
class LaneOptimizer : public Optimizer {
 public:
  void reset(Index p, Index lanes) final {
    set_shape(p, lanes);
    for (Mat* m : state_) m->setZero(p, lanes);
    on_reset();
  }
  void keep_lanes(std::span<const Index> keep) final {
    check_keep(keep);
    for (Mat* m : state_) keep_columns(*m, keep);
  }
  void append_lanes(std::span<const Index> from) final {
    for (Index j : from)
      if (j < 0 || j >= lanes_)
        throw std::invalid_argument("optimizer append_lanes: index out of range (below " +
                                    std::to_string(lanes_) + ")");
    for (Mat* m : state_) append_columns(*m, from);
    lanes_ += static_cast<Index>(from.size());
  }

 protected:
  LaneOptimizer() = default;
  // The state pointers refer to members of this object: copying would alias another's state.
  LaneOptimizer(const LaneOptimizer&) = delete;
  LaneOptimizer& operator=(const LaneOptimizer&) = delete;
  void track(Mat& state) { state_.push_back(&state); }
  /// Called at the end of reset(), after the tracked matrices are zero.
  virtual void on_reset() {}
  void set_shape(Index p, Index lanes) {
    if (p < 0 || lanes < 0) throw std::invalid_argument("optimizer reset: negative p or lanes");
    p_ = p;
    lanes_ = lanes;
  }
  /// O(1) check, cheap next to the update itself.
  void check_step(const Mat& P, const Mat& G, const Vec& rates) const {
    if (P.rows() != p_ || P.cols() != lanes_ || G.rows() != p_ || G.cols() != lanes_ ||
        rates.size() != lanes_)
      throw std::invalid_argument("optimizer step: expected P and G of " + std::to_string(p_) +
                                  " x " + std::to_string(lanes_) + " and " +
                                  std::to_string(lanes_) + " rates (was reset called?)");
  }
  /// Validates `keep` against the current lanes and records the new lane count.
  void check_keep(std::span<const Index> keep) {
    for (std::size_t j = 0; j < keep.size(); ++j) {
      const bool in_range = keep[j] >= 0 && keep[j] < lanes_;
      const bool increasing = j == 0 || keep[j] > keep[j - 1];
      if (!in_range || !increasing)
        throw std::invalid_argument("optimizer keep_lanes: indices must be strictly increasing "
                                    "and below " + std::to_string(lanes_));
    }
    lanes_ = static_cast<Index>(keep.size());
  }
  Index p_ = 0;
  Index lanes_ = 0;

 private:
  std::vector<Mat*> state_;
};

/// gd and sgd: P −= α G (sgd differs only in the caller's mini-batch gradients).
class GradientDescent final : public LaneOptimizer {
 public:
  void step(Mat& P, const Mat& G, const Vec& rates) override;
};

/// The momentum rules' shared state: a coefficient β and a velocity per lane.
class VelocityRule : public LaneOptimizer {
 public:  // abstract (no step), so public only for the rules' inherited constructors
  explicit VelocityRule(double beta) : beta_(beta) { track(V_); }

 protected:
  double beta_;
  Mat V_;  ///< velocity, p x K
};

/// Heavy ball (Polyak 1964): V = β V − α G; P += V.
class HeavyBall final : public VelocityRule {
 public:
  using VelocityRule::VelocityRule;
  void step(Mat& P, const Mat& G, const Vec& rates) override;
};

/// Nesterov momentum tracked at the look-ahead point (Bengio, Boulanger-Lewandowski &
/// Pascanu 2013, eq. 7/8): P += β² V − (1 + β) α G; V = β V − α G.
class Nesterov final : public VelocityRule {
 public:
  using VelocityRule::VelocityRule;
  void step(Mat& P, const Mat& G, const Vec& rates) override;
};

/// AdaGrad (Duchi, Hazan & Singer 2011): S += G²; P −= α G / (√S + ε).
class AdaGrad final : public LaneOptimizer {
 public:
  explicit AdaGrad(double eps) : eps_(eps) { track(S_); }
  void step(Mat& P, const Mat& G, const Vec& rates) override;

 private:
  double eps_;
  Mat S_;  ///< sum of squared gradients, p x K
};

/// RMSProp (Tieleman & Hinton 2012, unpublished; written source: Goodfellow, Bengio & Courville
/// 2016, *Deep Learning*, Algorithm 8.5): S = ρ S + (1 − ρ) G²; P −= α G / (√S + ε). Algorithm 8.5
/// puts its δ inside the root; ε is added to the root here, as PyTorch's RMSprop does.
class RMSProp final : public LaneOptimizer {
 public:
  RMSProp(double rho, double eps) : rho_(rho), eps_(eps) { track(S_); }
  void step(Mat& P, const Mat& G, const Vec& rates) override;

 private:
  double rho_;
  double eps_;
  Mat S_;  ///< running mean square, p x K
};

/// Adam (Kingma & Ba 2015, Algorithm 1), with bias-corrected moments.
class Adam final : public LaneOptimizer {
 public:
  Adam(double beta1, double beta2, double eps) : beta1_(beta1), beta2_(beta2), eps_(eps) {
    track(M_);
    track(V_);
  }
  void step(Mat& P, const Mat& G, const Vec& rates) override;

 private:
  void on_reset() override {
    t_ = 0;
    beta1_t_ = 1.0;
    beta2_t_ = 1.0;
  }
  double beta1_;
  double beta2_;
  double eps_;
  long t_ = 0;           ///< steps taken, the same for all lanes
  double beta1_t_ = 1;   ///< β1^t as a running product (bit-identical on every platform,
  double beta2_t_ = 1;   ///< unlike std::pow)
  Mat M_;  ///< first moment, p x K
  Mat V_;  ///< second raw moment, p x K
};

}  // namespace stepgate::detail
