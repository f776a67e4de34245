// Background star fields for the sky seen from the observer: a seeded random field of point stars over a
// longitude/latitude box (or the whole sphere), with magnitudes drawn from a cumulative star-count law
// log10 N(<m) = log10_n0 + slope (m - m0) stars per square degree. The default law (slope 0.45 dex per
// magnitude, about 0.12 stars per square degree brighter than m = 6) is common practice for a rough sky,
// not a published fit; the stars are invented backdrop and carry no physics. Also the small-circle outline
// used to draw an angular radius around a direction on the sky. Angles in radians.
#pragma once

#include <cstdint>
#include <vector>

namespace wayward {

struct Star {
    double lon = 0.0;  // radians, [0, 2 pi)
    double lat = 0.0;  // radians
    double mag = 0.0;  // apparent magnitude
};

// Cumulative star counts per square degree: log10 N(<m) = log10_n0 + slope (m - m0).
struct StarCountLaw {
    double m0 = 6.0;
    double log10_n0 = -0.92;  // ~5000 stars brighter than 6 over the whole sky (common practice, from memory)
    double slope = 0.45;      // dex per magnitude (common practice: 0.4-0.5)
    double per_square_degree(double mag) const;  // N(<mag)
};

struct StarFieldSpec {
    std::uint64_t seed = 1;
    bool whole_sphere = true;
    double lon_min = 0.0, lon_max = 0.0;  // box, radians (lon_max > lon_min; may run past 2 pi)
    double lat_min = 0.0, lat_max = 0.0;
    double bright_mag = -1.0;             // brightest star drawn
    double faint_mag = 8.5;               // faintest star drawn
    long count = -1;                      // stars to draw; < 0: the law's expected count over the area
    StarCountLaw law;
};

// Area of the field in square degrees.
double field_area_square_degrees(const StarFieldSpec& spec);
// Expected number of stars between bright_mag and faint_mag over the field under the law.
double expected_star_count(const StarFieldSpec& spec);
// Magnitude at cumulative fraction u in [0, 1] of the law between bright and faint (inverse of the CDF).
double magnitude_at_fraction(const StarCountLaw& law, double bright_mag, double faint_mag, double u);

// Draws the field: positions uniform on the sphere inside the box, magnitudes from the law, from the
// stream derive_seed(seed, "starfield"). Same spec, same stars. Throws std::invalid_argument for a bad spec.
std::vector<Star> generate_star_field(const StarFieldSpec& spec);

struct SkyPoint {
    double lon = 0.0;  // radians, [0, 2 pi)
    double lat = 0.0;
};
// `points` directions at angular distance `radius` from (lon, lat), going once around it.
std::vector<SkyPoint> small_circle(double lon, double lat, double radius, int points);

}  // namespace wayward
