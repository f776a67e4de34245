// One exposure of one field against the team's chart. See field_view.hpp.
#include "sim/night/field_view.hpp"

#include <cmath>

#include <boost/random/poisson_distribution.hpp>

#include "sim/base/random.hpp"
#include "sim/base/units.hpp"
#include "sim/physics/elements.hpp"
#include "sim/search/brightness.hpp"
#include "sim/search/region.hpp"

namespace wayward {

double hash_uniform(std::uint64_t key) { return static_cast<double>(splitmix64(key) >> 11) * 0x1.0p-53; }

namespace {
// A standard normal from two hashed uniforms (Box-Muller).
double hash_normal(std::uint64_t key) {
    const double u1 = 1.0 - hash_uniform(key), u2 = hash_uniform(key ^ 0x5bd1e9955bd1e995ULL);
    return std::sqrt(-2.0 * std::log(u1)) * std::cos(two_pi * u2);
}
std::uint64_t star_key(std::uint64_t base, long cell, std::size_t k) {
    return splitmix64(base ^ (static_cast<std::uint64_t>(cell) * 0x9e3779b97f4a7c15ULL)) + static_cast<std::uint64_t>(k) * 0xbf58476d1ce4e5b9ULL;
}
}  // namespace

SkyModel::SkyModel(const SkySpec& sky, const Telescope& tel, const ChartModel& chart, std::uint64_t seed)
    : sky_(sky), tel_(tel), chart_(chart), seed_(seed) {}

const SkyModel::CellData& SkyModel::cell(const SkyCell& c) {
    auto it = cells_.find(c.index);
    if (it != cells_.end()) return it->second;
    CellData d;
    const std::uint64_t base = derive_seed(seed_, "chart");
    const auto stars = cell_stars(sky_, c);
    d.stars.reserve(stars.size());
    for (std::size_t k = 0; k < stars.size(); ++k) {
        const std::uint64_t key = star_key(base, c.index, k);
        CellStar s;
        s.star = stars[k];
        if (hash_uniform(key + 1) < chart_.variable_fraction) {
            s.amplitude = 0.3 + 1.2 * hash_uniform(key + 2);
            s.period_days = std::exp(std::log(0.3) + std::log(100.0) * hash_uniform(key + 3));  // 0.3 to 30 days
            s.phase = two_pi * hash_uniform(key + 4);
        }
        const double completeness = 1.0 / (1.0 + std::exp((s.star.mag - tel_.chart_limit_mag) / chart_.completeness_width_mag));
        s.listed = hash_uniform(key + 5) < completeness;
        s.chart_dlon = chart_.position_error_arcsec * arcsec * hash_normal(key + 6);
        s.chart_dlat = chart_.position_error_arcsec * arcsec * hash_normal(key + 7);
        chart_entries_ += s.listed ? 1 : 0;
        d.stars.push_back(s);
    }
    // Spurious chart entries: places listed where there is no star.
    Rng rng = make_rng(seed_, "chart spurious", static_cast<std::uint64_t>(c.index));
    const double mean = chart_.spurious_entry_fraction * static_cast<double>(stars.size());
    const long n = mean > 0.0 ? boost::random::poisson_distribution<long, double>(mean)(rng) : 0;
    const double s0 = std::sin(c.lat_min), s1 = std::sin(c.lat_max);
    for (long k = 0; k < n; ++k)
        d.spurious_entries.push_back({uniform(rng, c.lon_min, c.lon_max), std::asin(uniform(rng, s0, s1)), tel_.chart_limit_mag});
    chart_entries_ += n;
    return cells_.emplace(c.index, std::move(d)).first->second;
}

Exposure SkyModel::expose(double lon, double lat, double t_days, double limit_mag, std::uint64_t visit_key, const BodyInField& body,
                          FieldPicture* picture) {
    Exposure out;
    const double sigma = tel_.astrometric_error_arcsec * arcsec;
    const double match = chart_.match_radius_arcsec * arcsec;
    const double half = 0.5 * tel_.field_of_view_deg * deg;
    const double reach = half * std::sqrt(2.0) * 1.01;
    const std::uint64_t vbase = derive_seed(seed_, "visit", visit_key);
    const auto cells = cells_near(sky_, lon, lat, reach);
    // Chart entries near the body, to hide it when one sits on top of it.
    bool body_hidden = false;
    for (const SkyCell& c : cells) {
        const CellData& d = cell(c);
        for (std::size_t k = 0; k < d.stars.size(); ++k) {
            const CellStar& s = d.stars[k];
            double xi = 0.0, eta = 0.0;
            to_tangent(lon, lat, s.star.lon, s.star.lat, xi, eta);
            if (!inside_field(tel_, xi, eta)) continue;
            const double mag = s.star.mag + s.amplitude * std::sin(two_pi * t_days / s.period_days + s.phase);
            const std::uint64_t key = star_key(vbase, c.index, k);
            if (picture && s.listed) picture->chart.push_back({s.star.lon + s.chart_dlon, s.star.lat + s.chart_dlat, s.star.mag});
            if (body.present && s.listed &&
                std::hypot(wrap_pi(s.star.lon + s.chart_dlon - body.lon) * std::cos(body.lat), s.star.lat + s.chart_dlat - body.lat) < match)
                body_hidden = true;
            if (!(hash_uniform(key) < detection_efficiency(mag, limit_mag, tel_.detection_width_mag, tel_.detection_max))) continue;
            ++out.detections;
            const bool in_chart = s.listed && std::hypot(s.chart_dlon, s.chart_dlat) < match;
            Detection det;
            det.lon = s.star.lon + sigma * hash_normal(key + 11) / std::cos(s.star.lat);
            det.lat = s.star.lat + sigma * hash_normal(key + 12);
            if (picture) picture->recorded.push_back({det.lon, det.lat, mag});
            if (in_chart) continue;
            det.source = s.amplitude > 0.0 ? Source::variable_star : Source::star;
            out.candidates.push_back(det);
        }
        for (const Star& e : d.spurious_entries) {
            if (picture) {
                double xi = 0.0, eta = 0.0;
                to_tangent(lon, lat, e.lon, e.lat, xi, eta);
                if (inside_field(tel_, xi, eta)) picture->chart.push_back(e);
            }
            if (body.present && std::hypot(wrap_pi(e.lon - body.lon) * std::cos(body.lat), e.lat - body.lat) < match) body_hidden = true;
        }
    }
    // Spurious detections: a fresh Poisson draw each exposure.
    Rng rng = make_rng(vbase, "spurious");
    const long n = boost::random::poisson_distribution<long, double>(chart_.spurious_detections_per_field)(rng);
    for (long k = 0; k < n; ++k) {
        double xi = uniform(rng, -half, half), eta = uniform(rng, -half, half);
        if (!inside_field(tel_, xi, eta)) continue;
        Detection det;
        from_tangent(lon, lat, xi, eta, det.lon, det.lat);
        det.source = Source::spurious;
        ++out.detections;
        if (picture) picture->recorded.push_back({det.lon, det.lat, limit_mag});
        out.candidates.push_back(det);
    }
    if (body.present) {
        double xi = 0.0, eta = 0.0;
        to_tangent(lon, lat, body.lon, body.lat, xi, eta);
        const std::uint64_t key = derive_seed(vbase, "body");
        if (inside_field(tel_, xi, eta) &&
            hash_uniform(key) < detection_efficiency(body.mag, limit_mag, tel_.detection_width_mag, tel_.detection_max)) {
            ++out.detections;
            if (!body_hidden) {
                Detection det;
                det.lon = body.lon + sigma * hash_normal(key + 1) / std::cos(body.lat);
                det.lat = body.lat + sigma * hash_normal(key + 2);
                if (picture) picture->recorded.push_back({det.lon, det.lat, body.mag});
                det.source = Source::body;
                out.candidates.push_back(det);
            }
        }
    }
    return out;
}

}  // namespace wayward
