// The search region and its tiling. See region.hpp.
#include "sim/search/region.hpp"

#include <algorithm>
#include <cmath>

#include "sim/base/random.hpp"
#include "sim/base/units.hpp"
#include "sim/physics/elements.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/predict/sky_map.hpp"

namespace wayward {

void to_tangent(double lon0, double lat0, double lon, double lat, double& xi, double& eta) {
    const double dl = lon - lon0;
    const double cos_c = std::sin(lat0) * std::sin(lat) + std::cos(lat0) * std::cos(lat) * std::cos(dl);
    xi = std::cos(lat) * std::sin(dl) / cos_c;
    eta = (std::cos(lat0) * std::sin(lat) - std::sin(lat0) * std::cos(lat) * std::cos(dl)) / cos_c;
}

void from_tangent(double lon0, double lat0, double xi, double eta, double& lon, double& lat) {
    const double rho = std::hypot(xi, eta);
    if (rho == 0.0) { lon = wrap_two_pi(lon0); lat = lat0; return; }
    const double c = std::atan(rho);
    lat = std::asin(std::cos(c) * std::sin(lat0) + eta * std::sin(c) * std::cos(lat0) / rho);
    lon = wrap_two_pi(lon0 + std::atan2(xi * std::sin(c), rho * std::cos(lat0) * std::cos(c) - eta * std::sin(lat0) * std::sin(c)));
}

SearchRegion region_from_solution(const Solution& s, int count, std::uint64_t seed) {
    const Prediction& p = s.prediction;
    SearchRegion r;
    r.epoch_year = p.epoch_year;
    r.lon = p.lon;
    r.lat = p.lat;
    r.distance_au = p.distance_au;
    r.track = p.track;
    r.sigma_major = p.semi_major_arcsec * arcsec;
    r.sigma_minor = p.semi_minor_arcsec * arcsec;
    r.orientation = p.orientation_deg * deg;
    Rng rng = make_rng(seed, "search region");
    r.samples.reserve(static_cast<std::size_t>(std::max(count, 0)));
    if (samples_describe_region(p)) {
        std::vector<SkySample> bodies;
        double total = 0.0, total_sq = 0.0;
        for (std::size_t k = 0; k < p.sample_lon.size(); ++k) {
            bodies.push_back({p.sample_lon[k], p.sample_lat[k], p.sample_weight[k], group_of_sample(p, k)});
            total += p.sample_weight[k];
            total_sq += p.sample_weight[k] * p.sample_weight[k];
        }
        r.from_virtual_bodies = true;
        r.why_virtual_bodies = why_samples_describe_region(p);
        r.virtual_bodies = static_cast<int>(bodies.size());
        r.effective_samples = total_sq > 0.0 ? total * total / total_sq : 0.0;
        std::vector<double> radii;
        for (const SkySample& x : draw_from_sample_density(bodies, count, rng)) {
            RegionSample rs;
            if (separation(r.lon, r.lat, x.lon, x.lat) < 80.0 * deg) {
                to_tangent(r.lon, r.lat, x.lon, x.lat, rs.xi, rs.eta);
            } else {
                rs.xi = rs.eta = 1e3;  // beyond every field (a field is at most a few degrees wide)
            }
            radii.push_back(std::hypot(rs.xi, rs.eta));
            r.samples.push_back(rs);
        }
        if (!radii.empty()) {
            const auto q = radii.begin() + static_cast<std::ptrdiff_t>(std::floor(0.989 * static_cast<double>(radii.size() - 1)));
            std::nth_element(radii.begin(), q, radii.end());
            r.reach = std::min(*q, std::tan(80.0 * deg));
        }
        return r;
    }
    // Samples of N(0, C) through the Cholesky factor of C (arcsec^2 -> radians^2); a floor of 1 arcsec keeps a
    // degenerate covariance drawable.
    const double a = std::max(p.cov_ll, 1.0), b = p.cov_lb, c = std::max(p.cov_bb, 1.0);
    const double l11 = std::sqrt(a), l21 = b / l11, l22 = std::sqrt(std::max(c - l21 * l21, 1e-6 * c));
    for (int k = 0; k < count; ++k) {
        const double z1 = normal(rng), z2 = normal(rng);
        r.samples.push_back({l11 * z1 * arcsec, (l21 * z1 + l22 * z2) * arcsec, 1.0});
    }
    return r;
}

void region_centre(const SearchRegion& r, double year, double& lon, double& lat) {
    lon = r.lon;
    lat = r.lat;
    if (r.track.size() < 2) return;
    // Catmull-Rom (cubic Hermite) interpolation in the track: smooth enough that its derivative is the apparent
    // motion even near a stationary point, where straight lines between quarter-year nodes would average it out.
    auto at = [&](double y, double& l, double& b) {
        const auto it = std::lower_bound(r.track.begin(), r.track.end(), y, [](const TrackPoint& t, double v) { return t.year < v; });
        const std::size_t n = r.track.size();
        const std::size_t k = std::clamp<std::size_t>(static_cast<std::size_t>(it - r.track.begin()), 1, n - 1);
        const TrackPoint& p0 = r.track[k == 1 ? 0 : k - 2];
        const TrackPoint& p1 = r.track[k - 1];
        const TrackPoint& p2 = r.track[k];
        const TrackPoint& p3 = r.track[std::min(k + 1, n - 1)];
        const double h = p2.year - p1.year;
        const double u = (y - p1.year) / h;
        // Longitudes unwrapped about p1.
        const double q0 = wrap_pi(p0.lon - p1.lon), q2 = wrap_pi(p2.lon - p1.lon), q3 = q2 + wrap_pi(p3.lon - p2.lon);
        const double m1l = (q2 - q0) / (p2.year - p0.year) * h, m2l = (q3 - 0.0) / (p3.year - p1.year) * h;
        const double m1b = (p2.lat - p0.lat) / (p2.year - p0.year) * h, m2b = (p3.lat - p1.lat) / (p3.year - p1.year) * h;
        const double h00 = 2 * u * u * u - 3 * u * u + 1, h10 = u * u * u - 2 * u * u + u;
        const double h01 = -2 * u * u * u + 3 * u * u, h11 = u * u * u - u * u;
        l = p1.lon + h10 * m1l + h01 * q2 + h11 * m2l;
        b = h00 * p1.lat + h10 * m1b + h01 * p2.lat + h11 * m2b;
    };
    double l0 = 0.0, b0 = 0.0, l1 = 0.0, b1 = 0.0;
    at(r.epoch_year, l0, b0);
    at(year, l1, b1);
    lon = wrap_two_pi(r.lon + wrap_pi(l1 - l0));
    lat = std::clamp(r.lat + (b1 - b0), -pi / 2, pi / 2);
}

bool inside_field(const Telescope& tel, double dxi, double deta) {
    const double half = 0.5 * tel.field_of_view_deg * deg;
    if (tel.shape == FieldShape::square) return std::abs(dxi) <= half && std::abs(deta) <= half;
    return dxi * dxi + deta * deta <= half * half;
}

void field_centre(const SearchRegion& r, const Field& f, double year, double& lon, double& lat) {
    if (f.fixed) { lon = f.lon; lat = f.lat; return; }
    double cl = 0.0, cb = 0.0;
    region_centre(r, year, cl, cb);
    from_tangent(cl, cb, f.xi, f.eta, lon, lat);
}

Field as_offset(const SearchRegion& r, const Field& f, double year) {
    if (!f.fixed) return f;
    double cl = 0.0, cb = 0.0;
    region_centre(r, year, cl, cb);
    Field o = f;
    o.fixed = false;
    to_tangent(cl, cb, f.lon, f.lat, o.xi, o.eta);
    return o;
}

std::vector<Field> tile_region(const SearchRegion& r, const Telescope& tel, double extent_sigma, int max_fields) {
    const double fov = tel.field_of_view_deg * deg;
    const double step = tel.shape == FieldShape::square ? fov : fov / std::sqrt(2.0);
    const double spread = r.from_virtual_bodies ? r.reach * extent_sigma / 3.0 : extent_sigma * r.sigma_major;
    const double extent = std::max(spread, 0.5 * step);
    const int n = std::min(200, static_cast<int>(std::ceil(extent / step - 0.5)));
    std::vector<Field> fields;
    for (int i = -n; i <= n; ++i)
        for (int j = -n; j <= n; ++j) {
            const double xi = i * step, eta = j * step;
            if (std::hypot(xi, eta) > extent + 0.71 * step) continue;  // the grid's corners beyond the extent
            fields.push_back({0, xi, eta, false, 0.0, 0.0});
        }
    std::stable_sort(fields.begin(), fields.end(), [](const Field& a, const Field& b) {
        return std::hypot(a.xi, a.eta) < std::hypot(b.xi, b.eta);
    });
    if (static_cast<int>(fields.size()) > max_fields) fields.resize(static_cast<std::size_t>(max_fields));
    for (std::size_t k = 0; k < fields.size(); ++k) fields[k].id = static_cast<int>(k + 1);
    return fields;
}

std::vector<double> field_probabilities(const SearchRegion& r, const Telescope& tel, const std::vector<Field>& fields) {
    std::vector<double> p(fields.size(), 0.0);
    if (r.samples.empty()) return p;
    const double total = r.total_prior_weight();
    for (std::size_t k = 0; k < fields.size(); ++k) {
        if (fields[k].fixed) continue;  // a plan's fixed place is not an offset of the moving region
        double w = 0.0;
        for (const RegionSample& s : r.samples)
            if (inside_field(tel, s.xi - fields[k].xi, s.eta - fields[k].eta)) w += s.weight;
        p[k] = w / total;
    }
    return p;
}

void lower_weights(SearchRegion& r, const Telescope& tel, const Field& f, double p_detect) {
    if (f.fixed) return;
    for (RegionSample& s : r.samples)
        if (inside_field(tel, s.xi - f.xi, s.eta - f.eta)) s.weight *= 1.0 - p_detect;
}

}  // namespace wayward
