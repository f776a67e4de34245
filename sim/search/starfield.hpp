// Background star fields for the sky seen from the observer: a seeded random field of point stars over a
// longitude/latitude box (or the whole sphere), with magnitudes drawn from a cumulative star-count law
// log10 N(<m) = log10_n0 + slope (m - m0) + curvature (m - m0)^2 stars per square degree. A log-count slope
// that falls with magnitude (about 0.55 dex/mag for naked-eye stars, 0.3 near m = 20) is common practice; the
// default coefficients are fitted to three whole-sky totals (about 9000 stars to V = 6.5, 2.5 million to 11.5,
// 1.8 billion to G = 20.7; from memory: a naked-eye catalogue and two space-astrometry catalogues). For the
// search rehearsal the density also rises towards an invented galactic-plane-like band, and the sky is cut into
// fixed cells each drawn from its own stream, so that any field, revisit or overlapping field sees the same
// stars. The stars are invented backdrop. Also the small-circle outline used to draw an angular radius around
// a direction on the sky. Angles in radians.
#pragma once

#include <cstdint>
#include <vector>

#include "sim/physics/system.hpp"

namespace wayward {

struct Star {
    double lon = 0.0;  // radians, [0, 2 pi)
    double lat = 0.0;  // radians
    double mag = 0.0;  // apparent magnitude
};

// Cumulative star counts per square degree: log10 N(<m) = log10_n0 + slope (m - m0) + curvature (m - m0)^2.
struct StarCountLaw {
    double m0 = 6.0;
    double log10_n0 = -0.9401;     // ~4800 stars brighter than 6 over the whole sky
    double slope = 0.5640;         // dex per magnitude at m0
    double curvature = -0.012546;  // dex per magnitude squared (the slope falls towards faint stars)
    double per_square_degree(double mag) const;  // N(<mag)
    double log_slope_at(double mag) const { return slope + 2.0 * curvature * (mag - m0); }
    // Faintest magnitude where the law still grows (where its slope reaches zero; infinite without curvature).
    double faintest_valid_mag() const;
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

// A band of higher star density along a great circle (a galaxy's plane seen from inside it):
// density factor (1 + amplitude exp(-(b / width)^2)) / norm, b the angle from the band's circle, normalised so
// the whole-sky mean factor is one (the law's totals hold over the sphere).
struct DensityBand {
    Vec3 pole{0.0, -0.5, 0.8660254037844386};  // the band's pole in the observer's frame (invented: 60 deg tilt)
    double amplitude = 4.0;
    double width = 15.0 * 0.017453292519943295;  // radians
    double factor(double lon, double lat) const;
    double mean_unnormalised() const;  // the sphere's mean of 1 + amplitude exp(-(b/width)^2)

private:
    // The mean for the amplitude and width it was last computed for (a quadrature, so kept).
    mutable double cached_mean_ = 0.0, cached_amplitude_ = -1.0, cached_width_ = -1.0;
};

// The sky for the search: fixed cells (rings of cell_deg in latitude, each ring cut into equal cells of about
// cell_deg in longitude), each drawn from derive_seed(seed, "sky cell", cell index): a Poisson number of stars
// (expected: cell area x law between bright and faint x band factor at the cell centre), uniform in area
// inside the cell, magnitudes from the law.
struct SkySpec {
    std::uint64_t seed = 1;
    double cell_deg = 0.5;
    double bright_mag = 3.0;
    double faint_mag = 17.0;
    StarCountLaw law;
    DensityBand band;
};
struct SkyCell {
    long index = 0;
    double lon_min = 0.0, lon_max = 0.0, lat_min = 0.0, lat_max = 0.0;  // radians
};
// The cells that touch a cap of angular radius `radius` around (lon, lat).
std::vector<SkyCell> cells_near(const SkySpec& spec, double lon, double lat, double radius);
// One cell's stars (same spec and cell, same stars).
std::vector<Star> cell_stars(const SkySpec& spec, const SkyCell& cell);
// Expected stars per square degree between the spec's bright and faint limits at a place.
double expected_density(const SkySpec& spec, double lon, double lat);

struct SkyPoint {
    double lon = 0.0;  // radians, [0, 2 pi)
    double lat = 0.0;
};
// `points` directions at angular distance `radius` from (lon, lat), going once around it.
std::vector<SkyPoint> small_circle(double lon, double lat, double radius, int points);

}  // namespace wayward
