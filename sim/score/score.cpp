// Scores and luck curves; see score.hpp.
#include "sim/score/score.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <memory>

#include <boost/math/quadrature/gauss.hpp>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"
#include "sim/base/random.hpp"
#include "sim/predict/region_density.hpp"

namespace wayward {

double gaussian_mass_in_circle(double cll, double clb, double cbb, double r_arcsec) {
    // In the frame of the ellipse's axes (variances a2 >= b2), in polar coordinates: P = (1 / 2 pi sqrt(a2 b2))
    // int_0^2pi (1 - exp(-r^2 q(t) / 2)) / q(t) dt with q(t) = cos^2 t / a2 + sin^2 t / b2, the radial integral
    // done in closed form; the angle by 30-point Gauss-Legendre on each quarter (the integrand is smooth and
    // symmetric), Boost.Math's quadrature.
    const double tr = cll + cbb, det = cll * cbb - clb * clb;
    if (!(det > 0.0) || !(r_arcsec >= 0.0)) return NAN;
    const double disc = std::sqrt(std::max(0.0, 0.25 * tr * tr - det));
    const double a2 = 0.5 * tr + disc, b2 = std::max(0.5 * tr - disc, det / (0.5 * tr + disc));
    auto integrand = [&](double t) {
        const double c = std::cos(t), s = std::sin(t);
        const double q = c * c / a2 + s * s / b2;
        return -std::expm1(-0.5 * r_arcsec * r_arcsec * q) / q;
    };
    const double quarter = boost::math::quadrature::gauss<double, 30>::integrate(integrand, 0.0, 0.5 * pi);
    return std::clamp(4.0 * quarter / (2.0 * pi * std::sqrt(a2 * b2)), 0.0, 1.0);
}

Score score_prediction(const Brief& brief, const AnswerKey& key, const Prediction& p, double window_years) {
    return score_prediction(brief, integrate_truth(brief, key), p, window_years);
}

Score score_prediction(const Brief& brief, const TruthEphemeris& truth_eph, const Prediction& p, double window_years) {
    const double lo_year = brief.epoch0_year, hi_year = brief.epoch0_year + brief.span_years;
    if (!(p.epoch_year >= lo_year && p.epoch_year <= hi_year))
        throw InputError("", 0, "epoch", "the prediction's epoch " + std::to_string(p.epoch_year) +
                                             " lies outside the exercise's span (" + std::to_string(lo_year) + " to " +
                                             std::to_string(hi_year) + ")");
    Score s;
    s.hidden_name = truth_eph.hidden_name;
    s.epoch_year = p.epoch_year;
    s.field_radius_deg = brief.field_radius_deg;
    s.predicted_lon = p.lon;
    s.predicted_lat = p.lat;
    const TruthTrack at = true_track(truth_eph, p.epoch_year, p.epoch_year, 1.0);
    s.true_lon = at.points.front().lon;
    s.true_lat = at.points.front().lat;
    s.separation_arcmin = separation(p.lon, p.lat, s.true_lon, s.true_lat) / arcmin;
    s.hit = s.separation_arcmin <= brief.field_radius_deg * 60.0;
    const double det = p.cov_ll * p.cov_bb - p.cov_lb * p.cov_lb;
    if (p.cov_ll > 0 && p.cov_bb > 0 && det > 0) {
        const double dl = wrap_pi(s.true_lon - p.lon) * std::cos(p.lat) / arcsec, db = (s.true_lat - p.lat) / arcsec;
        const double d2 = (p.cov_bb * dl * dl - 2 * p.cov_lb * dl * db + p.cov_ll * db * db) / det;
        s.mahalanobis = std::sqrt(std::max(d2, 0.0));
        s.truth_rank = 1.0 - std::exp(-0.5 * std::max(d2, 0.0));
        s.field_probability = gaussian_mass_in_circle(p.cov_ll, p.cov_lb, p.cov_bb, brief.field_radius_deg * 3600.0);
    }
    // The map of the region, where there is one beyond the Gaussian: a stated HEALPix map (exact over its
    // pixels), or the samples' kernel density (estimated from draws); both answer the same two questions.
    std::unique_ptr<RegionDensity> sampled;
    const RegionDensity* region = p.stated_map.get();
    if (!region && samples_describe_region(p)) {
        std::vector<SkySample> bodies;
        for (std::size_t k = 0; k < p.sample_lon.size(); ++k) bodies.push_back({p.sample_lon[k], p.sample_lat[k], p.sample_weight[k], group_of_sample(p, k)});
        sampled = std::make_unique<SampledRegion>(bodies, 4000, 20000);
        region = sampled.get();
    }
    if (region) {
        Rng rng = make_rng(1, "score map");  // a fixed stream: the score of a solution is the same every time
        s.map_truth_rank = region->rank_of(s.true_lon, s.true_lat, rng);
        s.map_field_probability = region->mass_within(p.lon, p.lat, brief.field_radius_deg * deg, rng);
    }
    // Luck curve over the window (clipped to the span), on the prediction's own track where it has one.
    const double from = std::max(lo_year, p.epoch_year - window_years), to = std::min(hi_year, p.epoch_year + window_years);
    s.luck_from_track = p.track.size() >= 2;
    const double step = s.luck_from_track ? p.track[1].year - p.track[0].year : 0.25;
    std::vector<double> years;
    if (s.luck_from_track) {
        for (const TrackPoint& t : p.track)
            if (t.year >= from - 1e-9 && t.year <= to + 1e-9) years.push_back(t.year);
    } else {
        for (double y = from; y <= to + 1e-9; y += step) years.push_back(y);
    }
    if (years.empty()) years.push_back(p.epoch_year);
    const TruthTrack truth = true_track(truth_eph, years.front(), years.back(), step);
    std::size_t inside = 0;
    s.closest_arcmin = INFINITY;
    for (std::size_t k = 0; k < years.size() && k < truth.points.size(); ++k) {
        double plon = p.lon, plat = p.lat;
        if (s.luck_from_track) {
            const auto it = std::min_element(p.track.begin(), p.track.end(), [&](const TrackPoint& a, const TrackPoint& b) {
                return std::abs(a.year - years[k]) < std::abs(b.year - years[k]);
            });
            plon = it->lon;
            plat = it->lat;
        }
        const double sep = separation(plon, plat, truth.points[k].lon, truth.points[k].lat) / arcmin;
        s.luck.push_back({years[k], sep});
        if (sep <= brief.field_radius_deg * 60.0) ++inside;
        if (sep < s.closest_arcmin) { s.closest_arcmin = sep; s.closest_year = years[k]; }
    }
    s.luck_fraction_inside = s.luck.empty() ? 0.0 : static_cast<double>(inside) / static_cast<double>(s.luck.size());
    return s;
}

}  // namespace wayward
