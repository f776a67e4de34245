// The known-bodies fit, weights and clipping. See known_fit.hpp.
#include "sim/fit/known_fit.hpp"

#include <algorithm>
#include <cmath>
#include <map>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"

namespace wayward {

Eigen::VectorXd pack_planets(const ModelSetup& setup, const ModelState& ref, const ModelState& s) {
    Eigen::VectorXd x(static_cast<Eigen::Index>(6 * setup.planets.size()));
    for (std::size_t p = 0; p < setup.planets.size(); ++p) {
        const double rs = 1e-6 * ref.planets[p].position.norm(), vs = 1e-6 * ref.planets[p].velocity.norm();
        for (int c = 0; c < 3; ++c) {
            x[static_cast<Eigen::Index>(6 * p) + c] = (s.planets[p].position[c] - ref.planets[p].position[c]) / rs;
            x[static_cast<Eigen::Index>(6 * p) + 3 + c] = (s.planets[p].velocity[c] - ref.planets[p].velocity[c]) / vs;
        }
    }
    return x;
}

void unpack_planets(const ModelSetup& setup, const ModelState& ref, const Eigen::VectorXd& x, ModelState& s) {
    s.planets.resize(setup.planets.size());
    for (std::size_t p = 0; p < setup.planets.size(); ++p) {
        const double rs = 1e-6 * ref.planets[p].position.norm(), vs = 1e-6 * ref.planets[p].velocity.norm();
        for (int c = 0; c < 3; ++c) {
            s.planets[p].position[c] = ref.planets[p].position[c] + rs * x[static_cast<Eigen::Index>(6 * p) + c];
            s.planets[p].velocity[c] = ref.planets[p].velocity[c] + vs * x[static_cast<Eigen::Index>(6 * p) + 3 + c];
        }
    }
}

namespace {
// Deviation of each observation's residual from a least-squares line through its neighbours in time (the
// nearest `half` kept observations of the same planet on either side), divided by the standard deviation
// that factor would have for white noise of unit sigma: sqrt(1 + 1/n + (t - mean)^2 / Sxx). A slowly varying
// signal (an unmodelled body) is followed by the line; an isolated outlier is not.
std::vector<std::array<double, 2>> local_deviations(const ModelSetup& setup, const std::vector<std::array<double, 2>>& res,
                                                    std::size_t half = 6) {
    std::vector<std::array<double, 2>> dev(setup.obs.size(), {0.0, 0.0});
    for (std::size_t p = 0; p < setup.planets.size(); ++p) {
        std::vector<std::size_t> idx;
        for (std::size_t k = 0; k < setup.obs.size(); ++k)
            if (setup.obs[k].planet == p) idx.push_back(k);
        std::sort(idx.begin(), idx.end(), [&](std::size_t a, std::size_t b) { return setup.obs[a].time_days < setup.obs[b].time_days; });
        for (std::size_t q = 0; q < idx.size(); ++q) {
            std::vector<std::size_t> nb;
            for (std::size_t j = q; j-- > 0 && nb.size() < half;)
                if (!setup.obs[idx[j]].rejected) nb.push_back(idx[j]);
            std::size_t before = nb.size();
            for (std::size_t j = q + 1; j < idx.size() && nb.size() < before + half; ++j)
                if (!setup.obs[idx[j]].rejected) nb.push_back(idx[j]);
            const std::size_t k = idx[q];
            if (nb.size() < 3) { dev[k] = res[k]; continue; }
            double tm = 0.0;
            for (std::size_t j : nb) tm += setup.obs[j].time_days;
            tm /= static_cast<double>(nb.size());
            double sxx = 0.0;
            for (std::size_t j : nb) sxx += std::pow(setup.obs[j].time_days - tm, 2);
            const double dt = setup.obs[k].time_days - tm;
            const double inflation = std::sqrt(1.0 + 1.0 / static_cast<double>(nb.size()) + (sxx > 0 ? dt * dt / sxx : 0.0));
            for (std::size_t c = 0; c < 2; ++c) {
                double ym = 0.0, sxy = 0.0;
                for (std::size_t j : nb) ym += res[j][c];
                ym /= static_cast<double>(nb.size());
                for (std::size_t j : nb) sxy += (setup.obs[j].time_days - tm) * (res[j][c] - ym);
                const double slope = sxx > 0 ? sxy / sxx : 0.0;
                dev[k][c] = (res[k][c] - (ym + slope * dt)) / inflation;
            }
        }
    }
    return dev;
}
}  // namespace

bool update_weights(ModelSetup& setup, const std::vector<std::array<double, 2>>& res, double clip) {
    bool changed = false;
    // Two passes: the second builds its neighbour lines without the observations the first set aside.
    for (int pass = 0; pass < 2; ++pass) {
        const auto dev = local_deviations(setup, res);
        for (std::size_t e = 0; e < setup.eras.size(); ++e) {
            if (setup.era_records_sigma[e]) continue;
            // Robust sigma per coordinate: 1.4826 x median absolute deviation (Gaussian consistency factor),
            // then the RMS of the deviations inside the clip (efficient for Gaussian errors).
            std::array<double, 2> sigma{1.0, 1.0};
            for (std::size_t c = 0; c < 2; ++c) {
                std::vector<double> v;
                for (std::size_t k = 0; k < setup.obs.size(); ++k)
                    if (setup.obs[k].era == e) v.push_back(std::abs(dev[k][c]));
                if (v.empty()) continue;
                std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(v.size() / 2), v.end());
                const double mad_sigma = std::max(1.4826 * v[v.size() / 2], 1e-4);
                double sum = 0.0;
                std::size_t n = 0;
                for (std::size_t k = 0; k < setup.obs.size(); ++k)
                    if (setup.obs[k].era == e && std::abs(dev[k][c]) < clip * mad_sigma) { sum += dev[k][c] * dev[k][c]; ++n; }
                sigma[c] = n > 2 ? std::sqrt(sum / static_cast<double>(n)) : mad_sigma;
            }
            for (FitObservation& f : setup.obs)
                if (f.era == e) {
                    if (std::abs(f.sigma_lon_arcsec - sigma[0]) > 1e-3 * sigma[0] || std::abs(f.sigma_lat_arcsec - sigma[1]) > 1e-3 * sigma[1])
                        changed = true;
                    f.sigma_lon_arcsec = sigma[0];
                    f.sigma_lat_arcsec = sigma[1];
                }
        }
        // Where the model is still far from the data (the known-bodies fit of a strongly perturbed planet), the
        // deviations from the local lines carry signal as well as noise; the clip then scales with their robust
        // spread per planet and era (in units of sigma, never below 1), so only isolated points are set aside.
        std::map<std::pair<std::size_t, std::size_t>, std::array<double, 2>> spread;
        {
            std::map<std::pair<std::size_t, std::size_t>, std::array<std::vector<double>, 2>> devs;
            for (std::size_t k = 0; k < setup.obs.size(); ++k) {
                const FitObservation& f = setup.obs[k];
                auto& d = devs[{f.planet, f.era}];
                d[0].push_back(std::abs(dev[k][0] / f.sigma_lon_arcsec));
                d[1].push_back(std::abs(dev[k][1] / f.sigma_lat_arcsec));
            }
            for (auto& [key, d] : devs)
                for (std::size_t c = 0; c < 2; ++c) {
                    auto& v = d[c];
                    std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(v.size() / 2), v.end());
                    spread[key][c] = std::max(1.0, 1.4826 * v[v.size() / 2]);
                }
        }
        for (std::size_t k = 0; k < setup.obs.size(); ++k) {
            FitObservation& f = setup.obs[k];
            const auto& sp = spread[{f.planet, f.era}];
            const bool reject = std::abs(dev[k][0] / f.sigma_lon_arcsec) > clip * sp[0] ||
                                std::abs(dev[k][1] / f.sigma_lat_arcsec) > clip * sp[1];
            if (reject != f.rejected) changed = true;
            f.rejected = reject;
        }
    }
    return changed;
}

