// The night-by-night search rehearsal. See rehearsal.hpp for what each side knows.
#include "sim/night/rehearsal.hpp"

#include <algorithm>
#include <cmath>
#include <optional>

#include "sim/base/errors.hpp"
#include "sim/base/random.hpp"
#include "sim/base/units.hpp"
#include "sim/physics/elements.hpp"
#include "sim/search/brightness.hpp"

namespace wayward {

std::string to_string(VisitOutcome o) {
    switch (o) {
        case VisitOutcome::observed: return "observed";
        case VisitOutcome::revisit: return "revisit";
        case VisitOutcome::cloudy: return "cloudy";
        case VisitOutcome::refused_near_star: return "refused: too near the star";
        case VisitOutcome::refused_daylight: return "refused: not dark";
        case VisitOutcome::refused_low: return "refused: too low";
        case VisitOutcome::idle: return "no field";
    }
    return "?";
}

std::string to_string(NightIdle why) {
    switch (why) {
        case NightIdle::none: return "";
        case NightIdle::cloudy: return "cloudy";
        case NightIdle::no_darkness: return "no darkness: the star never sinks far enough below the horizon";
        case NightIdle::near_star: return "the region is within the elongation limit of the star";
        case NightIdle::too_low: return "the region is below the minimum altitude all through the darkness";
        case NightIdle::too_short: return "the region is observable too briefly for one field";
        case NightIdle::unplanned: return "the team's plan names no field for this night";
    }
    return "?";
}

namespace {

constexpr double slope_parameter_g = 0.15;  // the H,G law's usual default slope parameter (Bowell et al. 1989)

// The truth's view: the body's place and brightness, the true observer path.
struct TruthView {
    const TruthEphemeris& eph;
    double h = 0.0;
    Vec3 observer_helio(double d) const {
        const Ephemeris& e = eph.run.ephemeris;
        return eph.frame.to_frame(e.position(eph.observer, d) - e.position(0, d));
    }
    BodyInField body(double d) const {
        const Ephemeris& e = eph.run.ephemeris;
        const Apparent a = apparent(e, eph.frame, eph.observer, eph.hidden, d);
        const double te = d - a.light_time_days;
        const double r = (e.position(eph.hidden, te) - e.position(0, te)).norm();
        const double big_r = (e.position(eph.observer, d) - e.position(0, d)).norm();
        const double delta = a.sky.distance;
        return {true, a.sky.lon, a.sky.lat, apparent_magnitude(h, slope_parameter_g, r, delta, phase_angle(r, delta, big_r))};
    }
};

struct Pending {
    Field field;
    double first_t = 0.0;
    std::vector<Detection> candidates;
    bool next_night = false;
    int tries = 0;
};

double sep(const Detection& a, const Detection& b) {
    return std::hypot(wrap_pi(a.lon - b.lon) * std::cos(a.lat), a.lat - b.lat);
}

struct NightContext {
    const Telescope& tel;
    const Site& site;
    const ObserverPath& team_path;
    const TruthView& truth;
    SkyModel& sky;
    SearchRegion& region;
    std::vector<bool> seen;   // per region sample: inside a field searched on a clear night
    RehearsalResult& out;
    const RehearsalOptions& opt;
    double epoch0_year = 0.0;
    double rate_pred = 0.0;   // radians/day
    double gap_minutes = 60.0;
    // What "a body beyond the known planets" means to the revisit: at least this far from the observer, and moving
    // on its own orbit no faster than a circular orbit at the outermost known planet's distance.
    double min_distance_au = 1.0;
    double max_own_speed_au_per_day = 0.0;
    std::uint64_t visit_counter = 0;
};

// One exposure of field f at day t (already allowed by the team's check). Returns the record; the caller files it.
VisitRecord observe(NightContext& c, const Field& f, int night, double t, int visit, Exposure& exposure) {
    VisitRecord v;
    v.night = night;
    v.t_days = t;
    v.field = f.id;
    v.visit = visit;
    const double t_mid = t + 0.5 * c.tel.exposure_min / 1440.0;
    field_centre(c.region, f, decimal_year(c.epoch0_year, t_mid), v.lon, v.lat);
    const Vec3 dir = unit_vector(v.lon, v.lat);
    // The true geometry has the last word on every pointing.
    const ObserverPath true_path = [&c](double d) { return c.truth.observer_helio(d); };
    const PointingCheck chk = check_pointing(c.site, true_path, dir, t_mid);
    v.altitude = chk.altitude;
    v.airmass = chk.airmass;
    v.elongation = chk.elongation;
    v.star_altitude = chk.star_altitude;
    if (chk.outcome == Pointing::too_near_star) { v.outcome = VisitOutcome::refused_near_star; return v; }
    if (chk.outcome == Pointing::daylight) { v.outcome = VisitOutcome::refused_daylight; return v; }
    if (chk.outcome == Pointing::too_low) { v.outcome = VisitOutcome::refused_low; return v; }
    v.limit_mag = limit_at_airmass(c.tel.limiting_mag, c.tel.extinction_mag_per_airmass, chk.airmass);
    exposure = c.sky.expose(v.lon, v.lat, t_mid, v.limit_mag, ++c.visit_counter, c.truth.body(t_mid));
    v.exposure = c.visit_counter;
    for (const Detection& d : exposure.candidates) v.candidate_places.push_back({d.lon, d.lat, v.limit_mag});
    v.detections = exposure.detections;
    v.candidates = static_cast<int>(exposure.candidates.size());
    v.outcome = visit == 1 ? VisitOutcome::observed : VisitOutcome::revisit;
    return v;
}

// Marks the region's samples inside a searched field and lowers their weight (nothing was confirmed there).
void searched(NightContext& c, const Field& f, double t) {
    const Field o = as_offset(c.region, f, decimal_year(c.epoch0_year, t));
    for (std::size_t k = 0; k < c.region.samples.size(); ++k)
        if (inside_field(c.tel, c.region.samples[k].xi - o.xi, c.region.samples[k].eta - o.eta)) c.seen[k] = true;
    lower_weights(c.region, c.tel, o, c.opt.assumed_detection);
}

// Settles the pending candidates with a revisit's candidates. Returns true when the body is confirmed. A mover
// must have gone at least 5 sigma, and its displacement must be one a body beyond the known planets could make:
// the observer's own displacement between the visits seen from some distance D at least min_distance_au (the
// parallactic motion -dx_perp / D, which the team knows well from its own orbit), plus the body's own orbital
// motion over D (at most the circular speed at the outermost known planet), plus 5 sigma. This does not lean on
// the solution's predicted rate, which is wrong whenever the solution's distance or phase is, and it keeps two
// unrelated transients from passing for one moving body.

// The distance from the displacement (east, north, radians) that a body beyond the known planets could have made
// between days t0 and t1 from direction (lon, lat); 0 when it fits such a body exactly.
double beyond_known_miss(const NightContext& c, double lon, double lat, double t0, double t1, double east, double north) {
    const Vec3 u = unit_vector(lon, lat);
    const Vec3 e(-std::sin(lon), std::cos(lon), 0.0);
    const Vec3 n(-std::sin(lat) * std::cos(lon), -std::sin(lat) * std::sin(lon), std::cos(lat));
    const Vec3 dx = c.team_path(t1) - c.team_path(t0);
    const Vec3 perp = dx - u * u.dot(dx);
    const double px = -perp.dot(e), py = -perp.dot(n);  // the parallactic displacement times the distance
    const double s_max = 1.0 / c.min_distance_au;       // the largest inverse distance allowed
    const double p2 = px * px + py * py;
    const double s = p2 > 0.0 ? std::clamp((east * px + north * py) / p2, 0.0, s_max) : 0.0;
    const double own = c.max_own_speed_au_per_day * std::abs(t1 - t0) * s_max;  // own motion, at most
    return std::max(0.0, std::hypot(east - s * px, north - s * py) - own);
}

bool settle(NightContext& c, Pending& p, const Exposure& again, double t, VisitRecord& v) {
    const double sigma2 = std::sqrt(2.0) * c.tel.astrometric_error_arcsec * arcsec;
    const double tolerance = 5.0 * sigma2;
    std::vector<Detection> still_open;
    bool found = false;
    for (const Detection& a : p.candidates) {
        double nearest = 1e9;
        const Detection* mover = nullptr;
        for (const Detection& b : again.candidates) {
            const double d = sep(a, b);
            nearest = std::min(nearest, d);
            const double miss = beyond_known_miss(c, a.lon, a.lat, p.first_t, t, wrap_pi(b.lon - a.lon) * std::cos(a.lat), b.lat - a.lat);
            if (d >= 5.0 * sigma2 && miss <= tolerance && (!mover || d < sep(a, *mover))) mover = &b;
        }
        if (nearest < 3.0 * sigma2) {
            ++v.rejected;  // in place: a star (variable, or missing from the chart)
        } else if (mover) {
            ++v.confirmed;
            if (a.source == Source::body && mover->source == Source::body) {
                found = true;
                c.out.found_lon = mover->lon;
                c.out.found_lat = mover->lat;
            } else {
                ++c.out.false_confirmations;
                ++v.rejected;
            }
        } else if (nearest < 5.0 * sigma2 && p.tries < 3) {
            ++v.open;  // moved a little: look again later
            still_open.push_back(a);
        } else {
            ++v.rejected;  // gone: a spurious detection
        }
    }
    c.out.false_candidates += v.rejected;
    p.candidates = still_open;
    return found;
}

}  // namespace

SkyModel rehearsal_sky_model(const Telescope& tel, const RehearsalOptions& opt) {
    SkySpec sky = opt.sky;
    sky.seed = derive_seed(opt.seed, "sky");
    sky.faint_mag = tel.limiting_mag + 5.0 * tel.detection_width_mag;  // fainter stars are recorded < 1 % of the time
    return SkyModel(sky, tel, opt.chart, opt.seed);
}

double hidden_absolute_magnitude(const AnswerKey& key) {
    const auto hidden = key.hidden_index();
    if (!hidden) throw InputError(key.file, 0, "body", "the answer key has no hidden body");
    const DrawnBody& hb = key.bodies[*hidden - 1];
    if (!(hb.radius_km > 0.0 && hb.geometric_albedo > 0.0))
        throw InputError(key.file, 0, "body.radius_km",
                         "the answer key gives the hidden body no surface (radius_km, geometric_albedo): make the exercise again with this version");
    return absolute_magnitude(2.0 * hb.radius_km, hb.geometric_albedo);
}

RehearsalResult run_rehearsal(const Brief& brief, const Solution& solution, const Telescope& tel, const AnswerKey& key,
                              const RehearsalOptions& opt) {
    const double h = hidden_absolute_magnitude(key);
    return run_rehearsal(brief, solution, tel, integrate_truth(brief, key), h, opt);
}

namespace {

struct NightPlan {
    std::vector<Field> fields;
    std::vector<std::size_t> order;
    std::vector<bool> near_star;  // too near the star tonight: out of the order altogether
};

// Tonight's fields and their order, and the plan's rows: fields in order as far as the dark hours reach, never
// one too near the star.
NightPlan plan_night(NightContext& c, const Night& night, std::vector<bool>& covered) {
    NightPlan plan;
    RehearsalResult& out = c.out;
    plan.fields = out.fields;
    if (c.opt.strategy.kind == StrategyKind::plan) {
        plan.fields.clear();
        for (std::size_t k = 0; k < c.opt.plan.size(); ++k)
            if (c.opt.plan[k].night == night.index)
                plan.fields.push_back({static_cast<int>(k + 1), 0.0, 0.0, true, c.opt.plan[k].lon, c.opt.plan[k].lat});
        covered.assign(plan.fields.size(), false);
    }
    const double mid_days = 0.5 * (night.dark_start_days + night.dark_end_days);
    const double mid_year = decimal_year(c.epoch0_year, mid_days);
    std::vector<Field> offsets;
    for (const Field& f : plan.fields) offsets.push_back(as_offset(out.region, f, mid_year));
    const std::vector<double> prob = field_probabilities(out.region, c.tel, offsets);
    plan.order = night_order(c.opt.strategy, out.region, offsets, prob, covered);
    const auto capacity = static_cast<std::size_t>(std::max(0.0, night.dark_hours() * 60.0 / c.tel.minutes_per_field()));
    plan.near_star.assign(plan.fields.size(), false);
    std::size_t listed = 0;
    for (std::size_t i : plan.order) {
        double lon = 0.0, lat = 0.0;
        field_centre(out.region, plan.fields[i], mid_year, lon, lat);
        if (check_pointing(c.site, c.team_path, unit_vector(lon, lat), mid_days).outcome == Pointing::too_near_star) {
            plan.near_star[i] = true;
            ++out.fields_kept_from_star;
            continue;
        }
        if (listed < capacity)
            out.plan.push_back({night.index, static_cast<int>(++listed), plan.fields[i].id, lon, lat, prob[i],
                                observable_hours(c.site, c.team_path, night, unit_vector(lon, lat))});
    }
    return plan;
}

// A clear night worked from dark to dark: a due revisit first, then the next field in the order that the team's
// own geometry allows now; five minutes' wait when nothing does.
void work_night(NightContext& c, const Night& night, const NightPlan& plan, std::vector<bool>& covered,
                std::vector<Pending>& pending, NightRecord& rec) {
    RehearsalResult& out = c.out;
    const Telescope& tel = c.tel;
    const double dt_field = tel.minutes_per_field() / 1440.0;
    const double wait = 5.0 / 1440.0;
    std::vector<bool> done = plan.near_star;
    for (double t = night.dark_start_days; t + dt_field <= night.dark_end_days && !out.found;) {
        auto team_ok = [&](const Field& f) {
            double lon = 0.0, lat = 0.0;
            const double tm = t + 0.5 * tel.exposure_min / 1440.0;
            field_centre(out.region, f, decimal_year(c.epoch0_year, tm), lon, lat);
            return check_pointing(c.site, c.team_path, unit_vector(lon, lat), tm).outcome == Pointing::ok;
        };
        std::optional<std::size_t> rv;
        for (std::size_t k = 0; k < pending.size() && !rv; ++k) {
            const Pending& p = pending[k];
            const bool due = !p.next_night && ((t - p.first_t) * 1440.0 >= c.gap_minutes || p.first_t < night.start_days);
            if (due && team_ok(p.field)) rv = k;
        }
        std::optional<std::size_t> fresh;
        if (!rv)
            for (std::size_t k : plan.order)
                if (!done[k] && team_ok(plan.fields[k])) { fresh = k; break; }
        if (!rv && !fresh) { t += wait; continue; }
        const std::size_t fi = rv ? 0 : *fresh;
        const Field target = rv ? pending[*rv].field : plan.fields[fi];
        Exposure exposure;
        VisitRecord v = observe(c, target, night.index, t, rv ? 2 : 1, exposure);
        t += dt_field;
        rec.hours_used += dt_field * 24.0;
        if (fresh) done[fi] = true;
        if (v.outcome != VisitOutcome::observed && v.outcome != VisitOutcome::revisit) {
            out.log.push_back(v);
            continue;
        }
        if (fresh) {
            ++rec.fields;
            covered[fi] = true;
            searched(c, plan.fields[fi], t);
            if (!exposure.candidates.empty())
                pending.push_back({plan.fields[fi], v.t_days, exposure.candidates, c.opt.strategy.revisit_next_night, 0});
        } else {
            ++rec.revisits;
            Pending& p = pending[*rv];
            ++p.tries;
            const bool found = settle(c, p, exposure, v.t_days, v);
            if (found) {
                out.found = true;
                out.found_night = night.index;
                out.found_year = decimal_year(c.epoch0_year, v.t_days);
            } else if (v.open == 0) {
                out.false_candidate_hours += tel.minutes_per_field() / 60.0;  // nothing but false candidates
            }
            if (p.candidates.empty() || found) pending.erase(pending.begin() + static_cast<std::ptrdiff_t>(*rv));
        }
        out.log.push_back(v);
    }
}

// Why a clear night searched no field, tried in the order a team would check: darkness, the star, the altitude
// (any field observable for a moment in tonight's darkness), else the windows were too short for a field.
NightIdle idle_reason(const NightContext& c, const Night& night, const NightPlan& plan) {
    if (night.dark_hours() <= 0.0) return NightIdle::no_darkness;
    const bool all_near = std::all_of(plan.near_star.begin(), plan.near_star.end(), [](bool b) { return b; });
    if (plan.fields.empty()) return NightIdle::unplanned;
    if (all_near) return NightIdle::near_star;
    const double mid_year = decimal_year(c.epoch0_year, 0.5 * (night.dark_start_days + night.dark_end_days));
    for (std::size_t i = 0; i < plan.fields.size(); ++i) {
        if (plan.near_star[i]) continue;
        double lon = 0.0, lat = 0.0;
        field_centre(c.out.region, plan.fields[i], mid_year, lon, lat);
        if (observable_hours(c.site, c.team_path, night, unit_vector(lon, lat)) > 0.0) return NightIdle::too_short;
    }
    return NightIdle::too_low;
}

double covered_fraction(const NightContext& c) {
    double seen = 0.0;
    for (bool s : c.seen) seen += s ? 1.0 : 0.0;
    return c.seen.empty() ? 0.0 : seen / static_cast<double>(c.seen.size());
}

}  // namespace

RehearsalResult run_rehearsal(const Brief& brief, const Solution& solution, const Telescope& tel, const TruthEphemeris& truth_eph,
                              double hidden_h, const RehearsalOptions& opt) {
    RehearsalResult out;
    if (opt.nights < 1 || opt.nights > 3660) throw InputError("command line", 0, "--nights", "must be in [1, 3660]");
    const TruthView truth{truth_eph, hidden_h};

    const Site site = make_site(tel, brief.elongation_limit_deg);
    const ObserverPath team_path = kepler_observer_path(brief);
    const double start_days = days_from_year(brief.epoch0_year, opt.start_year);
    const std::vector<Night> nights = nights_from(site, team_path, start_days, opt.nights);
    const double span_end = brief.span_years * julian_year_days;
    if (start_days < 0.0 || nights.back().end_days > span_end)
        throw InputError("command line", 0, "--start", "the nights must lie within the exercise's span (" +
                                                           std::to_string(brief.epoch0_year) + " to " +
                                                           std::to_string(brief.epoch0_year + brief.span_years) + ")");

    out.region = region_from_solution(solution, opt.region_samples, derive_seed(opt.seed, "region"));
    SkyModel sky_model = rehearsal_sky_model(tel, opt);
    // The predicted apparent motion from the team's track near the first night, for the revisit gap.
    double l0 = 0.0, b0 = 0.0, l1 = 0.0, b1 = 0.0;
    region_centre(out.region, opt.start_year, l0, b0);
    region_centre(out.region, opt.start_year + 1.0 / julian_year_days, l1, b1);
    const double rate = std::hypot(wrap_pi(l1 - l0) * std::cos(b0), b1 - b0);  // radians per day
    NightContext c{tel, site, team_path, truth, sky_model, out.region, std::vector<bool>(out.region.samples.size(), false),
                   out, opt, brief.epoch0_year, rate, revisit_gap_minutes(rate, tel.astrometric_error_arcsec)};
    {   // Beyond the known planets: farther than the outermost one less the observer's own distance from the star.
        double outer = 0.0, observer = 1.0;
        for (const BriefPlanet& p : brief.planets) {
            outer = std::max(outer, p.elements.semi_major_axis * (1.0 + p.elements.eccentricity));
            if (p.observer) observer = p.elements.semi_major_axis * (1.0 + p.elements.eccentricity);
        }
        c.min_distance_au = std::max(0.5, outer - observer);
        c.max_own_speed_au_per_day = std::sqrt(gm_from_mass(brief.star_mass) / std::max(outer, 0.5));
    }

    {   // Revealed only in the summary at the end.
        const BodyInField b = truth.body(nights.front().dark_start_days);
        out.body_mag_first_night = b.mag;
        out.body_lon_first_night = b.lon;
        out.body_lat_first_night = b.lat;
        const BodyInField b2 = truth.body(nights.front().dark_start_days + 1.0);
        out.body_rate_arcsec_per_hour = std::hypot(wrap_pi(b2.lon - b.lon) * std::cos(b.lat), b2.lat - b.lat) / arcsec / 24.0;
    }

    if (opt.strategy.kind != StrategyKind::plan) out.fields = tile_region(out.region, tel, opt.extent_sigma, opt.max_fields);
    std::vector<bool> covered(out.fields.size(), false);
    Rng weather = make_rng(opt.seed, "weather");
    bool clear = true;
    std::vector<Pending> pending;

    for (const Night& night : nights) {
        const double u1 = uniform01(weather), u2 = uniform01(weather);
        clear = (night.index == 1 || u1 >= tel.weather_correlation) ? u2 < tel.clear_fraction : clear;
        NightRecord rec;
        rec.night = night.index;
        rec.start_year = decimal_year(brief.epoch0_year, night.start_days);
        rec.clear = clear;
        rec.dark_hours = night.dark_hours();
        const NightPlan plan = plan_night(c, night, covered);
        {
            const double mid_days = 0.5 * (night.dark_start_days + night.dark_end_days);
            double cl = 0.0, cb = 0.0;
            region_centre(out.region, decimal_year(brief.epoch0_year, mid_days), cl, cb);
            rec.centre_elongation = check_pointing(site, team_path, unit_vector(cl, cb), mid_days).elongation;
        }
        if (clear) {
            work_night(c, night, plan, covered, pending, rec);
            if (rec.fields == 0 && !out.found) {
                rec.idle = idle_reason(c, night, plan);
                VisitRecord v;
                v.night = night.index;
                v.t_days = night.dark_start_days;
                v.visit = 0;
                v.elongation = rec.centre_elongation;
                v.outcome = VisitOutcome::idle;
                v.idle = rec.idle;
                out.log.push_back(v);
            }
        } else {
            rec.idle = NightIdle::cloudy;
            VisitRecord v;
            v.night = night.index;
            v.t_days = night.dark_start_days;
            v.visit = 0;
            v.outcome = VisitOutcome::cloudy;
            v.idle = NightIdle::cloudy;
            out.log.push_back(v);
        }
        out.fields_searched += rec.fields;
        for (Pending& p : pending) p.next_night = false;  // due as soon as the next clear night allows
        rec.probability_covered = covered_fraction(c);  // a cloudy night keeps what was covered so far
        out.hours_used += rec.hours_used;
        out.nights.push_back(rec);
        if (out.found) break;
    }
    for (const Pending& p : pending) out.open_candidates += static_cast<int>(p.candidates.size());
    out.fields_planned = static_cast<int>(out.plan.size());
    out.chart_entries = sky_model.chart_entries_seen();
    return out;
}

}  // namespace wayward
