// Seeded star fields and small circles on the sky. See starfield.hpp.
#include "sim/search/starfield.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>

#include <boost/math/quadrature/gauss_kronrod.hpp>
#include <boost/random/poisson_distribution.hpp>

#include "sim/physics/elements.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/base/random.hpp"
#include "sim/base/units.hpp"

namespace wayward {

double StarCountLaw::per_square_degree(double mag) const {
    const double x = mag - m0;
    return std::pow(10.0, log10_n0 + slope * x + curvature * x * x);
}

double StarCountLaw::faintest_valid_mag() const {
    if (!(curvature < 0.0)) return std::numeric_limits<double>::infinity();
    return m0 - slope / (2.0 * curvature);
}

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
    if (law.curvature == 0.0) {
        // CDF(m) = (10^(s m) - 10^(s mb)) / (10^(s mf) - 10^(s mb)), inverted with 10^(s mb) factored out.
        const double s = law.slope;
        const double span = std::pow(10.0, s * (faint_mag - bright_mag)) - 1.0;
        return bright_mag + std::log10(1.0 + u * span) / s;
    }
    // With curvature: N(m) at the fraction, then the quadratic's root on the law's rising branch, written
    // x = 2 d / (b + sqrt(b^2 + 4 c d)) (d = log10 N - log10_n0) so it stays exact as c goes to zero.
    const double nb = law.per_square_degree(bright_mag), nf = law.per_square_degree(faint_mag);
    const double d = std::log10(nb + u * (nf - nb)) - law.log10_n0;
    const double disc = std::max(0.0, law.slope * law.slope + 4.0 * law.curvature * d);
    return std::clamp(law.m0 + 2.0 * d / (law.slope + std::sqrt(disc)), bright_mag, faint_mag);
}

