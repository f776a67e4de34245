// Making an exercise: the brief a team gets (approximate orbits and masses from the scenario's brief errors), the
// folder written atomically with the brief last, and the same exercise held in memory. See exercise_writer.hpp.
#include "sim/truth/exercise_writer.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <sstream>

#include <toml++/toml.h>

#include "sim/base/errors.hpp"
#include "sim/base/format.hpp"
#include "sim/base/units.hpp"
#include "sim/io/fileio.hpp"
#include "sim/io/hash.hpp"
#include "sim/io/toml_reader.hpp"

namespace wayward {

namespace fs = std::filesystem;

using detail::fmt;

Brief make_brief(const Scenario& sc, const Truth& truth, std::uint64_t seed) {
    Brief b;
    b.scenario_name = sc.name;
    b.seed = seed;
    b.epoch0_year = sc.epoch0_year;
    b.span_years = sc.span_years;
    b.star_name = truth.system.bodies[0].name;
    b.star_mass = truth.star_mass;
    const ObservingPlan& plan = sc.plan;
    Rng rng = make_rng(seed, "brief");
    const double err = plan.brief_orbit_error_deg * deg;
    for (const DrawnBody& d : truth.bodies) {
        if (d.role != Role::known) continue;
        BriefPlanet p;
        p.name = d.name;
        p.observer = d.observer;
        p.observed = !d.observer && (plan.targets.empty() ||
                                     std::find(plan.targets.begin(), plan.targets.end(), d.name) != plan.targets.end());
        // Draw all numbers for every planet so the streams do not depend on which are perturbed.
        const double g_mass = normal(rng), g_m = normal(rng), g_a = normal(rng), g_e = normal(rng);
        p.mass = d.mass * (1.0 + plan.brief_mass_error * g_mass);
        p.elements = d.elements;
        if (p.observed) {
            // The observer's own orbit and those of planets not in the record are given as they are (the team's
            // earlier work settled them); the observed planets' orbits only approximately, to be fitted.
            p.elements.mean_anomaly = wrap_two_pi(d.elements.mean_anomaly + err * g_m);
            p.elements.semi_major_axis = d.elements.semi_major_axis * (1.0 + 0.1 * err * g_a);
            p.elements.eccentricity = std::abs(d.elements.eccentricity + 0.1 * err * g_e);
        }
        b.planets.push_back(p);
    }
    b.elongation_limit_deg = plan.elongation_limit_deg;
    b.search_epochs_year = plan.search_epochs_year;
    b.field_radius_deg = plan.field_radius_deg;
    b.telescope = sc.telescope;
    for (const Era& e : plan.eras) b.eras.push_back({e.label, e.start_year, e.end_year, e.per_season, e.precision_arcsec, e.records_sigma});
    return b;
}

std::vector<ObserverFix> observer_track_for(const std::vector<Observation>& obs, const Ephemeris& eph, std::size_t observer) {
    std::vector<double> times;
    for (const Observation& o : obs) {
        // The recorded time (6 decimals), so that the track matches the log exactly as a reader parses it.
        times.push_back(std::strtod(fmt("%.8f", o.time_days).c_str(), nullptr));
    }
    std::sort(times.begin(), times.end());
    times.erase(std::unique(times.begin(), times.end()), times.end());
    std::vector<ObserverFix> out;
    for (double t : times) out.push_back({t, eph.position(observer, t) - eph.position(0, t)});
    return out;
}

ExerciseInMemory exercise_in_memory(const Scenario& sc, const Truth& truth, const ObservationSet& obs, const Brief& brief,
                                    const Ephemeris& eph) {
    ExerciseInMemory m;
    m.exercise.dir = "(in memory)";
    m.exercise.brief = brief;
    m.exercise.brief.file = "(in memory)";
    m.exercise.brief.answer_key_sha256 = sha256_hex(answer_key_text(sc, truth, sha256_hex(true_positions_csv(obs, sc.epoch0_year))));
    m.exercise.observations = obs.records;
    for (Observation& o : m.exercise.observations) o.time_days = std::strtod(fmt("%.8f", o.time_days).c_str(), nullptr);
    m.exercise.observer_track = observer_track_for(obs.records, eph, truth.system.observer_index());
    m.key.file = "(in memory)";
    m.key.scenario_name = sc.name;
    m.key.seed = truth.seed;
    m.key.star_name = truth.system.bodies[0].name;
    m.key.star_mass = truth.star_mass;
    m.key.bodies = truth.bodies;
    for (const DrawnBody& d : truth.bodies)
        if (d.role == Role::hidden) m.key.hidden_name = d.name;
    return m;
}

void write_exercise(const ExercisePaths& paths, const Scenario& sc, const Truth& truth, const ObservationSet& obs,
                    const Brief& brief_in, const Ephemeris& eph, bool force) {
    std::error_code ec;
    if (fs::exists(paths.brief()) && !force)
        throw InputError(paths.dir, 0, "--out", "an exercise already exists here; use --force to overwrite it");
    fs::create_directories(paths.dir, ec);
    if (ec) throw InputError(paths.dir, 0, "--out", "cannot create the folder: " + ec.message());
    fs::create_directories(paths.key_dir, ec);
    if (ec) throw InputError(paths.key_dir, 0, "--key-out", "cannot create the folder: " + ec.message());
    // A forced overwrite first removes the old brief, so the folder never pairs an old brief with new data.
    if (force) fs::remove(paths.brief(), ec);

    const std::string positions = true_positions_csv(obs, sc.epoch0_year);
    write_file_atomic(paths.true_positions(), positions);
    const std::string key = answer_key_text(sc, truth, sha256_hex(positions));
    write_file_atomic(paths.answer_key(), key);
    write_file_atomic(paths.observations(), format_observations_csv(obs.records, sc.epoch0_year));
    write_file_atomic(paths.observer_track(), format_observer_csv(observer_track_for(obs.records, eph, truth.system.observer_index())));
    Brief brief = brief_in;
    brief.answer_key_sha256 = sha256_hex(key);
    write_file_atomic(paths.brief(), format_brief(brief));  // last: its presence marks a complete exercise
}

}  // namespace wayward
