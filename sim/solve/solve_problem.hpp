// The solve's least-squares problem (the residuals of the observations and the priors for a parameter vector, and
// their Jacobian by the model's tangent map) and the inverse of the normal matrix. Internal to sim/solve (solve.cpp).
#pragma once

#include <atomic>
#include <cmath>
#include <vector>

#include <Eigen/Dense>

#include "sim/fit/least_squares.hpp"
#include "sim/model/model.hpp"
#include "sim/predict/predict.hpp"
#include "sim/solve/solve_options.hpp"

namespace wayward::solve_detail {

// The least-squares problem of the solve: residuals of the observations and the priors for a parameter vector.
struct Problem {
    const ModelSetup* setup = nullptr;
    FittedModel fit;                            // reference state and layout (best and covariance come later)
    SolveOptions options;
    double prior_a = 0.0, prior_a_sigma = 0.0;  // Gaussian prior on a (sigma 0: none)
    std::size_t priors = 0;
    std::atomic<int>* runs = nullptr;

    const HiddenParameters& layout() const { return fit.layout; }
    HiddenOrbit hidden(const Eigen::VectorXd& x) const { return fit.layout.hidden(x); }
    ModelState state(const Eigen::VectorXd& x) const { return fit.state(*setup, x); }
    std::size_t residual_count() const { return 2 * setup->obs.size() + priors; }
    // The priors' residuals after the observations' (and, given jac and its columns, their rows of the Jacobian):
    // one list, so that the residuals and their derivatives cannot fall out of step.
    void prior_residuals(const Eigen::VectorXd& x, Eigen::VectorXd& r, Eigen::MatrixXd* jac = nullptr,
                         const std::vector<Eigen::Index>* columns = nullptr) const {
        const HiddenParameters& l = layout();
        Eigen::Index k = static_cast<Eigen::Index>(2 * setup->obs.size());
        auto put = [&](double residual, int parameter, double derivative) {
            r[k] = residual;
            if (jac && columns)
                for (std::size_t q = 0; q < columns->size(); ++q)
                    if ((*columns)[q] == parameter) (*jac)(k, static_cast<Eigen::Index>(q)) = derivative;
            ++k;
        };
        if (prior_a_sigma > 0.0) put((std::exp(x[l.i_a]) - prior_a) / prior_a_sigma, l.i_a, std::exp(x[l.i_a]) / prior_a_sigma);
        if (l.i_k >= 0) {
            put(x[l.i_k] / options.eccentricity_prior_sigma, l.i_k, 1.0 / options.eccentricity_prior_sigma);
            put(x[l.i_h] / options.eccentricity_prior_sigma, l.i_h, 1.0 / options.eccentricity_prior_sigma);
        }
        if (l.i_ix >= 0) {
            put(x[l.i_ix] / options.inclination_prior_rad, l.i_ix, 1.0 / options.inclination_prior_rad);
            put(x[l.i_iy] / options.inclination_prior_rad, l.i_iy, 1.0 / options.inclination_prior_rad);
        }
    }
    bool evaluate(const Eigen::VectorXd& x, Eigen::VectorXd& r) const {
        if (runs) ++*runs;
        const ModelRun run = run_model(*setup, state(x), setup->t_end);
        Eigen::VectorXd obs;
        if (!weighted_residuals(*setup, run, obs)) return false;
        r.resize(static_cast<Eigen::Index>(residual_count()));
        r.head(obs.size()) = obs;
        prior_residuals(x, r);
        return r.allFinite();
    }
    bool has_jacobian(std::size_t columns) const { return has_tangent_map(*setup, columns); }
    // The Jacobian of evaluate's residuals with respect to x[columns], by the model's tangent map (one run).
    bool jacobian(const Eigen::VectorXd& x, const std::vector<Eigen::Index>& columns, Eigen::MatrixXd& jac) const {
        if (runs) ++*runs;
        const StateOf state_of = [this](const Eigen::VectorXd& v) { return state(v); };
        const ModelRun run = run_model_tangent(*setup, state_of, x, columns, layout().seed_steps(), setup->t_end);
        Eigen::MatrixXd obs;
        if (!weighted_residual_jacobian(*setup, run, obs)) return false;
        jac = Eigen::MatrixXd::Zero(static_cast<Eigen::Index>(residual_count()), static_cast<Eigen::Index>(columns.size()));
        jac.topRows(obs.rows()) = obs;
        Eigen::VectorXd unused(static_cast<Eigen::Index>(residual_count()));
        prior_residuals(x, unused, &jac, &columns);
        return jac.allFinite();
    }
};

inline LeastSquaresProblem as_lsq(const Problem& p) {
    LeastSquaresProblem q;
    q.parameters = p.layout().size();
    q.residuals = p.residual_count();
    q.step = p.layout().steps();
    q.evaluate = [&p](const Eigen::VectorXd& x, Eigen::VectorXd& r) { return p.evaluate(x, r); };
    if (p.has_jacobian(q.parameters)) {
        const std::vector<Eigen::Index> all = parameter_columns(q.parameters);
        q.jacobian = [&p, all](const Eigen::VectorXd& x, Eigen::MatrixXd& jac) { return p.jacobian(x, all, jac); };
    }
    return q;
}

// Inverse of J^T J by the SVD of J (stable for ill-conditioned long-arc problems).
inline Eigen::MatrixXd normal_inverse(const Eigen::MatrixXd& J) {
    Eigen::JacobiSVD<Eigen::MatrixXd> svd(J, Eigen::ComputeThinV);
    const Eigen::VectorXd s = svd.singularValues();
    Eigen::VectorXd inv(s.size());
    for (Eigen::Index k = 0; k < s.size(); ++k) inv[k] = s[k] > 1e-12 * s[0] ? 1.0 / (s[k] * s[k]) : 0.0;
    return svd.matrixV() * inv.asDiagonal() * svd.matrixV().transpose();
}

}  // namespace wayward::solve_detail
