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
            run.outcome = ModelOutcome::parameters_out_of_range;
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
    const double t0 = t_begin.value_or(setup.t_begin);
    if (setup.options.integrator == "wisdom-holman") {
        WisdomHolmanOptions wo;
        wo.central_quadrupole = setup.pair_quadrupole;
        WisdomHolmanResult r = integrate_wisdom_holman(sys, t0, std::max(t_end, t0), wo);
        if (r.outcome != WisdomHolmanOutcome::ok) {
            run.outcome = ModelOutcome::map_failed;
            run.map = r.outcome;
            return run;
        }
        run.outer = std::move(r.ephemeris);
        run.outcome = ModelOutcome::ok;
        return run;
    }
    IntegratorOptions io;
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
SkyPosition apparent_from(const ModelSetup& setup, const ModelRun& run, std::size_t index, double t, const Vec3& observer_helio) {
    const double gm_star = setup.known.gm[0], gm_obs = setup.known.gm[setup.observer];
    const double star_share = gm_star / (gm_star + gm_obs);
    const Vec3 observer = run.outer.position(0, t) + star_share * observer_helio;
    const Vec3 rel = setup.options.light_time == LightTime::corrected ? solve_light_time(run.outer, index, t, observer).relative
                                                                       : Vec3(run.outer.position(index, t) - observer);
    return to_sky(setup.frame.to_frame(rel));
}
}  // namespace

SkyPosition model_apparent(const ModelSetup& setup, const ModelRun& run, std::size_t index, double t) {
    return apparent_from(setup, run, index, t, setup.observer_helio_at(t));
}

bool weighted_residuals(const ModelSetup& setup, const ModelRun& run, Eigen::VectorXd& out) {
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

std::vector<std::array<double, 2>> residuals_arcsec(const ModelSetup& setup, const ModelRun& run) {
    std::vector<std::array<double, 2>> out;
    for (std::size_t k = 0; k < setup.obs.size(); ++k) {
        const FitObservation& f = setup.obs[k];
        const SkyPosition c = apparent_from(setup, run, run.planet_index[f.planet], f.time_days, setup.observer_helio[k]);
        out.push_back({wrap_pi(f.lon - c.lon) * std::cos(c.lat) / arcsec, (f.lat - c.lat) / arcsec});
    }
    return out;
}

}  // namespace wayward
