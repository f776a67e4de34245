// Least squares: Levenberg-Marquardt (Levenberg 1944, Marquardt 1963) with Nielsen's damping update, on
// weighted residuals, Jacobian by forward differences with scaled steps; Eigen for the linear algebra.
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
};

struct LeastSquaresResult {
    Eigen::VectorXd x;
    double chi2 = 0.0;
    int iterations = 0;
    int evaluations = 0;
    bool converged = false;
    Eigen::MatrixXd jacobian;   // at x
};

// Jacobian by forward differences.
bool finite_difference_jacobian(const LeastSquaresProblem& p, const Eigen::VectorXd& x, const Eigen::VectorXd& r0,
                                Eigen::MatrixXd& jac, int& evaluations);
LeastSquaresResult levenberg_marquardt(const LeastSquaresProblem& p, const Eigen::VectorXd& x0, int max_iterations = 30,
                                       const std::function<bool()>& cancelled = {});

}  // namespace wayward
