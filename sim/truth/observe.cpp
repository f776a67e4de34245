// Synthetic observation records; see observe.hpp.
#include "sim/truth/observe.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "sim/base/units.hpp"

namespace wayward {

double round_to_precision(double value_deg, double step_arcsec) {
    if (!(step_arcsec > 0.0)) return value_deg;
    const double steps = std::round(value_deg * 3600.0 / step_arcsec);
    return steps * step_arcsec / 3600.0;
}

std::vector<Season> visibility_seasons(const Ephemeris& eph, std::size_t observer, std::size_t target, double t0,
                                       double t1, double limit) {
    // Scan at 2-day steps, then refine each crossing of the limit by bisection to 1e-6 d.
    std::vector<Season> out;
    const double step = 2.0;
    auto above = [&](double t) { return elongation(eph, observer, target, t) > limit; };
    auto refine = [&](double lo, double hi, bool lo_state) {
        for (int k = 0; k < 40 && hi - lo > 1e-6; ++k) {
            const double mid = 0.5 * (lo + hi);
            if (above(mid) == lo_state) lo = mid; else hi = mid;
        }
        return lo_state ? lo : hi;  // a time that is inside the season
    };
    bool inside = above(t0);
    double begin = t0;
    for (double t = t0; t < t1;) {
        const double next = std::min(t + step, t1);
        const bool now = above(next);
        if (now != inside) {
            const double edge = refine(t, next, inside);
            if (inside) out.push_back({begin, edge});
            else begin = edge;
            inside = now;
        }
        t = next;
    }
    if (inside) out.push_back({begin, t1});
    return out;
}

namespace {

struct Draw {
    Observation obs;
    ObservationTruth truth;
};

Draw make_observation(const Ephemeris& eph, const ObserverFrame& frame, std::size_t observer, std::size_t target,
                      double t, double sigma_lon, double sigma_lat, double sys_lon, double sys_lat, double outlier_p,
                      double outlier_sigma, double precision, Rng& rng, const NoiseSwitches& sw) {
    const Apparent a = apparent(eph, frame, observer, target, t);
    Draw d;
    d.obs.time_days = t;
    d.obs.target = eph.bodies[target].name;
    d.truth.true_lon_deg = a.sky.lon / deg;
    d.truth.true_lat_deg = a.sky.lat / deg;
    d.truth.elongation_deg = elongation(eph, observer, target, t) / deg;
    // Draw every random number whether or not its source is on, so switching one source off leaves the
    // others' draws unchanged (the error budget relies on this).
    const double u = uniform01(rng);
    const double g_lon = normal(rng), g_lat = normal(rng);
    const bool outlier = sw.outliers && u < outlier_p;
    d.truth.outlier = outlier;
    double e_lon = 0.0, e_lat = 0.0;  // arcsec, in lambda*cos(beta) and beta
    if (outlier) {
        e_lon = outlier_sigma * sw.sigma_scale * g_lon;
        e_lat = outlier_sigma * sw.sigma_scale * g_lat;
    } else if (sw.random) {
        e_lon = sigma_lon * sw.sigma_scale * g_lon;
        e_lat = sigma_lat * sw.sigma_scale * g_lat;
    }
    if (sw.systematic) {
        d.truth.systematic_lon_arcsec = sys_lon;
        d.truth.systematic_lat_arcsec = sys_lat;
        e_lon += sys_lon;
        e_lat += sys_lat;
    }
    const double lat = a.sky.lat + e_lat * arcsec;
    const double lon = a.sky.lon + e_lon * arcsec / std::cos(a.sky.lat);
    const double step = sw.rounding ? precision : 0.0;
    d.obs.lon_deg = round_to_precision(wrap_two_pi(lon) / deg, step);
    if (d.obs.lon_deg >= 360.0) d.obs.lon_deg -= 360.0;
    d.obs.lat_deg = round_to_precision(lat / deg, step);
    return d;
}

}  // namespace

ObservationSet observe(const Scenario& sc, const Truth& truth, const Ephemeris& eph, std::uint64_t seed,
                       const NoiseSwitches& sw) {
    const ObservingPlan& plan = sc.plan;
    if (!plan.present) throw std::invalid_argument(sc.file + ": the scenario has no [observing] plan");
    const std::size_t observer = truth.system.observer_index();
    const ObserverFrame frame = observer_frame(truth.system, observer);
    std::vector<std::size_t> targets;
    if (plan.targets.empty()) {
        for (std::size_t i = 1; i < truth.system.size(); ++i)
            if (truth.system.bodies[i].role == Role::known && i != observer) targets.push_back(i);
    } else {
        for (const std::string& n : plan.targets) targets.push_back(truth.system.index_of(n));
    }
    const double limit = plan.elongation_limit_deg * deg;
    std::vector<Draw> draws;

    for (std::size_t e = 0; e < plan.eras.size(); ++e) {
        const Era& era = plan.eras[e];
        const double t0 = days_from_year(sc.epoch0_year, era.start_year);
        const double t1 = std::min(days_from_year(sc.epoch0_year, era.end_year), eph.t_end());
        for (std::size_t ti = 0; ti < targets.size(); ++ti) {
            const std::size_t target = targets[ti];
            // One stream per (era, target): adding a target or an era does not disturb the others.
            Rng rng = make_rng(seed, "observe", (e << 16) | ti);
            for (const Season& s : visibility_seasons(eph, observer, target, t0, t1, limit)) {
                std::vector<double> times;
                for (int k = 0; k < era.per_season; ++k) times.push_back(uniform(rng, s.begin, s.end));
                std::sort(times.begin(), times.end());
                for (double t : times) {
                    const double years_in = (t - t0) / julian_year_days;
                    const double sys_lon = era.offset_lon_arcsec + era.drift_lon_arcsec_per_yr * years_in;
                    const double sys_lat = era.offset_lat_arcsec + era.drift_lat_arcsec_per_yr * years_in;
                    Draw d = make_observation(eph, frame, observer, target, t, era.sigma_lon_arcsec, era.sigma_lat_arcsec,
                                              sys_lon, sys_lat, era.outlier_fraction, era.outlier_sigma_arcsec,
                                              era.precision_arcsec, rng, sw);
                    if (!(d.truth.elongation_deg > plan.elongation_limit_deg)) continue;  // edge of a season
                    d.obs.era = era.label;
                    if (era.records_sigma) {
                        d.obs.sigma_lon_arcsec = era.sigma_lon_arcsec * sw.sigma_scale;
                        d.obs.sigma_lat_arcsec = era.sigma_lat_arcsec * sw.sigma_scale;
                    }
                    draws.push_back(std::move(d));
                }
            }
        }
    }
    for (std::size_t k = 0; k < plan.early.size(); ++k) {
        const EarlySighting& es = plan.early[k];
        const std::size_t target = truth.system.index_of(es.target);
        Rng rng = make_rng(seed, "observe-early", k);
        double t = days_from_year(sc.epoch0_year, es.year);
        t = std::clamp(t, eph.t_begin() + 1.0, eph.t_end());
        // A sighting too close to the star is moved to the nearest visible day (within a year).
        if (!(elongation(eph, observer, target, t) > limit)) {
            double found = t;
            for (double dt = 1.0; dt < 400.0; dt += 1.0) {
                if (t + dt <= eph.t_end() && elongation(eph, observer, target, t + dt) > limit) { found = t + dt; break; }
                if (t - dt >= eph.t_begin() + 1.0 && elongation(eph, observer, target, t - dt) > limit) { found = t - dt; break; }
            }
            t = found;
        }
        Draw d = make_observation(eph, frame, observer, target, t, es.sigma_arcsec, es.sigma_arcsec, 0.0, 0.0, 0.0, 0.0,
                                  0.0, rng, sw);
        if (!(d.truth.elongation_deg > plan.elongation_limit_deg)) continue;
        d.obs.era = "early sighting";
        d.obs.sigma_lon_arcsec = es.sigma_arcsec * sw.sigma_scale;
        d.obs.sigma_lat_arcsec = es.sigma_arcsec * sw.sigma_scale;
        draws.push_back(std::move(d));
    }
    std::stable_sort(draws.begin(), draws.end(), [](const Draw& a, const Draw& b) {
        return a.obs.time_days != b.obs.time_days ? a.obs.time_days < b.obs.time_days : a.obs.target < b.obs.target;
    });
    ObservationSet out;
    for (Draw& d : draws) {
        out.records.push_back(std::move(d.obs));
        out.truth.push_back(d.truth);
    }
    return out;
}

}  // namespace wayward
