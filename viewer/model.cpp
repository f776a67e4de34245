// Building the viewer's model from a scenario file with sim. See model.hpp.
#include "viewer/model.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <limits>

#include "sim/elements.hpp"
#include "sim/errors.hpp"
#include "sim/units.hpp"

namespace wayward::viewer {

bool ViewerModel::shows(std::size_t body) const {
    return mode == ViewerMode::author || bodies[body].role != Role::hidden;
}

double ViewerModel::elongation_limit() const { return scenario.plan.elongation_limit_deg * deg; }

Vec3 ViewerModel::position(std::size_t body, double t) const { return run.ephemeris.position(body, t); }

SkyPosition ViewerModel::sky(std::size_t body, double t) const {
    return apparent(run.ephemeris, frame, observer, body, t).sky;
}

double ViewerModel::elongation(std::size_t body, double t) const {
    return wayward::elongation(run.ephemeris, observer, body, t);
}

double ViewerModel::year(double t) const { return decimal_year(scenario.epoch0_year, t); }
double ViewerModel::days_at_year(double y) const { return days_from_year(scenario.epoch0_year, y); }

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

void fill_bodies(ViewerModel& m) {
    const System& s = m.truth.system;
    m.bodies.clear();
    for (std::size_t i = 0; i < s.size(); ++i) {
        BodyView b;
        b.name = s.bodies[i].name;
        b.role = s.bodies[i].role;
        b.observer = s.bodies[i].observer;
        b.index = i;
        if (i == 0) {
            b.mass = m.truth.star_mass;
        } else {
            const DrawnBody& d = m.truth.bodies[i - 1];  // truth.bodies lists the planets in system order
            b.mass = d.mass;
            b.a_au = d.elements.semi_major_axis;
            b.e = d.elements.eccentricity;
            if (d.elements.eccentricity < 1.0)
                b.period_days = orbital_period(d.elements.semi_major_axis, gm_from_mass(m.truth.star_mass + d.mass));
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
            if (i == m.observer) continue;
            const SkyPosition sky = m.sky(i, t);
            m.sample_lon[k * n + i] = static_cast<float>(sky.lon);
            m.sample_lat[k * n + i] = static_cast<float>(sky.lat);
        }
    }
}

}  // namespace

LoadOutcome load_model(const std::string& path, const LoadOptions& options) {
    LoadOutcome out;
    std::error_code ec;
    if (path.empty()) {
        out.error = "no file given: open a scenario, e.g. wayward-view scenarios/default.toml";
        return out;
    }
    if (std::filesystem::is_directory(path, ec)) {
        out.error = path + " is a folder: exercise folders (trainee mode) are not supported by this viewer yet; "
                           "give a scenario file (.toml) for author mode";
        return out;
    }
    if (!std::filesystem::exists(path, ec)) {
        out.error = "cannot open " + path + ": no such file";
        return out;
    }
    try {
        ViewerModel m;
        m.mode = ViewerMode::author;
        m.source = path;
        m.seed = options.seed;
        m.scenario = load_scenario(path);
        m.truth = generate(m.scenario, options.seed, &m.run);
        m.observer = m.truth.system.observer_index();
        m.frame = observer_frame(m.truth.system, m.observer);
        fill_bodies(m);
        fill_samples(m, options.sample_step_days);
        m.star_spec.seed = options.seed;
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

}  // namespace wayward::viewer
