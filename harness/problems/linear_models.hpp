// Linear models on a data set: least squares, logistic regression, softmax regression.
// Parameter layout (LinearLayout): (d [+1 intercept]) x outputs, column-major; the intercept is
// the last entry of each output's column and is never regularised.
// Each factory takes the data set by value: pass std::move(data) and the model takes its
// features over without a copy (the [X 1] column is appended in place); pass an lvalue and it
// works on a copy, as before.
#pragma once
#include <memory>

#include "stepgate/core/dataset.hpp"
#include "stepgate/core/problem_options.hpp"
#include "stepgate/problems/problem.hpp"

namespace stepgate {

/// J(w) = 1/(2n)·‖Xw + b − y‖² + (l2/2)·‖w‖²  (sum: 1/2·‖…‖² + (l2/2)·‖w‖²).
/// Optimum in closed form by column-pivoting Householder QR on centred, column-equilibrated
/// data (adequate for Longley's conditioning).
std::unique_ptr<Problem> make_least_squares(Dataset data, const LinearModelOptions& opt = {});

/// Mean binary cross-entropy of sigmoid(Xw + b) against labels y in {0, 1}, plus (l2/2)·‖w‖².
/// Optimum by Newton's method to near machine precision. Throws std::invalid_argument for
/// labels other than 0/1.
std::unique_ptr<Problem> make_logistic(Dataset data, const LinearModelOptions& opt = {});

/// Mean multinomial cross-entropy of softmax(XW + b) against class ids y in {0..C-1}, plus
/// (l2/2)·‖W‖². C = max label + 1 unless `classes` > 0. The parameterisation is the full
/// (over-complete) one, so without l2 the optimum is not unique: its reference optimum is the
/// minimum-norm Newton solution, and gaps use J* only.
std::unique_ptr<Problem> make_softmax(Dataset data, const LinearModelOptions& opt = {},
                                      Index classes = 0);

}  // namespace stepgate
