// Seeded star fields and small circles on the sky. See starfield.hpp.
#include "sim/search/starfield.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "sim/physics/elements.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/base/random.hpp"
#include "sim/base/units.hpp"

namespace wayward {

double StarCountLaw::per_square_degree(double mag) const { return std::pow(10.0, log10_n0 + slope * (mag - m0)); }

double field_area_square_degrees(const StarFieldSpec& spec) {
    constexpr double square_degrees_per_steradian = (180.0 / pi) * (180.0 / pi);
    if (spec.whole_sphere) return 4.0 * pi * square_degrees_per_steradian;
    const double dlon = spec.lon_max - spec.lon_min;
    const double dsin = std::sin(spec.lat_max) - std::sin(spec.lat_min);
    return dlon * dsin * square_degrees_per_steradian;
}

double expected_star_count(const StarFieldSpec& spec) {
    const double per_deg2 = spec.law.per_square_degree(spec.faint_mag) - spec.law.per_square_degree(spec.bright_mag);
    return field_area_square_degrees(spec) * per_deg2;
}

double magnitude_at_fraction(const StarCountLaw& law, double bright_mag, double faint_mag, double u) {
    // CDF(m) = (10^(s m) - 10^(s mb)) / (10^(s mf) - 10^(s mb)), inverted with 10^(s mb) factored out.
    const double s = law.slope;
    const double span = std::pow(10.0, s * (faint_mag - bright_mag)) - 1.0;
    return bright_mag + std::log10(1.0 + u * span) / s;
}

std::vector<Star> generate_star_field(const StarFieldSpec& spec) {
    if (!(spec.faint_mag > spec.bright_mag)) throw std::invalid_argument("star field: faint_mag must exceed bright_mag");
    if (!(spec.law.slope > 0.0)) throw std::invalid_argument("star field: the count law's slope must be positive");
    if (!spec.whole_sphere) {
        if (!(spec.lon_max > spec.lon_min) || spec.lon_max - spec.lon_min > two_pi)
            throw std::invalid_argument("star field: need lon_min < lon_max <= lon_min + 2 pi");
        if (!(spec.lat_max > spec.lat_min) || spec.lat_min < -pi / 2 || spec.lat_max > pi / 2)
            throw std::invalid_argument("star field: need -pi/2 <= lat_min < lat_max <= pi/2");
    }
    const double expected = expected_star_count(spec);
    const long count = spec.count >= 0 ? spec.count : std::lround(expected);
    if (count > 10'000'000) throw std::invalid_argument("star field: more than ten million stars asked for");

    const double lon_lo = spec.whole_sphere ? 0.0 : spec.lon_min;
    const double lon_hi = spec.whole_sphere ? two_pi : spec.lon_max;
    const double sin_lo = spec.whole_sphere ? -1.0 : std::sin(spec.lat_min);
    const double sin_hi = spec.whole_sphere ? 1.0 : std::sin(spec.lat_max);

    Rng rng = make_rng(spec.seed, "starfield");
    std::vector<Star> stars;
    stars.reserve(static_cast<std::size_t>(count));
    for (long k = 0; k < count; ++k) {
        Star s;
        s.lon = wrap_two_pi(uniform(rng, lon_lo, lon_hi));
        s.lat = std::asin(std::clamp(uniform(rng, sin_lo, sin_hi), -1.0, 1.0));  // uniform in area
        s.mag = magnitude_at_fraction(spec.law, spec.bright_mag, spec.faint_mag, uniform01(rng));
        stars.push_back(s);
    }
    return stars;
}

std::vector<SkyPoint> small_circle(double lon, double lat, double radius, int points) {
    std::vector<SkyPoint> out;
    if (points <= 0) return out;
    const Vec3 centre = unit_vector(lon, lat);
    const Vec3 east(-std::sin(lon), std::cos(lon), 0.0);
    const Vec3 north = centre.cross(east);
    const double c = std::cos(radius), s = std::sin(radius);
    out.reserve(static_cast<std::size_t>(points));
    for (int k = 0; k < points; ++k) {
        const double theta = two_pi * k / points;
        const Vec3 v = c * centre + s * (std::cos(theta) * north + std::sin(theta) * east);
        const SkyPosition p = to_sky(v);
        out.push_back({p.lon, p.lat});
    }
    return out;
}

}  // namespace wayward
