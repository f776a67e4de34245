// The fitting model. See model.hpp.
#include "sim/model/model.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <stdexcept>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"
#include "sim/model/wisdom_holman.hpp"

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

const std::vector<ModelIntegrator>& model_integrators() {
    static const std::vector<ModelIntegrator> table = {
        {"adaptive", "Runge-Kutta-Fehlberg 7(8), adaptive (rel_tol); the reference"},
        {"wisdom-holman", "Wisdom-Holman map in Jacobi coordinates, fixed step, Wisdom-Holman-Touma corrector; fast"},
    };
    return table;
}

bool is_model_integrator(const std::string& name) {
    const auto& t = model_integrators();
    return std::any_of(t.begin(), t.end(), [&](const ModelIntegrator& m) { return m.name == name; });
}

bool ModelSetup::weights_estimated() const {
    return std::any_of(era_records_sigma.begin(), era_records_sigma.end(), [](bool b) { return !b; });
}

Vec3 ModelSetup::observer_helio_at(double t) const { return inner.position(observer, t) - inner.position(0, t); }

ModelSetup make_setup(const Exercise& ex, const ModelOptions& options) {
    if (!is_model_integrator(options.integrator))
        throw std::invalid_argument("unknown fitting-model integrator '" + options.integrator + "'");
    era_systematics_from_name(options.era_systematics);  // throws for an unknown name
    if (options.derivatives != "variational" && options.derivatives != "differences")
        throw std::invalid_argument("unknown kind of derivatives '" + options.derivatives + "' (variational or differences)");
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
    // The reference era (no longitude offset): the most statistical weight, by the sigma as recorded (1" where not).
    {
        std::vector<double> weight(s.eras.size(), 0.0);
        for (const FitObservation& f : s.obs)
            weight[f.era] += 1.0 / (f.sigma_lon_arcsec * f.sigma_lon_arcsec) + 1.0 / (f.sigma_lat_arcsec * f.sigma_lat_arcsec);
        s.reference_era = static_cast<std::size_t>(std::max_element(weight.begin(), weight.end()) - weight.begin());
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
    io.method = "rkf78";  // the fitting model's adaptive integrator, tuned by rel_tol (the truth's default differs)
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

namespace {

// The fitting model's system at epoch 0 for a state: the central pair, the other known planets, the hidden body.
// Sets run.planet_index and run.hidden_index; false (with run.outcome set) for a hidden body out of range.
bool model_system(const ModelSetup& setup, const ModelState& state, ModelRun& run, System& sys) {
    const double gm_star = setup.known.gm[0], gm_obs = setup.known.gm[setup.observer];
    const double share = gm_obs / (gm_star + gm_obs);
    const StateVector obs0 = heliocentric(setup.known, setup.observer);
    const StateVector pair{share * obs0.position, share * obs0.velocity};  // pair barycentre relative to the star

    sys = System{};
    run.planet_index.clear();
    run.hidden_index.reset();
    sys.bodies.push_back({"pair", Role::star, false});
    sys.gm.push_back(gm_star + gm_obs);
    std::vector<StateVector> rel{StateVector{}};
    for (std::size_t i = 1; i < setup.known.size(); ++i) {
        if (i == setup.observer) continue;
        const auto it = std::find(setup.planets.begin(), setup.planets.end(), i);
        const StateVector helio = it != setup.planets.end() ? state.planets[static_cast<std::size_t>(it - setup.planets.begin())]
                                                            : heliocentric(setup.known, i);
        sys.bodies.push_back(setup.known.bodies[i]);
        sys.gm.push_back(setup.known.gm[i]);
        rel.push_back({helio.position - pair.position, helio.velocity - pair.velocity});
    }
    // planet_index follows setup.planets' order.
    for (std::size_t body : setup.planets) {
        std::size_t k = 0;
        for (std::size_t i = 1; i < sys.size(); ++i)
            if (sys.bodies[i].name == setup.known.bodies[body].name) k = i;
        run.planet_index.push_back(k);
    }
    if (state.hidden) {
        const HiddenOrbit& h = *state.hidden;
        if (!(h.mass > 0.0) || !(h.semi_major_axis > 0.0) || !(std::hypot(h.k, h.h) < 0.95) || !std::isfinite(h.mean_longitude)) {
            run.outcome = ModelOutcome::parameters_out_of_range;
            return false;
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
    return true;
}

WisdomHolmanOptions map_options(const ModelSetup& setup) {
    WisdomHolmanOptions wo;
    wo.central_quadrupole = setup.pair_quadrupole;
    return wo;
}

bool take_map_result(WisdomHolmanResult& r, ModelRun& run) {
    if (r.outcome != WisdomHolmanOutcome::ok) {
        run.outcome = ModelOutcome::map_failed;
        run.map = r.outcome;
        return false;
    }
    run.outer = std::move(r.ephemeris);
    run.tangent_parameters = r.tangent_parameters;
    run.tangents = std::move(r.tangents);
    run.outcome = ModelOutcome::ok;
    return true;
}

}  // namespace

ModelRun run_model(const ModelSetup& setup, const ModelState& state, double t_end, std::optional<double> t_begin) {
    ModelRun run;
    System sys;
    if (!model_system(setup, state, run, sys)) return run;
    const double t0 = t_begin.value_or(setup.t_begin);
    if (setup.options.integrator == "wisdom-holman") {
        WisdomHolmanResult r = integrate_wisdom_holman(sys, t0, std::max(t_end, t0), map_options(setup));
        take_map_result(r, run);
        return run;
    }
    IntegratorOptions io;
    io.method = "rkf78";  // see make_setup
    io.rel_tol = setup.options.rel_tol;
    io.central_quadrupole = setup.pair_quadrupole;
    // A trial orbit that runs into a close encounter must fail fast (the fit then rejects the step), not fill
    // memory with dense output: ordinary model runs take a few thousand steps.
    io.max_steps = 200'000;
    IntegrationResult r = integrate(sys, t0, std::max(t_end, t0), io);
    if (r.outcome != IntegrationOutcome::ok) {
        run.outcome = ModelOutcome::integration_failed;
        run.integration = r.outcome;
        return run;
    }
    run.outer = std::move(r.ephemeris);
    run.outcome = ModelOutcome::ok;
    return run;
}

std::vector<Eigen::Index> parameter_columns(std::size_t count, Eigen::Index first) {
    std::vector<Eigen::Index> c(count);
    for (std::size_t j = 0; j < count; ++j) c[j] = first + static_cast<Eigen::Index>(j);
    return c;
}

bool has_tangent_map(const ModelSetup& setup, std::size_t parameters) {
    return setup.options.integrator == "wisdom-holman" && setup.options.derivatives == "variational" && parameters > 0 &&
           parameters <= max_tangent_parameters;
}

ModelRun run_model_tangent(const ModelSetup& setup, const StateOf& state_of, const Eigen::VectorXd& x,
                           const std::vector<Eigen::Index>& columns, const Eigen::VectorXd& seed_steps, double t_end,
                           std::optional<double> t_begin) {
    if (!has_tangent_map(setup, columns.size()))
        throw std::invalid_argument("run_model_tangent: the fitting model has no tangent map for this run");
    ModelRun run;
    System sys;
    if (!model_system(setup, state_of(x), run, sys)) return run;
    // The seed: derivatives of the initial state and the GMs, by central differences of the closed-form map
    // from parameters to state (elements to Cartesian, heliocentric to barycentric; no integration). Its steps
    // (seed_steps) are small enough that the truncation error, h^2/6 of the third derivative, is ~1e-10.
    const std::size_t p = columns.size(), n = sys.size();
    TangentSeed seed;
    seed.parameters = p;
    seed.state.assign(6 * n * p, 0.0);
    seed.gm.assign(n * p, 0.0);
    for (std::size_t q = 0; q < p; ++q) {
        const Eigen::Index j = columns[q];
        const double h = seed_steps[j];
        System lo, hi;
        ModelRun scratch;
        Eigen::VectorXd xp = x;
        xp[j] = x[j] + h;
        if (!model_system(setup, state_of(xp), scratch, hi)) return scratch;
        xp[j] = x[j] - h;
        if (!model_system(setup, state_of(xp), scratch, lo)) return scratch;
        for (std::size_t i = 0; i < 6 * n; ++i) seed.state[i * p + q] = (hi.state[i] - lo.state[i]) / (2.0 * h);
        for (std::size_t i = 0; i < n; ++i) seed.gm[i * p + q] = (hi.gm[i] - lo.gm[i]) / (2.0 * h);
    }
    const double t0 = t_begin.value_or(setup.t_begin);
    WisdomHolmanResult r = integrate_wisdom_holman(sys, t0, std::max(t_end, t0), map_options(setup), seed);
    take_map_result(r, run);
    return run;
}

std::string ModelRun::problem() const {
    switch (outcome) {
        case ModelOutcome::not_run: return "the model was not run";
        case ModelOutcome::ok: return "none";
        case ModelOutcome::parameters_out_of_range: return "hidden-body parameters out of range";
        case ModelOutcome::integration_failed: return "model integration failed: " + to_string(integration);
        case ModelOutcome::map_failed: return "model integration failed: " + to_string(map);
    }
    return "unknown";
}

namespace {
// The observer's barycentric position at t: the central pair's barycentre from the run, plus the observer's
// offset from it (its heliocentric position times the star's share of the pair's mass).
Vec3 observer_at(const ModelSetup& setup, const ModelRun& run, double t, const Vec3& observer_helio) {
    const double gm_star = setup.known.gm[0], gm_obs = setup.known.gm[setup.observer];
    return run.outer.position(0, t) + gm_star / (gm_star + gm_obs) * observer_helio;
}

SkyPosition apparent_from(const ModelSetup& setup, const ModelRun& run, std::size_t index, double t, const Vec3& observer_helio) {
    const Vec3 observer = observer_at(setup, run, t, observer_helio);
    const Vec3 rel = setup.options.light_time == LightTime::corrected ? solve_light_time(run.outer, index, t, observer).relative
                                                                       : Vec3(run.outer.position(index, t) - observer);
    return to_sky(setup.frame.to_frame(rel));
}

// d(position of `body` at t)/d(parameters), 3 x P, by quintic Hermite interpolation of the nodes' position,
// velocity and acceleration tangents (error ~ (2 pi h / P)^6 / 46080 of the tangent for nodes h apart on an
// orbit of period P: ~1e-7 at the map's node spacing of 1/16 of the shortest period).
Eigen::MatrixXd position_tangent(const ModelRun& run, std::size_t body, double t) {
    const Ephemeris& e = run.outer;
    const std::size_t n = e.size(), p = run.tangent_parameters, rows = tangent_rows_per_body;
    auto it = std::upper_bound(e.times.begin(), e.times.end(), t);
    std::size_t k1 = static_cast<std::size_t>(it - e.times.begin());
    if (k1 >= e.times.size()) k1 = e.times.size() - 1;
    if (k1 == 0) k1 = 1;
    const std::size_t k0 = k1 - 1;
    const double h = e.times[k1] - e.times[k0], s = (t - e.times[k0]) / h;
    const double s2 = s * s, s3 = s2 * s, s4 = s3 * s, s5 = s4 * s;
    // The quintic Hermite basis: values, first and second derivatives at both ends.
    const double w[6] = {1.0 - 10.0 * s3 + 15.0 * s4 - 6.0 * s5,
                         h * (s - 6.0 * s3 + 8.0 * s4 - 3.0 * s5),
                         h * h * 0.5 * (s2 - 3.0 * s3 + 3.0 * s4 - s5),
                         10.0 * s3 - 15.0 * s4 + 6.0 * s5,
                         h * (-4.0 * s3 + 7.0 * s4 - 3.0 * s5),
                         h * h * 0.5 * (s3 - 2.0 * s4 + s5)};
    Eigen::MatrixXd d(3, static_cast<Eigen::Index>(p));
    const double* t0 = &run.tangents[(rows * n * k0 + rows * body) * p];
    const double* t1 = &run.tangents[(rows * n * k1 + rows * body) * p];
    for (std::size_t c = 0; c < 3; ++c)
        for (std::size_t q = 0; q < p; ++q)
            d(static_cast<Eigen::Index>(c), static_cast<Eigen::Index>(q)) =
                w[0] * t0[c * p + q] + w[1] * t0[(c + 3) * p + q] + w[2] * t0[(c + 6) * p + q] +
                w[3] * t1[c * p + q] + w[4] * t1[(c + 3) * p + q] + w[5] * t1[(c + 6) * p + q];
    return d;
}
}  // namespace

SkyTangent apparent_tangent(const ModelSetup& setup, const ModelRun& run, std::size_t index, double t, const Vec3& observer_helio) {
    if (run.tangent_parameters == 0) throw std::invalid_argument("apparent_tangent: the model run has no tangents");
    const Vec3 observer = observer_at(setup, run, t, observer_helio);
    // rel = x_target(t - tau) - x_pair(t) - const, tau = |rel| / c. Differentiating:
    // d rel = A - v_target (u . d rel) / c with A = T_target(t - tau) - T_pair(t), u = rel / |rel|, so
    // d rel = A - v (u^T A) / (c + u . v) (Sherman-Morrison).
    Vec3 rel;
    Eigen::MatrixXd A;
    if (setup.options.light_time == LightTime::corrected) {
        const LightTimeSolution l = solve_light_time(run.outer, index, t, observer);
        rel = l.relative;
        const double t_emit = std::max(t - l.tau_days, run.outer.t_begin());
        A = position_tangent(run, index, t_emit) - position_tangent(run, 0, t);
        const Vec3 v = run.outer.state(index, t_emit).velocity, u = rel.normalized();
        A -= v * ((u.transpose() * A) / (c_au_per_day + u.dot(v)));
    } else {
        rel = run.outer.position(index, t) - observer;
        A = position_tangent(run, index, t) - position_tangent(run, 0, t);
    }
    const Vec3 w = setup.frame.to_frame(rel);
    const Eigen::MatrixXd dw = setup.frame.rotation * A;
    SkyTangent out;
    out.at = to_sky(w);
    // lon = atan2(y, x), lat = atan2(z, rho), rho = hypot(x, y).
    const double rho2 = w.x() * w.x() + w.y() * w.y(), rho = std::sqrt(rho2), r2 = rho2 + w.z() * w.z();
    out.d_lon = (w.x() * dw.row(1) - w.y() * dw.row(0)) / rho2;
    out.d_lat = (rho2 * dw.row(2) - w.z() * (w.x() * dw.row(0) + w.y() * dw.row(1))) / (r2 * rho);
    return out;
}

bool weighted_residual_jacobian(const ModelSetup& setup, const ModelRun& run, Eigen::MatrixXd& jac) {
    if (!run.ok() || run.tangent_parameters == 0) return false;
    jac = Eigen::MatrixXd::Zero(static_cast<Eigen::Index>(2 * setup.obs.size()), static_cast<Eigen::Index>(run.tangent_parameters));
    for (std::size_t k = 0; k < setup.obs.size(); ++k) {
        const FitObservation& f = setup.obs[k];
        if (f.rejected) continue;
        const SkyTangent d = apparent_tangent(setup, run, run.planet_index[f.planet], f.time_days, setup.observer_helio[k]);
        const auto e = static_cast<Eigen::Index>(2 * k);
        // r_lon = wrap(O - lon) cos(lat) / (arcsec sigma), r_lat = (O - lat) / (arcsec sigma).
        const double dl = wrap_pi(f.lon - d.at.lon);
        jac.row(e) = -(std::cos(d.at.lat) * d.d_lon + dl * std::sin(d.at.lat) * d.d_lat) / (arcsec * f.sigma_lon_arcsec);
        jac.row(e + 1) = -d.d_lat / (arcsec * f.sigma_lat_arcsec);
    }
    if (setup.options.era_systematics != "none") project_out_era_systematics(setup.era_view(), jac);
    return jac.allFinite();
}

SkyPosition model_apparent(const ModelSetup& setup, const ModelRun& run, std::size_t index, double t) {
    return apparent_from(setup, run, index, t, setup.observer_helio_at(t));
}

namespace {
// Weighted residuals before any era-systematics projection.
bool raw_weighted_residuals(const ModelSetup& setup, const ModelRun& run, Eigen::VectorXd& out) {
    if (!run.ok()) return false;
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
}  // namespace

bool weighted_residuals(const ModelSetup& setup, const ModelRun& run, Eigen::VectorXd& out) {
    if (!raw_weighted_residuals(setup, run, out)) return false;
    if (setup.options.era_systematics != "none") project_out_era_systematics(setup.era_view(), out);
    return true;
}

std::vector<std::array<double, 2>> residuals_arcsec(const ModelSetup& setup, const ModelRun& run) {
    std::vector<std::array<double, 2>> out;
    for (std::size_t k = 0; k < setup.obs.size(); ++k) {
        const FitObservation& f = setup.obs[k];
        const SkyPosition c = apparent_from(setup, run, run.planet_index[f.planet], f.time_days, setup.observer_helio[k]);
        out.push_back({wrap_pi(f.lon - c.lon) * std::cos(c.lat) / arcsec, (f.lat - c.lat) / arcsec});
    }
    Eigen::VectorXd r;
    if (setup.options.era_systematics != "none" && raw_weighted_residuals(setup, run, r)) {
        const std::vector<std::array<double, 2>> sys = fitted_era_systematics(setup.era_view(), r);
        for (std::size_t k = 0; k < out.size(); ++k) {
            out[k][0] -= sys[k][0];
            out[k][1] -= sys[k][1];
        }
    }
    return out;
}

}  // namespace wayward
