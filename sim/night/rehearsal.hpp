// The telescope search rehearsed night by night. The team's side plans: its region and fields from its own
// solution, its strategy's order for the night, its own Kepler orbit of its planet for darkness, altitude and
// the elongation limit. The truth decides only what the telescope sees: the weather (a two-state Markov chain
// per night with the clear fraction as its stationary probability and the correlation as the chance to repeat),
// where the hidden body really is (the answer key's system integrated, light time included), how bright it is
// (H,G law from its radius and albedo), the stars and the chart. Every pointing is checked once more against
// the true geometry and refused if it breaks a rule. A candidate is settled only by a revisit: gone (a spurious
// detection), still in place within 3 sigma (a star: variable or missing from the chart), or moved by at least 5
// sigma at a plausible rate (confirmed); in between stays open for a later revisit. Units: days, radians inside.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "sim/exercise/exercise.hpp"
#include "sim/night/field_view.hpp"
#include "sim/score/truth_ephemeris.hpp"
#include "sim/search/strategy.hpp"
#include "sim/search/visibility.hpp"
#include "sim/solve/solve.hpp"
#include "sim/truth/answer_key.hpp"

namespace wayward {

struct RehearsalOptions {
    int nights = 30;
    double start_year = 0.0;        // the first night's noon is the first local noon at or after this
    Strategy strategy;
    std::vector<PlanRow> plan;      // for the plan strategy
    std::uint64_t seed = 1;         // weather, sky, chart, detections
    int region_samples = 4000;
    double extent_sigma = 3.0;      // the tiling's reach in major semi-axes
    int max_fields = 600;
    double assumed_detection = 0.9; // the team's assumed chance to record the body in a searched field
    ChartModel chart;
    SkySpec sky;                    // seed and faint limit are set from the telescope
};

// Why a clear night searched no field (none: it searched at least one; cloudy nights say cloudy).
enum class NightIdle { none, cloudy, no_darkness, near_star, too_low, too_short, unplanned };
// In words, for the summary and the log ("the region is within the elongation limit of the star", ...).
std::string to_string(NightIdle why);

enum class VisitOutcome { observed, revisit, cloudy, refused_near_star, refused_daylight, refused_low, idle };
std::string to_string(VisitOutcome o);

struct VisitRecord {
    int night = 0;
    double t_days = 0.0;
    int field = 0;
    int visit = 1;              // 1: first look tonight, 2: a revisit (0 on a cloudy or idle night's row)
    double lon = 0.0, lat = 0.0;
    double altitude = 0.0, airmass = 0.0, limit_mag = 0.0;
    double elongation = 0.0, star_altitude = 0.0;  // from the true geometry (radians)
    long detections = 0;
    int candidates = 0;          // unmatched detections
    int confirmed = 0, rejected = 0, open = 0;  // candidates settled by this revisit
    VisitOutcome outcome = VisitOutcome::observed;
    std::uint64_t exposure = 0;         // the exposure's key in the sky model (0: no exposure taken)
    std::vector<Star> candidate_places; // where the candidates were measured (mag: the night's limit); no truth
    NightIdle idle = NightIdle::none;  // why, when the outcome is idle
};

struct PlanEntry {
    int night = 0, order = 0, field = 0;
    double lon = 0.0, lat = 0.0, probability = 0.0;
    double observable_hours = 0.0;  // in tonight's darkness above the minimum altitude (the team's geometry)
};

struct NightRecord {
    int night = 0;
    double start_year = 0.0;
    bool clear = true;
    double dark_hours = 0.0, hours_used = 0.0;
    int fields = 0, revisits = 0;
    double probability_covered = 0.0;  // of the prior, in fields searched on clear nights so far
    NightIdle idle = NightIdle::none;
    double centre_elongation = 0.0;    // the region's predicted centre from the star in mid-darkness (team geometry)
};

struct RehearsalResult {
    bool found = false;
    int found_night = 0;
    double found_year = 0.0;
    double found_lon = 0.0, found_lat = 0.0;
    double hours_used = 0.0;
    int false_candidates = 0;          // candidates settled as not the body
    int false_confirmations = 0;       // settled as moving but not the body
    double false_candidate_hours = 0.0; // telescope time spent on revisits that found only false candidates
    int open_candidates = 0;            // never settled
    int fields_planned = 0;
    int fields_kept_from_star = 0;     // field-nights left out of the plan for being too near the star
    int fields_searched = 0;           // first visits on clear nights, over the whole search
    long chart_entries = 0;
    std::vector<Field> fields;
    SearchRegion region;               // with its weights at the end
    std::vector<PlanEntry> plan;
    std::vector<VisitRecord> log;
    std::vector<NightRecord> nights;
    // Revealed only in the summary at the end: the body's magnitude and place on the first night.
    double body_mag_first_night = 0.0;
    double body_lon_first_night = 0.0, body_lat_first_night = 0.0;
    double body_rate_arcsec_per_hour = 0.0;
};

// The sky and chart a rehearsal with these options and telescope observes (the viewer rebuilds a field's chart
// and exposure with it and a log row's exposure key).
SkyModel rehearsal_sky_model(const Telescope& tel, const RehearsalOptions& options);

// Runs the rehearsal. InputError if the brief has no telescope and none is given, if the answer key lacks the
// hidden body's surface, or if the nights run past the exercise's span.
RehearsalResult run_rehearsal(const Brief& brief, const Solution& solution, const Telescope& tel, const AnswerKey& key,
                              const RehearsalOptions& options);
// The same with the truth already integrated and the hidden body's absolute magnitude H.
RehearsalResult run_rehearsal(const Brief& brief, const Solution& solution, const Telescope& tel, const TruthEphemeris& truth,
                              double hidden_h, const RehearsalOptions& options);
// H of the key's hidden body from its radius and albedo; InputError when the key gives it no surface.
double hidden_absolute_magnitude(const AnswerKey& key);

}  // namespace wayward
