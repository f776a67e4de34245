// Fitting model, Levenberg-Marquardt core and the known-bodies fit. See fit.hpp for the methods.
#include "sim/fit.hpp"

#include <algorithm>
#include <cmath>
#include <map>

#include "sim/errors.hpp"
#include "sim/units.hpp"

namespace wayward {

Elements HiddenOrbit::elements() const {
    Elements el;
    el.semi_major_axis = semi_major_axis;
    el.eccentricity = std::hypot(k, h);
    el.inclination = inclination;
    el.ascending_node = el.inclination > 0.0 ? wrap_two_pi(node) : 0.0;
    const double varpi = el.eccentricity > 0.0 ? std::atan2(h, k) : 0.0;
    el.arg_periapsis = wrap_two_pi(varpi - el.ascending_node);
    el.mean_anomaly = wrap_two_pi(mean_longitude - varpi);
    return el;
}

bool ModelSetup::weights_estimated() const {
    return std::any_of(era_records_sigma.begin(), era_records_sigma.end(), [](bool b) { return !b; });
}

Vec3 ModelSetup::observer_helio_at(double t) const { return inner.position(observer, t) - inner.position(0, t); }

ModelSetup make_setup(const Exercise& ex, const ModelOptions& options) {
    ModelSetup s;
    s.brief = ex.brief;
    s.options = options;
    s.known = known_model_system(ex.brief);
    s.observer = s.known.observer_index();
    s.frame = observer_frame(s.known, s.observer);
    const std::string file = ex.dir + "/observations.csv";
    if (ex.observations.empty()) throw InputError(file, 0, "", "there are no observations to fit");

    std::map<std::string, std::size_t> planet_of, era_of;
    double t_min = 0.0, t_max = 0.0;
    for (const Observation& o : ex.observations) {
        const std::size_t body = s.known.index_of(o.target);
        if (!planet_of.count(o.target)) {
            planet_of[o.target] = s.planets.size();
            s.planets.push_back(body);
        }
        if (!era_of.count(o.era)) {
            era_of[o.era] = s.eras.size();
            s.eras.push_back(o.era);
            s.era_records_sigma.push_back(true);
        }
        FitObservation f;
        f.time_days = o.time_days;
        f.planet = planet_of[o.target];
        f.lon = o.lon_deg * deg;
        f.lat = o.lat_deg * deg;
        f.era = era_of[o.era];
        f.sigma_recorded = o.sigma_lon_arcsec.has_value() && o.sigma_lat_arcsec.has_value();
        if (!f.sigma_recorded) s.era_records_sigma[f.era] = false;
        f.sigma_lon_arcsec = o.sigma_lon_arcsec.value_or(1.0);
        f.sigma_lat_arcsec = o.sigma_lat_arcsec.value_or(1.0);
        t_min = std::min(t_min, o.time_days);
        t_max = std::max(t_max, o.time_days);
        s.obs.push_back(f);
    }
    // Every fitted planet needs enough observations for its six parameters (with room to estimate weights).
    std::vector<std::size_t> count(s.planets.size(), 0);
    for (const FitObservation& f : s.obs) ++count[f.planet];
    for (std::size_t p = 0; p < s.planets.size(); ++p)
        if (count[p] < 8)
            throw InputError(file, 0, "target", "degenerate fit: " + s.known.bodies[s.planets[p]].name + " has only " +
                                                     std::to_string(count[p]) + " observations (at least 8 are needed)");
    const double span_end = ex.brief.span_years * julian_year_days;
    if (t_max > span_end + 1.0) throw InputError(file, 0, "time_days", "observations lie beyond the exercise's span");
    s.t_begin = t_min - 2.0;
    s.t_end = std::max(t_max, 0.0);
    IntegratorOptions io;
    io.rel_tol = options.rel_tol;
    const IntegrationResult inner = integrate(s.known, s.t_begin, std::max(span_end, s.t_end), io);
    if (inner.outcome != IntegrationOutcome::ok)
        throw InputError(ex.brief.file, 0, "planet", "the known model cannot be integrated: " + to_string(inner.outcome));
    s.inner = inner.ephemeris;
    // The observer's position at each observation: from the team's own ephemeris of it where the exercise
    // has one (matched by recorded time), else from the known model.
    for (const FitObservation& f : s.obs) {
        const auto it = std::lower_bound(ex.observer_track.begin(), ex.observer_track.end(), f.time_days,
                                         [](const ObserverFix& a, double t) { return a.time_days < t; });
        if (it != ex.observer_track.end() && std::abs(it->time_days - f.time_days) < 1e-9) s.observer_helio.push_back(it->position);
        else if (!ex.observer_track.empty())
            throw InputError(ex.dir + "/observer.csv", 0, "time_days", "has no row for the observation at day " + std::to_string(f.time_days));
        else s.observer_helio.push_back(s.observer_helio_at(f.time_days));
    }
    // <d d^T> of the observer's heliocentric position, averaged over the span at 4096 evenly spaced times.
    const int samples = 4096;
    for (int k = 0; k < samples; ++k) {
        const double t = s.inner.t_begin() + (s.inner.t_end() - s.inner.t_begin()) * (k + 0.5) / samples;
        const Vec3 d = s.observer_helio_at(t);
        s.pair_quadrupole.q += d * d.transpose() / samples;
    }
    const double gm_s = s.known.gm[0], gm_o = s.known.gm[s.observer];
    s.pair_quadrupole.gm_reduced = gm_s * gm_o / (gm_s + gm_o);
    return s;
}

ModelState initial_state(const ModelSetup& setup) {
    ModelState st;
    for (std::size_t body : setup.planets) st.planets.push_back(heliocentric(setup.known, body));
    return st;
}

ModelRun run_model(const ModelSetup& setup, const ModelState& state, double t_end, std::optional<double> t_begin) {
    ModelRun run;
    const double gm_star = setup.known.gm[0], gm_obs = setup.known.gm[setup.observer];
    const double share = gm_obs / (gm_star + gm_obs);
    const StateVector obs0 = heliocentric(setup.known, setup.observer);
    const StateVector pair{share * obs0.position, share * obs0.velocity};  // pair barycentre relative to the star

    System sys;
    sys.bodies.push_back({"pair", Role::star, false});
    sys.gm.push_back(gm_star + gm_obs);
    std::vector<StateVector> rel{StateVector{}};
    for (std::size_t i = 1; i < setup.known.size(); ++i) {
        if (i == setup.observer) continue;
        const auto it = std::find(setup.planets.begin(), setup.planets.end(), i);
        const StateVector helio = it != setup.planets.end() ? state.planets[static_cast<std::size_t>(it - setup.planets.begin())]
                                                            : heliocentric(setup.known, i);
        if (it != setup.planets.end()) run.planet_index.push_back(sys.size());
        sys.bodies.push_back(setup.known.bodies[i]);
        sys.gm.push_back(setup.known.gm[i]);
        rel.push_back({helio.position - pair.position, helio.velocity - pair.velocity});
    }
    // planet_index must follow setup.planets' order.
    {
        std::vector<std::size_t> ordered;
        for (std::size_t body : setup.planets) {
            std::size_t k = 0;
            for (std::size_t i = 1; i < sys.size(); ++i)
                if (sys.bodies[i].name == setup.known.bodies[body].name) k = i;
            ordered.push_back(k);
        }
        run.planet_index = ordered;
    }
    if (state.hidden) {
        const HiddenOrbit& h = *state.hidden;
        if (!(h.mass > 0.0) || !(h.semi_major_axis > 0.0) || !(std::hypot(h.k, h.h) < 0.95) || !std::isfinite(h.mean_longitude)) {
            run.problem = "hidden-body parameters out of range";
            return run;
        }
        const double gm_h = gm_from_mass(h.mass);
        const StateVector in_frame = elements_to_state(h.elements(), gm_star + gm_h);
        const Eigen::Matrix3d back = setup.frame.rotation.transpose();
        const StateVector helio{back * in_frame.position, back * in_frame.velocity};
        run.hidden_index = sys.size();
        sys.bodies.push_back({"hidden", Role::hidden, false});
        sys.gm.push_back(gm_h);
        rel.push_back({helio.position - pair.position, helio.velocity - pair.velocity});
    }
    const auto bary = helio_to_bary(sys.gm, rel);
    sys.state.assign(6 * sys.size(), 0.0);
    for (std::size_t i = 0; i < bary.size(); ++i) sys.set(i, bary[i]);
    IntegratorOptions io;
    io.rel_tol = setup.options.rel_tol;
    io.central_quadrupole = setup.pair_quadrupole;
    // A trial orbit that runs into a close encounter must fail fast (the fit then rejects the step), not fill
    // memory with dense output: ordinary model runs take a few thousand steps.
    io.max_steps = 200'000;
    const double t0 = t_begin.value_or(setup.t_begin);
    IntegrationResult r = integrate(sys, t0, std::max(t_end, t0), io);
    if (r.outcome != IntegrationOutcome::ok) {
        run.problem = "model integration failed: " + to_string(r.outcome);
        return run;
    }
    run.outer = std::move(r.ephemeris);
    run.ok = true;
    return run;
}

namespace {
SkyPosition apparent_from(const ModelSetup& setup, const ModelRun& run, std::size_t index, double t, const Vec3& observer_helio) {
    const double gm_star = setup.known.gm[0], gm_obs = setup.known.gm[setup.observer];
    const double star_share = gm_star / (gm_star + gm_obs);
    const Vec3 observer = run.outer.position(0, t) + star_share * observer_helio;
    Vec3 rel = run.outer.position(index, t) - observer;
    if (setup.options.light_time == LightTime::corrected) {
        double tau = rel.norm() / c_au_per_day;
        for (int it = 0; it < 8; ++it) {
            rel = run.outer.position(index, std::max(t - tau, run.outer.t_begin())) - observer;
            const double next = rel.norm() / c_au_per_day;
            const bool done = std::abs(next - tau) < 1e-13;
            tau = next;
            if (done) break;
        }
    }
    return to_sky(setup.frame.to_frame(rel));
}
}  // namespace

SkyPosition model_apparent(const ModelSetup& setup, const ModelRun& run, std::size_t index, double t) {
    return apparent_from(setup, run, index, t, setup.observer_helio_at(t));
}

bool weighted_residuals(const ModelSetup& setup, const ModelRun& run, Eigen::VectorXd& out) {
    if (!run.ok) return false;
    out.resize(static_cast<Eigen::Index>(2 * setup.obs.size()));
    for (std::size_t k = 0; k < setup.obs.size(); ++k) {
        const FitObservation& f = setup.obs[k];
        const auto e = static_cast<Eigen::Index>(2 * k);
        if (f.rejected) { out[e] = out[e + 1] = 0.0; continue; }
        const SkyPosition c = apparent_from(setup, run, run.planet_index[f.planet], f.time_days, setup.observer_helio[k]);
        out[e] = wrap_pi(f.lon - c.lon) * std::cos(c.lat) / arcsec / f.sigma_lon_arcsec;
        out[e + 1] = (f.lat - c.lat) / arcsec / f.sigma_lat_arcsec;
        if (!std::isfinite(out[e]) || !std::isfinite(out[e + 1])) return false;
    }
    return true;
}

std::vector<std::array<double, 2>> residuals_arcsec(const ModelSetup& setup, const ModelRun& run) {
    std::vector<std::array<double, 2>> out;
    for (std::size_t k = 0; k < setup.obs.size(); ++k) {
        const FitObservation& f = setup.obs[k];
        const SkyPosition c = apparent_from(setup, run, run.planet_index[f.planet], f.time_days, setup.observer_helio[k]);
        out.push_back({wrap_pi(f.lon - c.lon) * std::cos(c.lat) / arcsec, (f.lat - c.lat) / arcsec});
    }
    return out;
}

// ---------------------------------------------------------------------------------------------------------
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

LeastSquaresResult levenberg_marquardt(const LeastSquaresProblem& p, const Eigen::VectorXd& x0, int max_iterations,
                                       const std::function<bool()>& cancelled) {
    LeastSquaresResult res;
    res.x = x0;
    Eigen::VectorXd r;
    ++res.evaluations;
    if (!p.evaluate(res.x, r)) return res;
    res.chi2 = r.squaredNorm();
    Eigen::MatrixXd J;
    if (!finite_difference_jacobian(p, res.x, r, J, res.evaluations)) return res;
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
        if (cancelled && cancelled()) break;
        Eigen::MatrixXd aug(m + n, n);
        aug.topRows(m) = J;
        aug.bottomRows(n) = (lambda * D).cwiseSqrt().asDiagonal();
        Eigen::VectorXd rhs = Eigen::VectorXd::Zero(m + n);
        rhs.head(m) = -r;
        const Eigen::VectorXd delta = aug.colPivHouseholderQr().solve(rhs);
        if (!delta.allFinite()) break;
        const Eigen::VectorXd x_new = res.x + delta;
        Eigen::VectorXd r_new;
        ++res.evaluations;
        const bool ok = p.evaluate(x_new, r_new);
        const double chi2_new = ok ? r_new.squaredNorm() : INFINITY;
        const double predicted = res.chi2 - (r + J * delta).squaredNorm();
        if (predicted >= 0.0 && predicted < 1e-8 * res.chi2 + 1e-4 && lambda < 1e-3) {
            res.converged = true;  // the linearised model promises nothing more: a minimum to working precision
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
            if (!finite_difference_jacobian(p, res.x, r, J, res.evaluations)) break;
            D = D.cwiseMax(diag_of(J));
            if (small) {
                res.converged = true;
                ++res.iterations;
                break;
            }
        } else {
            lambda *= nu;
            nu *= 2.0;
            if (lambda > 1e16) {
                res.converged = true;  // no further descent possible: at a minimum to working precision
                break;
            }
        }
    }
    res.jacobian = J;
    return res;
}

