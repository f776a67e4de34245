// Making an exercise: the brief a team gets (approximate orbits and masses from the scenario's brief errors), the
// folder written atomically with the brief last, and the same exercise held in memory. See exercise_writer.hpp.
#include "sim/truth/exercise_writer.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <optional>
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
    // The seed stays out of the brief: with it and the scenario, the truth could be regenerated.
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

namespace {
void write_exercise_locked(const ExercisePaths& paths, const Scenario& sc, const Truth& truth, const ObservationSet& obs,
                           const Brief& brief_in, const Ephemeris& eph, bool force, bool& made_key_dir);
}  // namespace

void write_exercise(const ExercisePaths& paths, const Scenario& sc, const Truth& truth, const ObservationSet& obs,
                    const Brief& brief_in, const Ephemeris& eph, bool force) {
    // The team's reader refuses an empty log, so an exercise without observations is never written.
    if (obs.records.empty())
        throw InputError(sc.file, sc.plan.eras.empty() ? 0 : sc.plan.eras.front().line, "observing",
                         "the observing plan produced no observations (are the targets always too close to the star?)");
    std::error_code ec;
    const bool made_dir = fs::create_directories(paths.dir, ec);
    if (ec) throw InputError(paths.dir, 0, "--out", "cannot create the folder: " + ec.message());
    bool made_key_dir = false;
    try {
        write_exercise_locked(paths, sc, truth, obs, brief_in, eph, force, made_key_dir);
    } catch (...) {
        // A refusal or a failure leaves no empty folder of ours behind (remove() takes only empty folders).
        if (made_key_dir) {
            fs::remove(paths.key_dir + "/.wayward.lock", ec);
            fs::remove(paths.key_dir, ec);
        }
        if (made_dir) {
            fs::remove(paths.dir + "/.wayward.lock", ec);
            fs::remove(paths.dir, ec);
        }
        throw;
    }
}

namespace {
void write_exercise_locked(const ExercisePaths& paths, const Scenario& sc, const Truth& truth, const ObservationSet& obs,
                           const Brief& brief_in, const Ephemeris& eph, bool force, bool& made_key_dir) {
    std::error_code ec;
    // One writer per folder: a second `new` into the same folder waits for nothing and fails, so a brief and a
    // key from different seeds are never mixed. The check for an existing exercise is made under the lock.
    const WriterLock lock(paths.dir, "--out");
    refuse_link_at(paths.brief(), "--out");
    if (fs::exists(paths.brief()) && !force)
        throw InputError(paths.dir, 0, "--out", "an exercise already exists here; use --force to overwrite it");
    remove_stale_temporaries(paths.dir);  // leftovers of a killed run (safe: we hold the lock)
    if (fs::is_symlink(paths.key_dir, ec))
        throw InputError(paths.key_dir, 0, "--key-out", "is a symbolic link; give the real folder for the answer key");
    made_key_dir = fs::create_directories(paths.key_dir, ec);
    if (ec) throw InputError(paths.key_dir, 0, "--key-out", "cannot create the folder: " + ec.message());
    if (!fs::is_directory(paths.key_dir, ec)) throw InputError(paths.key_dir, 0, "--key-out", "is not a folder");
    // The key folder is locked too: two exercises given one --key-out never interleave their keys.
    std::optional<WriterLock> key_lock;
    if (!fs::equivalent(paths.key_dir, paths.dir, ec)) key_lock.emplace(paths.key_dir, "--key-out");
    refuse_link_at(paths.answer_key(), "--key-out");
    if (fs::exists(paths.answer_key()) && !force)
        throw InputError(paths.key_dir, 0, "--key-out",
                         "already holds an answer key (of another exercise?); use --force to replace it, or another --key-out");
    // A key folder we make is the trainer's alone: owner-only, like the key files in it.
    if (made_key_dir) {
        fs::permissions(paths.key_dir, fs::perms::owner_all, fs::perm_options::replace, ec);
        if (ec) throw InputError(paths.key_dir, 0, "--key-out", "cannot make the folder private: " + ec.message());
    }
    remove_stale_temporaries(paths.key_dir);
    // A forced overwrite first removes the old brief, so the folder never pairs an old brief with new data.
    if (force) {
        refuse_link_at(paths.brief(), "--out");
        fs::remove(paths.brief(), ec);
    }
    // Every output name is checked before anything is written, so a refusal leaves nothing half-written.
    for (const std::string& f : {paths.true_positions(), paths.answer_key(), paths.observations(), paths.observer_track(), paths.brief()})
        refuse_link_at(f, "--out");

    std::vector<std::string> written;
    try {
        const std::string positions = true_positions_csv(obs, sc.epoch0_year);
        write_file_atomic(paths.true_positions(), positions, 0600);
        written.push_back(paths.true_positions());
        const std::string key = answer_key_text(sc, truth, sha256_hex(positions), secret_hex(16));
        write_file_atomic(paths.answer_key(), key, 0600);
        written.push_back(paths.answer_key());
        write_file_atomic(paths.observations(), format_observations_csv(obs.records, sc.epoch0_year));
        written.push_back(paths.observations());
        write_file_atomic(paths.observer_track(), format_observer_csv(observer_track_for(obs.records, eph, truth.system.observer_index())));
        written.push_back(paths.observer_track());
        Brief brief = brief_in;
        brief.answer_key_sha256 = sha256_hex(key);
        write_file_atomic(paths.brief(), format_brief(brief));  // last: its presence marks a complete exercise
    } catch (...) {
        // A full disk or any other failure: no key or log is left behind without its brief.
        for (const std::string& f : written) fs::remove(f, ec);
        throw;
    }
}

}  // namespace

}  // namespace wayward
