// Scenario: the description of an invented system and how it is observed, as read from a TOML file.
// Every physical body parameter is a Param: a fixed value or a distribution to draw from (generate.hpp draws).
// Units: solar masses, au, degrees (in the file; radians after drawing), years for dates, arcsec for errors.
#pragma once

#include <array>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "sim/base/random.hpp"
#include "sim/exercise/telescope.hpp"
#include "sim/physics/system.hpp"

namespace wayward {

// A number in a scenario: fixed, or drawn from a distribution.
struct Param {
    enum class Kind { fixed, uniform, log_uniform, normal, rayleigh };
    Kind kind = Kind::fixed;
    double value = 0.0;          // fixed value
    double lo = 0.0, hi = 0.0;   // uniform / log-uniform range, or bounds of a normal
    double mean = 0.0, sd = 0.0; // normal; rayleigh uses sd as its scale
    bool bounded = false;        // normal with bounds (redrawn until inside)
    long line = 0;               // source line, for messages

    static Param fixed_value(double v) { Param p; p.value = v; return p; }
    bool is_fixed() const { return kind == Kind::fixed; }
    double draw(Rng& rng) const;
    double min_value() const;    // smallest value the parameter can take (-inf for an unbounded normal)
    double max_value() const;
};

struct BodySpec {
    std::string name;
    Role role = Role::known;
    bool observer = false;
    long line = 0;
    Param mass;                  // solar masses (from `mass` or `gm`)
    // Initial conditions: heliocentric osculating elements ...
    bool has_elements = true;
    Param a, e, i_deg, node_deg, peri_deg, mean_anomaly_deg;
    // ... where a may be given relative to the outermost known planet instead (hidden bodies).
    bool a_relative_to_outer = false;
    // ... or a heliocentric state vector (au, au/d) in a stated frame.
    enum class Frame { reference, equatorial } frame = Frame::reference;
    std::array<double, 3> position{}, velocity{};
    // A hidden body's surface, for its brightness in the search rehearsal (answer key only): radius in km and
    // geometric albedo. Absent: a radius from the mass at an ice-giant density and albedo 0.3 (generate.cpp).
    std::optional<Param> radius_km, albedo;
};

// Known planets drawn as a family (count and geometric spacing with scatter), in addition to listed bodies.
struct FamilySpec {
    bool present = false;
    long line = 0;
    std::vector<std::string> names;  // the count is drawn between count_min and count_max, names taken in order
    int count_min = 0, count_max = 0;
    Param inner_a, spacing_ratio, ratio_scatter;  // a_{k+1} = a_k * ratio * (1 + scatter * N(0,1))
    Param mass, e, i_deg;
    int observer_position = 0;       // 1-based index of the observer in the family (0: none)
};

// The smallest sigma (arcsec) a scenario or an observation log may give: a micro-arcsecond.
inline constexpr double min_sigma_arcsec = 1e-6;

struct Era {
    std::string label;
    long line = 0;
    double start_year = 0.0, end_year = 0.0;
    int per_season = 1;               // observations of each target per visibility season
    double sigma_lon_arcsec = 1.0;    // Gaussian sigma in lambda cos(beta)
    double sigma_lat_arcsec = 1.0;
    double offset_lon_arcsec = 0.0, offset_lat_arcsec = 0.0;          // systematic offsets at era start
    double drift_lon_arcsec_per_yr = 0.0, drift_lat_arcsec_per_yr = 0.0;
    double precision_arcsec = 0.0;    // recorded precision (rounding step), 0 = none
    double outlier_fraction = 0.0;
    double outlier_sigma_arcsec = 0.0;
    bool records_sigma = true;        // whether sigma is written in the record
};

struct EarlySighting {
    std::string target;
    long line = 0;
    double year = 0.0;
    double sigma_arcsec = 30.0;
};

struct ObservingPlan {
    bool present = false;
    long line = 0;
    std::vector<std::string> targets;  // observed known planets (empty = all known planets but the observer)
    double elongation_limit_deg = 20.0;
    std::vector<double> search_epochs_year;
    double field_radius_deg = 1.0;
    std::vector<Era> eras;
    std::vector<EarlySighting> early;
    // What the team's brief gets wrong: relative sigma of the known planets' masses, and the sigma (degrees)
    // of the errors in their approximate orbits (mean anomaly; a and e scaled to match).
    double brief_mass_error = 0.0;
    double brief_orbit_error_deg = 0.02;
};

struct PlausibilityRules {
    double min_hill_separation = 8.0;   // mutual Hill radii between neighbours
    int max_draws = 200;
    double max_energy_error = 1e-9;
    // Redraw until every hidden body stands farther from the star than the elongation limit at every search
    // epoch, so that the exercise can end at the telescope (off by default: a body behind the star is a lesson too).
    bool hidden_clear_of_star = false;
};

struct Scenario {
    std::string file;                  // where it was read from (for messages)
    std::string name;
    std::string description;
    double epoch0_year = 0.0;
    double span_years = 300.0;
    double obliquity_deg = 23.4392911111;  // for state vectors given in an equatorial frame (IAU 2006 J2000 default)
    std::string star_name = "Star";
    Param star_mass = Param::fixed_value(1.0);
    std::vector<BodySpec> bodies;
    FamilySpec family;
    ObservingPlan plan;
    PlausibilityRules rules;
    std::optional<Telescope> telescope;  // the team's site and telescope for the search rehearsal ([telescope])

    bool all_fixed() const;
};

// Reads and validates a scenario; throws InputError naming file, line and field.
Scenario load_scenario(const std::string& path);
Scenario parse_scenario(const std::string& text, const std::string& file_label);

}  // namespace wayward