KnownFit fit_known(const Exercise& ex, const ModelOptions& options, const std::function<void(const std::string&)>& progress) {
    KnownFit fit;
    fit.setup = make_setup(ex, options);
    ModelSetup& setup = fit.setup;
    const ModelState reference = initial_state(setup);
    fit.state = reference;

    LeastSquaresProblem prob;
    prob.parameters = 6 * setup.planets.size();
    prob.residuals = 2 * setup.obs.size();
    prob.step = Eigen::VectorXd::Ones(static_cast<Eigen::Index>(prob.parameters));
    const StateOf state_of = [&](const Eigen::VectorXd& x) {
        ModelState s = reference;
        unpack_planets(setup, reference, x, s);
        return s;
    };
    prob.evaluate = [&](const Eigen::VectorXd& x, Eigen::VectorXd& r) {
        ++fit.model_runs;
        return weighted_residuals(setup, run_model(setup, state_of(x), setup.t_end), r);
    };
    if (has_tangent_map(setup, prob.parameters)) {
        // The planets' map to the state is linear: the seed's differences are exact with any step.
        const std::vector<Eigen::Index> columns = parameter_columns(prob.parameters);
        prob.jacobian = [&, columns](const Eigen::VectorXd& x, Eigen::MatrixXd& jac) {
            ++fit.model_runs;
            return weighted_residual_jacobian(setup, run_model_tangent(setup, state_of, x, columns, prob.step, setup.t_end), jac);
        };
    }
    Eigen::VectorXd x = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(prob.parameters));
    LeastSquaresResult lm;
    for (int round = 0; round < 8; ++round) {
        lm = levenberg_marquardt(prob, x, 30);
        if (!lm.evaluated || !std::isfinite(lm.chi2)) throw std::runtime_error("the known-bodies model could not be evaluated");
        x = lm.x;
        unpack_planets(setup, reference, x, fit.state);
        ++fit.model_runs;
        const ModelRun run = run_model(setup, fit.state, setup.t_end);
        const bool changed = update_weights(setup, residuals_arcsec(setup, run));
        if (progress) progress("known-bodies fit, round " + std::to_string(round + 1) + ": chi2 = " + std::to_string(lm.chi2));
        if (!changed) break;
    }
    // Final residuals and chi2 with the final weights.
    ++fit.model_runs;
    fit.run = run_model(setup, fit.state, setup.t_end);
    fit.residuals = residuals_arcsec(setup, fit.run);
    Eigen::VectorXd r;
    weighted_residuals(setup, fit.run, r);
    fit.chi2 = r.squaredNorm();
    for (const FitObservation& f : setup.obs) (f.rejected ? fit.rejected : fit.kept) += 1;
    const std::size_t fitted = prob.parameters + era_systematic_parameters(setup.era_view());
    fit.dof = 2 * fit.kept > fitted ? 2 * fit.kept - fitted : 1;
    int evals = 0;
    problem_jacobian(prob, x, r, fit.jacobian, evals);
    return fit;
}

}  // namespace wayward
