// Search strategies by name, each a small function that orders the fields for one night, with its revisit rule.
//   probability: greedy over the region's current probability (recomputed each night after Bayes' rule has
//                lowered the weight of fields searched without a detection); revisit the same night.
//   sweep:       along the predicted track in rows across it (boustrophedon), ground not yet covered first;
//                revisit candidates early the next night (a larger displacement settles slow movers).
//   spiral:      outwards from the best point, ring by ring, counter-clockwise; revisit the same night.
//   plan:        the team's own plan (a CSV of night, lon_deg, lat_deg) in file order; revisit the same night.
// A same-night revisit waits long enough for a body at the predicted distance to move several astrometric
// errors (at least 30 minutes, at most 4 hours). Team side: nothing here knows the truth.
#pragma once

#include <string>
#include <vector>

#include "sim/exercise/telescope.hpp"
#include "sim/search/region.hpp"

namespace wayward {

enum class StrategyKind { probability, sweep, spiral, plan };

struct Strategy {
    StrategyKind kind = StrategyKind::probability;
    std::string name = "probability";
    bool revisit_next_night = false;  // else the same night, after revisit_gap_minutes
};
// InputError (field "--strategy") for an unknown name.
Strategy strategy_by_name(const std::string& name);
std::vector<std::string> strategy_names();

// One row of a team's own plan.
struct PlanRow {
    int night = 1;
    double lon = 0.0, lat = 0.0;  // radians
    long line = 0;
};
// night,lon_deg,lat_deg (header required); InputError naming file, line and field.
std::vector<PlanRow> parse_plan_csv(const std::string& text, const std::string& file);

// Apparent rate (radians per day) of a body at distance r au seen at opposition from a circular orbit of
// `observer_au` around a star of `star_mass` solar masses: the difference of circular speeds k sqrt(M / a)
// over the distance between the orbits (Kepler's third law with Gauss's k).
double opposition_rate(double r_au, double observer_au, double star_mass);
// Minutes to wait before a same-night revisit so that a body moving at `rate` (radians/day) moves `k` times the
// astrometric error (per coordinate, times sqrt 2 for a difference of two positions), within [30, 240].
double revisit_gap_minutes(double rate, double astrometric_error_arcsec, double k = 8.0);

// The order in which to try the fields tonight: indices into `fields`. `covered[i]` says field i was searched
// on an earlier clear night; `probability[i]` is its current probability. Plan fields (`night` == the plan's
// night) are listed by the caller in `fields` with fixed places.
std::vector<std::size_t> night_order(const Strategy& s, const SearchRegion& r, const std::vector<Field>& fields,
                                     const std::vector<double>& probability, const std::vector<bool>& covered);

}  // namespace wayward
