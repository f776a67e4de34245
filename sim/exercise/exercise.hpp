// The exercise: what a team is given (brief.toml, observations.csv, observer.csv) and reads back. This is the
// team's side of the sealed boundary: nothing here includes the truth generator (truth/ writes exercises and
// holds the answer key; .ci/check-layers enforces it). The brief carries the SHA-256 of the sealed answer key.
// Units: solar masses, au, degrees, arcsec, days, years.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "sim/exercise/telescope.hpp"
#include "sim/physics/system.hpp"

namespace wayward {

// One recorded position of a known planet, as the team has it.
struct Observation {
    double time_days = 0.0;
    std::string target;
    double lon_deg = 0.0;
    double lat_deg = 0.0;
    std::optional<double> sigma_lon_arcsec;  // in lambda*cos(beta); absent when the era does not record it
    std::optional<double> sigma_lat_arcsec;
    std::string era;                          // era label ("early sighting" for sparse early ones)
    long line = 0;                            // row in observations.csv it was read from (0: not read from a file)
};

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
    double epoch0_year = 0.0;
    double span_years = 0.0;
    std::string star_name;
    double star_mass = 1.0;
    std::vector<BriefPlanet> planets;   // all known planets, the observer among them
    double elongation_limit_deg = 0.0;
    std::vector<double> search_epochs_year;
    double field_radius_deg = 1.0;
    std::vector<BriefEra> eras;
    std::optional<Telescope> telescope;  // the site and telescope for the search rehearsal, when the scenario gives one
    std::string answer_key_sha256;  // an invented exercise: the SHA-256 of its sealed answer key
    std::string record_sha256;      // a record brought in with `import`: the SHA-256 of its files (no answer key)
    // The reference frame's name when it is a real one ("ecliptic-j2000": the ecliptic and equinox of J2000.0
    // reached from ICRS, times in TDB); empty for an invented system's own reference plane.
    std::string frame;
    std::size_t observer_index() const;  // index into planets
    bool imported() const { return !record_sha256.empty(); }
    // What a solution and a search name the exercise by: the answer key's digest, or the record's.
    const std::string& identity_sha256() const { return imported() ? record_sha256 : answer_key_sha256; }
};
inline constexpr const char* ecliptic_j2000_frame = "ecliptic-j2000";

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
    std::string key_dir;  // default: default_key_dir(dir), beside the exercise folder
    std::string brief() const { return dir + "/brief.toml"; }
    std::string observations() const { return dir + "/observations.csv"; }
    std::string observer_track() const { return dir + "/observer.csv"; }
    std::string answer_key() const { return key_dir + "/answer_key.toml"; }
    std::string true_positions() const { return key_dir + "/true_positions.csv"; }
};
// The answer key's default folder: DIR-answer-key beside DIR (never inside the folder a trainee receives).
std::string default_key_dir(const std::string& dir);
ExercisePaths exercise_paths(const std::string& dir, const std::string& key_dir = "");

std::string format_observations_csv(const std::vector<Observation>& obs, double epoch0_year);
std::vector<Observation> parse_observations_csv(const std::string& text, const std::string& file);
std::string format_observer_csv(const std::vector<ObserverFix>& track);
std::vector<ObserverFix> parse_observer_csv(const std::string& text, const std::string& file);
Brief load_brief(const std::string& path);
// The brief from its text (`path` names it in errors).
Brief parse_brief(const std::string& text, const std::string& path);
// brief.toml's text (the folder writer in truth/ and the importers write it).
std::string format_brief(const Brief& brief);
// Reads brief and observations only: the answer key stays sealed.
Exercise load_exercise(const std::string& dir);
// The team's model: star + known planets from the brief (no hidden body).
System known_model_system(const Brief& brief);

}  // namespace wayward