std::vector<Star> generate_star_field(const StarFieldSpec& spec) {
    if (!(spec.faint_mag > spec.bright_mag)) throw std::invalid_argument("star field: faint_mag must exceed bright_mag");
    if (!(spec.law.slope > 0.0)) throw std::invalid_argument("star field: the count law's slope must be positive");
    if (!(spec.faint_mag <= spec.law.faintest_valid_mag()))
        throw std::invalid_argument("star field: faint_mag lies beyond the count law's valid range");
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

double DensityBand::mean_unnormalised() const {
    if (cached_amplitude_ == amplitude && cached_width_ == width) return cached_mean_;
    // The mean over the sphere of a profile in b (the angle from the band's circle): (1/2) int cos b f(b) db.
    // Gauss-Kronrod from Boost.Math rather than a hand-written rule.
    const auto f = [this](double b) { return 0.5 * std::cos(b) * (1.0 + amplitude * std::exp(-(b / width) * (b / width))); };
    cached_mean_ = boost::math::quadrature::gauss_kronrod<double, 61>::integrate(f, -pi / 2, pi / 2, 10, 1e-12);
    cached_amplitude_ = amplitude;
    cached_width_ = width;
    return cached_mean_;
}

double DensityBand::factor(double lon, double lat) const {
    const double b = std::asin(std::clamp(unit_vector(lon, lat).dot(pole.normalized()), -1.0, 1.0));
    return (1.0 + amplitude * std::exp(-(b / width) * (b / width))) / mean_unnormalised();
}

namespace {
struct Ring {
    long first = 0;   // index of the ring's first cell
    long cells = 1;
};
long ring_count(const SkySpec& s) { return std::lround(180.0 / s.cell_deg); }
Ring ring_of(const SkySpec& s, long i) {
    // Cells per ring follow the ring's widest circumference; the first index is the sum over the rings below.
    const long rings = ring_count(s);
    const double h = pi / static_cast<double>(rings);
    Ring r;
    long first = 0;
    for (long k = 0; k <= i; ++k) {
        const double lat_lo = -pi / 2 + h * static_cast<double>(k), lat_hi = lat_lo + h;
        const double widest = std::max(std::cos(lat_lo), std::cos(lat_hi));
        const long n = std::max(1L, static_cast<long>(std::ceil(two_pi * widest / h)));
        if (k == i) { r.first = first; r.cells = n; }
        first += n;
    }
    return r;
}
}  // namespace

std::vector<SkyCell> cells_near(const SkySpec& spec, double lon, double lat, double radius) {
    if (!(spec.cell_deg > 0.0 && spec.cell_deg <= 10.0)) throw std::invalid_argument("sky: cell_deg must be in (0, 10]");
    const long rings = ring_count(spec);
    const double h = pi / static_cast<double>(rings);
    const double lat_lo = std::max(-pi / 2, lat - radius), lat_hi = std::min(pi / 2, lat + radius);
    std::vector<SkyCell> out;
    const long i0 = std::clamp(static_cast<long>(std::floor((lat_lo + pi / 2) / h)), 0L, rings - 1);
    const long i1 = std::clamp(static_cast<long>(std::floor((lat_hi + pi / 2) / h)), 0L, rings - 1);
    const Ring base = ring_of(spec, i0);
    long first = base.first;
    for (long i = i0; i <= i1; ++i) {
        const Ring r = i == i0 ? base : Ring{first, ring_of(spec, i).cells};
        first = r.first + r.cells;
        const double ring_lo = -pi / 2 + h * static_cast<double>(i), ring_hi = ring_lo + h;
        const double w = two_pi / static_cast<double>(r.cells);
        // Longitude half-width of the cap on this ring (all longitudes when the cap holds a pole).
        const double cos_edge = std::min(std::cos(ring_lo), std::cos(ring_hi));
        const bool all = lat_hi >= pi / 2 - 1e-12 || lat_lo <= -pi / 2 + 1e-12 || std::sin(radius) >= cos_edge;
        long j0 = 0, j1 = r.cells - 1;
        if (!all) {
            const double half = std::asin(std::min(1.0, std::sin(radius) / cos_edge));
            j0 = static_cast<long>(std::floor((lon - half) / w));
            j1 = static_cast<long>(std::floor((lon + half) / w));
            if (j1 - j0 + 1 >= r.cells) { j0 = 0; j1 = r.cells - 1; }
        }
        for (long j = j0; j <= j1; ++j) {
            const long jj = ((j % r.cells) + r.cells) % r.cells;
            out.push_back({r.first + jj, w * static_cast<double>(jj), w * static_cast<double>(jj + 1), ring_lo, ring_hi});
        }
    }
    return out;
}

double expected_density(const SkySpec& spec, double lon, double lat) {
    return (spec.law.per_square_degree(spec.faint_mag) - spec.law.per_square_degree(spec.bright_mag)) * spec.band.factor(lon, lat);
}

std::vector<Star> cell_stars(const SkySpec& spec, const SkyCell& c) {
    constexpr double square_degrees_per_steradian = (180.0 / pi) * (180.0 / pi);
    if (!(spec.faint_mag > spec.bright_mag) || !(spec.faint_mag <= spec.law.faintest_valid_mag()))
        throw std::invalid_argument("sky: need bright_mag < faint_mag within the count law's valid range");
    const double area = (c.lon_max - c.lon_min) * (std::sin(c.lat_max) - std::sin(c.lat_min)) * square_degrees_per_steradian;
    const double mean = area * expected_density(spec, 0.5 * (c.lon_min + c.lon_max), 0.5 * (c.lat_min + c.lat_max));
    Rng rng = make_rng(spec.seed, "sky cell", static_cast<std::uint64_t>(c.index));
    const long n = mean > 0.0 ? static_cast<long>(boost::random::poisson_distribution<long, double>(mean)(rng)) : 0L;
    std::vector<Star> stars;
    stars.reserve(static_cast<std::size_t>(n));
    const double s0 = std::sin(c.lat_min), s1 = std::sin(c.lat_max);
    for (long k = 0; k < n; ++k) {
        Star s;
        s.lon = uniform(rng, c.lon_min, c.lon_max);
        s.lat = std::asin(std::clamp(uniform(rng, s0, s1), -1.0, 1.0));
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