// ---------------------------------------------------------------------------------------------------------
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
    prob.evaluate = [&](const Eigen::VectorXd& x, Eigen::VectorXd& r) {
        ModelState s = reference;
        unpack_planets(setup, reference, x, s);
        return weighted_residuals(setup, run_model(setup, s, setup.t_end), r);
    };
    Eigen::VectorXd x = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(prob.parameters));
    LeastSquaresResult lm;
    for (int round = 0; round < 8; ++round) {
        lm = levenberg_marquardt(prob, x, 30);
        if (lm.evaluations == 0 || !std::isfinite(lm.chi2)) throw std::runtime_error("the known-bodies model could not be evaluated");
        x = lm.x;
        unpack_planets(setup, reference, x, fit.state);
        const ModelRun run = run_model(setup, fit.state, setup.t_end);
        const bool changed = update_weights(setup, residuals_arcsec(setup, run));
        if (progress) progress("known-bodies fit, round " + std::to_string(round + 1) + ": chi2 = " + std::to_string(lm.chi2));
        if (!changed) break;
    }
    // Final residuals and chi2 with the final weights.
    fit.run = run_model(setup, fit.state, setup.t_end);
    fit.residuals = residuals_arcsec(setup, fit.run);
    Eigen::VectorXd r;
    weighted_residuals(setup, fit.run, r);
    fit.chi2 = r.squaredNorm();
    for (const FitObservation& f : setup.obs) (f.rejected ? fit.rejected : fit.kept) += 1;
    fit.dof = 2 * fit.kept > prob.parameters ? 2 * fit.kept - prob.parameters : 1;
    int evals = 0;
    finite_difference_jacobian(prob, x, r, fit.jacobian, evals);
    return fit;
}

}  // namespace wayward
