// Levenberg-Marquardt with the problem's own or forward-difference Jacobians. See least_squares.hpp.
#include "sim/fit/least_squares.hpp"

#include <algorithm>
#include <cmath>

namespace wayward {

bool finite_difference_jacobian(const LeastSquaresProblem& p, const Eigen::VectorXd& x, const Eigen::VectorXd& r0,
                                Eigen::MatrixXd& jac, int& evaluations) {
    const auto n = static_cast<Eigen::Index>(p.parameters);
    jac.resize(r0.size(), n);
    Eigen::VectorXd xp = x, rp;
    for (Eigen::Index j = 0; j < n; ++j) {
        xp[j] = x[j] + p.step[j];
        ++evaluations;
        if (!p.evaluate(xp, rp)) {
            // Try the other side before giving up (a step may leave the valid region).
            xp[j] = x[j] - p.step[j];
            ++evaluations;
            if (!p.evaluate(xp, rp)) return false;
            jac.col(j) = (r0 - rp) / p.step[j];
        } else {
            jac.col(j) = (rp - r0) / p.step[j];
        }
        xp[j] = x[j];
    }
    return true;
}

bool problem_jacobian(const LeastSquaresProblem& p, const Eigen::VectorXd& x, const Eigen::VectorXd& r0, Eigen::MatrixXd& jac,
                      int& evaluations) {
    if (!p.jacobian) return finite_difference_jacobian(p, x, r0, jac, evaluations);
    ++evaluations;
    return p.jacobian(x, jac) && jac.rows() == r0.size() && jac.cols() == static_cast<Eigen::Index>(p.parameters) && jac.allFinite();
}

LeastSquaresResult levenberg_marquardt(const LeastSquaresProblem& p, const Eigen::VectorXd& x0, int max_iterations,
                                       const std::function<bool()>& cancelled) {
    LeastSquaresResult res;
    res.x = x0;
    Eigen::VectorXd r;
    ++res.evaluations;
    if (!p.evaluate(res.x, r)) return res;
    res.chi2 = r.squaredNorm();
    res.evaluated = true;
    Eigen::MatrixXd J;
    if (!problem_jacobian(p, res.x, r, J, res.evaluations)) return res;
    res.outcome = FitOutcome::iteration_limit;
    // Steps solve the damped problem [J; sqrt(lambda D)] delta = [-r; 0] by column-pivoted QR rather than by
    // the normal equations, whose condition number is the square of J's (long arcs make J ill-conditioned).
    // D = diag(J^T J) (Marquardt's scaling); lambda follows Nielsen's (1999) update (see below).
    auto diag_of = [](const Eigen::MatrixXd& jac) {
        Eigen::VectorXd d = jac.colwise().squaredNorm().transpose();
        for (Eigen::Index j = 0; j < d.size(); ++j) d[j] = std::max(d[j], 1e-30);
        return d;
    };
    Eigen::VectorXd D = diag_of(J);
    double lambda = 1e-6;
    double nu = 2.0;
    const auto n = static_cast<Eigen::Index>(p.parameters);
    const Eigen::Index m = J.rows();
    for (res.iterations = 0; res.iterations < max_iterations; ++res.iterations) {
        if (cancelled && cancelled()) {
            res.outcome = FitOutcome::cancelled;
            break;
        }
        Eigen::MatrixXd aug(m + n, n);
        aug.topRows(m) = J;
        aug.bottomRows(n) = (lambda * D).cwiseSqrt().asDiagonal();
        Eigen::VectorXd rhs = Eigen::VectorXd::Zero(m + n);
        rhs.head(m) = -r;
        const Eigen::VectorXd delta = aug.colPivHouseholderQr().solve(rhs);
        if (!delta.allFinite()) {
            res.outcome = FitOutcome::model_failed;
            break;
        }
        const Eigen::VectorXd x_new = res.x + delta;
        Eigen::VectorXd r_new;
        ++res.evaluations;
        const bool ok = p.evaluate(x_new, r_new);
        const double chi2_new = ok ? r_new.squaredNorm() : INFINITY;
        const double predicted = res.chi2 - (r + J * delta).squaredNorm();
        if (predicted >= 0.0 && predicted < 1e-8 * res.chi2 + 1e-4 && lambda < 1e-3) {
            res.outcome = FitOutcome::converged;  // the linearised model promises nothing more: a minimum to working precision
            break;
        }
        if (ok && chi2_new < res.chi2) {
            const double rho = predicted > 0 ? (res.chi2 - chi2_new) / predicted : 0.0;
            const double gain = res.chi2 - chi2_new;
            res.x = x_new;
            r = r_new;
            res.chi2 = chi2_new;
            // Nielsen (1999) allows a factor 3 per step; where the linear model predicts well we allow 10,
            // because long arcs make some directions so weakly determined that small damping still stalls them.
            lambda *= std::max(0.1, 1.0 - std::pow(2.0 * rho - 1.0, 3));
            nu = 2.0;
            double step_size = 0.0;
            for (Eigen::Index j = 0; j < n; ++j) step_size = std::max(step_size, std::abs(delta[j] / p.step[j]));
            const bool small = gain < 1e-7 * res.chi2 + 1e-10 || step_size < 1e-3;
            if (!problem_jacobian(p, res.x, r, J, res.evaluations)) {
                res.outcome = FitOutcome::model_failed;
                break;
            }
            D = D.cwiseMax(diag_of(J));
            if (small) {
                res.outcome = FitOutcome::converged;
                ++res.iterations;
                break;
            }
        } else {
            lambda *= nu;
            nu *= 2.0;
            if (lambda > 1e16) {
                res.outcome = FitOutcome::converged;  // no further descent possible: at a minimum to working precision
                break;
            }
        }
    }
    res.jacobian = J;
    return res;
}

}  // namespace wayward
