// Building the viewer's model with sim: from a scenario file (author mode) or an exercise folder (trainee
// mode), and adding the hidden body at the reveal. See model.hpp.
#include "viewer/model.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <limits>

#include "sim/physics/elements.hpp"
#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"

namespace wayward::viewer {

bool ViewerModel::shows(std::size_t body) const {
    // In trainee mode the hidden body is only ever in `bodies` after the reveal (from the answer key).
    return mode == ViewerMode::author || bodies[body].role != Role::hidden || bodies[body].from_key;
}

bool ViewerModel::hidden_shown() const {
    for (const BodyView& b : bodies)
        if (b.role == Role::hidden && shows(b.index)) return true;
    return false;
}

double ViewerModel::elongation_limit() const { return facts.elongation_limit_deg * deg; }
double ViewerModel::field_radius() const { return facts.field_radius_deg * deg; }
double ViewerModel::search_epoch_year() const {
    return facts.search_epochs_year.empty() ? year(t_end()) : facts.search_epochs_year.front();
}

Vec3 ViewerModel::position(std::size_t body, double t) const {
    const BodyView& b = bodies[body];
    return b.from_key ? revealed->truth->run.ephemeris.position(b.source, t) : run.ephemeris.position(b.source, t);
}

SkyPosition ViewerModel::sky(std::size_t body, double t) const {
    const BodyView& b = bodies[body];
    // The revealed body is seen from the true observer in the true observer's frame, as sim's scoring sees it.
    if (b.from_key) return apparent(revealed->truth->run.ephemeris, revealed->truth->frame, revealed->truth->observer, b.source, t).sky;
    return apparent(run.ephemeris, frame, bodies[observer].source, b.source, t).sky;
}

double ViewerModel::elongation(std::size_t body, double t) const {
    const BodyView& b = bodies[body];
    if (b.from_key) return wayward::elongation(revealed->truth->run.ephemeris, revealed->truth->observer, b.source, t);
    return wayward::elongation(run.ephemeris, bodies[observer].source, b.source, t);
}

double ViewerModel::year(double t) const { return decimal_year(facts.epoch0_year, t); }
double ViewerModel::days_at_year(double y) const { return days_from_year(facts.epoch0_year, y); }

std::size_t ViewerModel::nearest_sample(double t) const {
    if (sample_times.empty()) return 0;
    const double k = std::round((t - sample_times.front()) / sample_step_days);
    return static_cast<std::size_t>(std::clamp(k, 0.0, static_cast<double>(sample_times.size() - 1)));
}

void regenerate_stars(ViewerModel& model, long count, double faint_mag) {
    model.star_spec.count = count;
    model.star_spec.faint_mag = faint_mag;
    model.stars = generate_star_field(model.star_spec);
}

namespace {

// A system body as the panels see it; mass, a, e and the two-body period from the elements it was given with.
BodyView body_view(const System& s, std::size_t i) {
    BodyView b;
    b.name = s.bodies[i].name;
    b.role = s.bodies[i].role;
    b.observer = s.bodies[i].observer;
    b.index = i;
    b.source = i;
    return b;
}

void set_orbit(BodyView& b, double mass, const Elements& el, double star_mass) {
    b.mass = mass;
    b.a_au = el.semi_major_axis;
    b.e = el.eccentricity;
    if (b.e < 1.0) b.period_days = orbital_period(b.a_au, gm_from_mass(star_mass + mass));
}

// Author mode: the drawn system's bodies, with their drawn elements.
void fill_bodies(ViewerModel& m) {
    const System& s = m.truth.system;
    m.bodies.clear();
    for (std::size_t i = 0; i < s.size(); ++i) {
        BodyView b = body_view(s, i);
        if (i == 0) b.mass = m.truth.star_mass;
        else {
            const DrawnBody& d = m.truth.bodies[i - 1];  // truth.bodies lists the planets in system order
            set_orbit(b, d.mass, d.elements, m.truth.star_mass);
        }
        m.bodies.push_back(b);
    }
}

// Trainee mode: the bodies of the team's model (star and known planets), with the brief's elements.
void fill_bodies_from_brief(ViewerModel& m, const System& s) {
    const Brief& brief = m.exercise->brief;
    m.bodies.clear();
    for (std::size_t i = 0; i < s.size(); ++i) {
        BodyView b = body_view(s, i);
        if (i == 0) b.mass = brief.star_mass;
        else {
            const BriefPlanet& p = brief.planets[i - 1];  // known_model_system keeps the brief's order
            set_orbit(b, p.mass, p.elements, brief.star_mass);
        }
        m.bodies.push_back(b);
    }
}

void fill_samples(ViewerModel& m, double step) {
    const std::size_t n = m.body_count();
    const double span = m.t_end() - m.t_begin();
    const auto count = static_cast<std::size_t>(std::floor(span / step)) + 1;
    m.sample_step_days = step;
    m.sample_times.resize(count);
    m.sample_xyz.assign(count * n * 3, 0.0f);
    m.sample_lon.assign(count * n, std::numeric_limits<float>::quiet_NaN());
    m.sample_lat.assign(count * n, std::numeric_limits<float>::quiet_NaN());
    for (std::size_t k = 0; k < count; ++k) {
        const double t = std::min(m.t_begin() + step * static_cast<double>(k), m.t_end());
        m.sample_times[k] = t;
        for (std::size_t i = 0; i < n; ++i) {
            const Vec3 p = m.position(i, t);
            for (int c = 0; c < 3; ++c) m.sample_xyz[(k * n + i) * 3 + static_cast<std::size_t>(c)] = static_cast<float>(p[c]);
            if (i == m.observer) continue;  // (sky() takes each body's own ephemeris)
            const SkyPosition sky = m.sky(i, t);
            m.sample_lon[k * n + i] = static_cast<float>(sky.lon);
            m.sample_lat[k * n + i] = static_cast<float>(sky.lat);
        }
    }
}

}  // namespace

namespace {

void load_author(ViewerModel& m, const std::string& path, const LoadOptions& options) {
    m.mode = ViewerMode::author;
    m.scenario = load_scenario(path);
    m.truth = generate(m.scenario, options.seed, &m.run);
    m.facts.name = m.scenario.name;
    m.facts.epoch0_year = m.scenario.epoch0_year;
    m.facts.span_days = m.truth.span_days;
    m.facts.elongation_limit_deg = m.scenario.plan.elongation_limit_deg;
    m.facts.field_radius_deg = m.scenario.plan.field_radius_deg;
    m.facts.search_epochs_year = m.scenario.plan.search_epochs_year;
    m.observer = m.truth.system.observer_index();
    m.frame = observer_frame(m.truth.system, m.observer);
    fill_bodies(m);
}

void load_trainee(ViewerModel& m, const std::string& dir) {
    m.mode = ViewerMode::trainee;
    // Brief, observations and the observer's track only: the answer key stays sealed.
    m.exercise = std::make_shared<const Exercise>(load_exercise(dir));
    const Brief& b = m.exercise->brief;
    m.facts.name = b.scenario_name;
    m.facts.epoch0_year = b.epoch0_year;
    m.facts.span_days = b.span_years * julian_year_days;
    m.facts.elongation_limit_deg = b.elongation_limit_deg;
    m.facts.field_radius_deg = b.field_radius_deg;
    m.facts.search_epochs_year = b.search_epochs_year;
    const System known = known_model_system(b);
    m.run = integrate(known, 0.0, m.facts.span_days);
    if (m.run.outcome != IntegrationOutcome::ok)
        throw std::runtime_error("the model of the known planets could not be integrated: " + to_string(m.run.outcome));
    m.observer = known.observer_index();
    m.frame = observer_frame(known, m.observer);
    fill_bodies_from_brief(m, known);
}

}  // namespace

LoadOutcome load_model(const std::string& path, const LoadOptions& options) {
    LoadOutcome out;
    std::error_code ec;
    if (path.empty()) {
        out.error = "nothing to open: give an exercise folder (trainee mode, e.g. one made by `wayward new`) or a "
                    "scenario file (author mode, e.g. scenarios/default.toml)";
        return out;
    }
    if (!std::filesystem::exists(path, ec)) {
        out.error = "cannot open " + path + ": no such file or folder";
        return out;
    }
    try {
        ViewerModel m;
        m.source = path;
        m.seed = options.seed;
        if (std::filesystem::is_directory(path, ec)) load_trainee(m, path);
        else load_author(m, path, options);
        fill_samples(m, options.sample_step_days);
        m.star_spec.seed = m.seed;
        m.star_spec.whole_sphere = true;
        regenerate_stars(m, options.star_count, options.star_faint_mag);
        out.model = std::move(m);
    } catch (const InputError& e) {
        out.error = e.what();
    } catch (const std::exception& e) {
        out.error = path + ": " + e.what();
    }
    return out;
}

RevealedTruth make_revealed_truth(const AnswerKey& key, std::shared_ptr<const TruthEphemeris> truth, const std::vector<double>& times) {
    RevealedTruth r;
    r.key = key;
    r.truth = std::move(truth);
    const TruthEphemeris& tr = *r.truth;
    const Ephemeris& eph = tr.run.ephemeris;
    r.xyz.assign(times.size() * 3, std::numeric_limits<float>::quiet_NaN());
    r.lon.assign(times.size(), std::numeric_limits<float>::quiet_NaN());
    r.lat = r.lon;
    for (std::size_t k = 0; k < times.size(); ++k) {
        const double t = std::clamp(times[k], eph.t_begin(), eph.t_end());
        const Vec3 p = eph.position(tr.hidden, t);
        for (int c = 0; c < 3; ++c) r.xyz[k * 3 + static_cast<std::size_t>(c)] = static_cast<float>(p[c]);
        const SkyPosition s = apparent(eph, tr.frame, tr.observer, tr.hidden, t).sky;
        r.lon[k] = static_cast<float>(s.lon);
        r.lat[k] = static_cast<float>(s.lat);
    }
    for (const DrawnBody& d : key.bodies)
        if (d.name == key.hidden_name) {
            r.mass = d.mass;
            r.a_au = d.elements.semi_major_axis;
            r.e = d.elements.eccentricity;
            if (r.e < 1.0) r.period_days = orbital_period(r.a_au, gm_from_mass(key.star_mass + d.mass));
        }
    return r;
}

void apply_reveal(ViewerModel& m, RevealedTruth truth) {
    if (m.revealed) return;
    const std::size_t n = m.body_count(), count = m.sample_times.size();
    if (truth.xyz.size() != count * 3 || truth.lon.size() != count) throw std::logic_error("apply_reveal: samples of another model");
    BodyView b;
    b.name = truth.key.hidden_name;
    b.role = Role::hidden;
    b.index = n;
    b.from_key = true;
    b.source = truth.truth->hidden;
    b.mass = truth.mass;
    b.a_au = truth.a_au;
    b.e = truth.e;
    b.period_days = truth.period_days;
    // One more body in every sample row.
    std::vector<float> xyz(count * (n + 1) * 3), lon(count * (n + 1)), lat(count * (n + 1));
    for (std::size_t k = 0; k < count; ++k) {
        std::copy_n(&m.sample_xyz[k * n * 3], n * 3, &xyz[k * (n + 1) * 3]);
        std::copy_n(&truth.xyz[k * 3], 3, &xyz[(k * (n + 1) + n) * 3]);
        std::copy_n(&m.sample_lon[k * n], n, &lon[k * (n + 1)]);
        std::copy_n(&m.sample_lat[k * n], n, &lat[k * (n + 1)]);
        lon[k * (n + 1) + n] = truth.lon[k];
        lat[k * (n + 1) + n] = truth.lat[k];
    }
    m.sample_xyz = std::move(xyz);
    m.sample_lon = std::move(lon);
    m.sample_lat = std::move(lat);
    m.bodies.push_back(b);
    m.revealed = std::move(truth);
}

}  // namespace wayward::viewer
