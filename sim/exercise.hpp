// The exercise folder: what a team is given (brief.toml, observations.csv) and the sealed answer key
// (answer-key/answer_key.toml and answer-key/true_positions.csv). The brief carries the SHA-256 of the answer
// key file; the key carries the SHA-256 of its true-positions table. Every file is written atomically, and the
// brief last, so a folder with a brief is complete. Units: solar masses, au, degrees, arcsec, days, years.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "sim/generate.hpp"
#include "sim/observe.hpp"

namespace wayward {

struct BriefPlanet {
    std::string name;
    bool observer = false;
    bool observed = false;
    double mass = 0.0;   // solar masses, as the team knows it
    Elements elements;   // approximate heliocentric osculating elements at epoch 0 (radians)
};

struct BriefEra {
    std::string label;
    double start_year = 0.0, end_year = 0.0;
    int per_season = 1;
    double precision_arcsec = 0.0;
    bool records_sigma = true;
};

struct Brief {
    std::string file;             // where it was read from
    std::string scenario_name;
    std::uint64_t seed = 0;
    double epoch0_year = 0.0;
    double span_years = 0.0;
    std::string star_name;
    double star_mass = 1.0;
    std::vector<BriefPlanet> planets;   // all known planets, the observer among them
    double elongation_limit_deg = 0.0;
    std::vector<double> search_epochs_year;
    double field_radius_deg = 1.0;
    std::vector<BriefEra> eras;
    std::string answer_key_sha256;
    std::size_t observer_index() const;  // index into planets
};

struct AnswerKey {
    std::string file;
    std::string scenario_name;
    std::uint64_t seed = 0;
    std::string star_name;
    double star_mass = 1.0;
    std::vector<DrawnBody> bodies;   // the true bodies (known and hidden) at epoch 0
    std::string hidden_name;
    std::string true_positions_sha256;
    System system() const;           // the true barycentric system at epoch 0
    std::optional<std::size_t> hidden_index() const;  // index in system()
};

// The team's own ephemeris of its observer planet: heliocentric positions (au, reference frame) at the
// observation times. A team knows its own planet's orbit from its own observations of the star, far better
// than any outer planet's; the file gives it as that knowledge would (it includes every perturbation).
struct ObserverFix {
    double time_days = 0.0;
    Vec3 position{Vec3::Zero()};
};

struct Exercise {
    std::string dir;
    Brief brief;
    std::vector<Observation> observations;
    std::vector<ObserverFix> observer_track;  // sorted by time, one per distinct observation time
};

struct ExercisePaths {
    std::string dir;
    std::string key_dir;  // default dir + "/answer-key"
    std::string brief() const { return dir + "/brief.toml"; }
    std::string observations() const { return dir + "/observations.csv"; }
    std::string observer_track() const { return dir + "/observer.csv"; }
    std::string answer_key() const { return key_dir + "/answer_key.toml"; }
    std::string true_positions() const { return key_dir + "/true_positions.csv"; }
};
ExercisePaths exercise_paths(const std::string& dir, const std::string& key_dir = "");

// The brief a team gets: approximate orbits and masses drawn from the scenario's brief errors.
Brief make_brief(const Scenario& sc, const Truth& truth, std::uint64_t seed);

// Writes the whole folder. Refuses (InputError) to overwrite an existing exercise unless `force`.
void write_exercise(const ExercisePaths& paths, const Scenario& sc, const Truth& truth, const ObservationSet& obs,
                    const Brief& brief, const Ephemeris& eph, bool force);

std::string format_observations_csv(const std::vector<Observation>& obs, double epoch0_year);
std::vector<Observation> parse_observations_csv(const std::string& text, const std::string& file);
// The observer's positions at the (recorded, rounded) observation times, from the truth ephemeris.
std::vector<ObserverFix> observer_track_for(const std::vector<Observation>& obs, const Ephemeris& eph, std::size_t observer);
std::string format_observer_csv(const std::vector<ObserverFix>& track);
std::vector<ObserverFix> parse_observer_csv(const std::string& text, const std::string& file);
Brief load_brief(const std::string& path);
// Reads brief and observations only: the answer key stays sealed.
Exercise load_exercise(const std::string& dir);
// Opens the answer key after checking its SHA-256 against the brief (InputError if it was changed).
AnswerKey open_answer_key(const Brief& brief, const std::string& key_path);

// The same exercise held in memory, as `new` would write it (brief with the key's digest, observations,
// answer key): for campaigns, budgets and tests that need no files.
struct ExerciseInMemory {
    Exercise exercise;
    AnswerKey key;
};
ExerciseInMemory exercise_in_memory(const Scenario& sc, const Truth& truth, const ObservationSet& obs, const Brief& brief,
                                    const Ephemeris& eph);

// The team's model: star + known planets from the brief (no hidden body).
System known_model_system(const Brief& brief);

}  // namespace wayward
