// Least squares: Levenberg-Marquardt (Levenberg 1944, Marquardt 1963) with Nielsen's damping update, on
// weighted residuals, the Jacobian from the problem's own derivatives where it has them, else by forward
// differences with scaled steps; Eigen for the linear algebra.
#pragma once

#include <cstddef>
#include <functional>

#include <Eigen/Dense>

namespace wayward {

// ---- Levenberg-Marquardt on a generic problem ----
struct LeastSquaresProblem {
    std::size_t parameters = 0;
    std::size_t residuals = 0;
    // Fills the weighted residual vector for parameters x; returns false if the model cannot be evaluated.
    std::function<bool(const Eigen::VectorXd& x, Eigen::VectorXd& r)> evaluate;
    Eigen::VectorXd step;   // finite-difference step per parameter
    // Optional: the Jacobian of the residuals at x by the problem's own means (the model's tangent map); false
    // if the model cannot be evaluated there. Without it, forward differences with `step`.
    std::function<bool(const Eigen::VectorXd& x, Eigen::MatrixXd& jac)> jacobian;
};

// How a fit ended. model_failed: the model could not be evaluated at some point (if `evaluated`, x and chi2 are
// the last point where it could); cancelled: the caller asked it to stop.
enum class FitOutcome { converged, iteration_limit, model_failed, cancelled };

struct LeastSquaresResult {
    Eigen::VectorXd x;
    double chi2 = 0.0;
    int iterations = 0;
    int evaluations = 0;
    FitOutcome outcome = FitOutcome::model_failed;
    bool evaluated = false;     // chi2 (and the Jacobian, when it could be formed) belong to x
    Eigen::MatrixXd jacobian;   // at x
    bool converged() const { return outcome == FitOutcome::converged; }
};

// The Jacobian at x (residuals r0 there): the problem's own if it has one, else forward differences.
// `evaluations` counts model runs (one for the problem's own, one per difference column).
bool problem_jacobian(const LeastSquaresProblem& p, const Eigen::VectorXd& x, const Eigen::VectorXd& r0, Eigen::MatrixXd& jac,
                      int& evaluations);
// Jacobian by forward differences.
bool finite_difference_jacobian(const LeastSquaresProblem& p, const Eigen::VectorXd& x, const Eigen::VectorXd& r0,
                                Eigen::MatrixXd& jac, int& evaluations);
LeastSquaresResult levenberg_marquardt(const LeastSquaresProblem& p, const Eigen::VectorXd& x0, int max_iterations = 30,
                                       const std::function<bool()>& cancelled = {});

}  // namespace wayward
