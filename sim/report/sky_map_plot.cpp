// The sky map's picture; see sky_map_plot.hpp.
#include "sim/report/sky_map_plot.hpp"

#include <algorithm>
#include <cmath>

#include "sim/base/format.hpp"
#include "sim/base/units.hpp"
#include "sim/exercise/observer_path.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/report/plot.hpp"

namespace wayward {

using detail::fmt;

void save_sky_map_png(const Brief& brief, const Prediction& p, const SkyMap& map, const std::vector<RankedPixel>& ranked,
                      const std::vector<SkyRegion>& regions, const Eigen::Matrix3d* icrs_to_fitting, const std::string& path) {
    // A fitting-frame direction in the map's frame.
    auto in_map = [&](double lon, double lat, double& ml, double& mb) {
        if (!icrs_to_fitting) {
            ml = lon;
            mb = lat;
            return;
        }
        const SkyPosition q = to_sky(icrs_to_fitting->transpose() * unit_vector(lon, lat));
        ml = q.lon;
        mb = q.lat;
    };
    double lon0 = 0.0, lat0 = 0.0;
    in_map(p.lon, p.lat, lon0, lat0);
    const double c0 = std::max(std::cos(lat0), 1e-6);
    auto offset = [&](double lon, double lat, plot::Series& s) {
        s.x.push_back(wrap_pi(lon - lon0) * c0 / deg);
        s.y.push_back((lat - lat0) / deg);
    };
    const ObserverPath observer = kepler_observer_path(brief);
    const double t = days_from_year(brief.epoch0_year, p.epoch_year);

    // The regions from the widest down, so the most probable pixels are drawn last, on top.
    const plot::Color shades[3] = {{0.03, 0.27, 0.55, 1.0}, {0.26, 0.57, 0.78, 1.0}, {0.66, 0.81, 0.90, 1.0}};  // 50, 90, 99 %
    std::vector<plot::Series> layers;
    plot::Series near = plot::point_series("inside the elongation limit (never pointed at)", plot::Marker::square, 1.2,
                                           plot::Color{0.84, 0.15, 0.16, 1.0});
    const std::size_t widest = regions.empty() ? 0 : std::min(regions.back().pixels, ranked.size());
    // At most about 150 000 points: a wider region is thinned evenly (the picture, not the map).
    const std::size_t stride = std::max<std::size_t>(1, widest / 150000 + 1);
    for (std::size_t r = regions.size(); r-- > 0;) {
        plot::Series s = plot::point_series(fmt("%g", regions[r].level * 100.0) + " % region (" + fmt("%.4g", regions[r].area_deg2) + " sq deg)",
                                            plot::Marker::square, 1.2, shades[std::min<std::size_t>(r, 2)]);
        const std::size_t from = r == 0 ? 0 : regions[r - 1].pixels;
        for (std::size_t k = from; k < std::min(regions[r].pixels, ranked.size()); k += stride) {
            double lon = 0.0, lat = 0.0;
            sky_map_pixel_centre(map.nside, ranked[k].pixel, lon, lat);
            double fl = lon, fb = lat;  // the pixel in the fitting frame, for its elongation
            if (icrs_to_fitting) {
                const SkyPosition f = to_sky(*icrs_to_fitting * unit_vector(lon, lat));
                fl = f.lon;
                fb = f.lat;
            }
            offset(lon, lat, elongation_from_star(observer, fl, fb, t) / deg < brief.elongation_limit_deg ? near : s);
        }
        layers.push_back(std::move(s));
    }
    plot::Panel panel;
    const std::string frame = icrs_to_fitting ? "ICRS" : "the observer planet's orbital plane, not ICRS";
    panel.title = "Probability map at " + fmt("%.2f", p.epoch_year) + " (" + frame + ")";
    panel.x_label = "east offset from the predicted place (deg)";
    panel.y_label = "north offset (deg)";
    for (plot::Series& s : layers) panel.series.push_back(std::move(s));
    if (!near.x.empty()) panel.series.push_back(near);

    // Okabe-Ito yellow: seen on every shade of blue.
    plot::Series bodies = plot::point_series("virtual bodies", plot::Marker::circle, 1.6, plot::Color{0.94, 0.89, 0.26, 0.95});
    for (std::size_t k = 0; k < p.sample_lon.size() && k < p.sample_lat.size(); ++k) {
        double lon = 0.0, lat = 0.0;
        in_map(p.sample_lon[k], p.sample_lat[k], lon, lat);
        offset(lon, lat, bodies);
    }
    panel.series.push_back(bodies);

    // The linear 1-sigma ellipse and the search field, traced in the fitting frame and carried into the map's.
    plot::Series ellipse;
    ellipse.label = "linear 1σ ellipse";
    ellipse.color = plot::Color{0.84, 0.37, 0.0, 1.0};
    ellipse.width = 2.0;
    plot::Series field;
    field.label = "search field (" + fmt("%.2f", brief.field_radius_deg) + " deg radius)";
    field.color = plot::Color{0.8, 0.47, 0.65, 1.0};
    field.width = 2.2;
    field.dashed = true;
    const double phi = p.orientation_deg * deg, cb = std::max(std::cos(p.lat), 1e-6);
    for (int k = 0; k <= 120; ++k) {
        const double th = two_pi * k / 120.0;
        const double u = p.semi_major_arcsec * std::cos(th), v = p.semi_minor_arcsec * std::sin(th);
        const double dx = (u * std::cos(phi) - v * std::sin(phi)) * arcsec, dy = (u * std::sin(phi) + v * std::cos(phi)) * arcsec;
        double lon = 0.0, lat = 0.0;
        in_map(p.lon + dx / cb, std::clamp(p.lat + dy, -pi / 2, pi / 2), lon, lat);
        offset(lon, lat, ellipse);
        const double r = brief.field_radius_deg * deg;
        in_map(p.lon + r * std::cos(th) / cb, std::clamp(p.lat + r * std::sin(th), -pi / 2, pi / 2), lon, lat);
        offset(lon, lat, field);
    }
    if (p.semi_major_arcsec > 0.0) panel.series.push_back(ellipse);
    panel.series.push_back(field);
    plot::Series centre = plot::point_series("predicted place", plot::Marker::diamond, 5.0, plot::Color{0.0, 0.0, 0.0, 1.0});
    centre.x = {0.0};
    centre.y = {0.0};
    panel.series.push_back(centre);

    // Equal scales on both axes (the figure's plot area is near square), reaching the widest region and the
    // field with a margin; the virtual bodies and the ellipse may reach beyond (the plot marks them at its edge).
    double reach = brief.field_radius_deg;
    for (const plot::Series& s : panel.series) {
        if (s.label == bodies.label || s.label == ellipse.label) continue;
        for (std::size_t k = 0; k < s.x.size(); ++k) reach = std::max({reach, std::abs(s.x[k]), std::abs(s.y[k])});
    }
    reach *= 1.08;
    // Each pixel's square about as wide as the pixel itself (the plot area is about 780 pixels across).
    const double pixel_deg = sky_map_pixel_arcmin(map.nside) / 60.0;
    const double side_px = std::clamp(pixel_deg * 780.0 / (2.0 * reach), 0.8, 12.0);
    for (plot::Series& s : panel.series)
        if (s.marker == plot::Marker::square) s.point_size = 0.55 * side_px;
    panel.x_range = std::make_pair(-reach, reach);
    panel.y_range = std::make_pair(-reach, reach);
    plot::Figure fig;
    fig.title = "Where the hidden body may be: the solve's map and its regions";
    fig.width = 900;
    fig.height_per_panel = 800;
    fig.panels.push_back(std::move(panel));
    plot::save_png(fig, path);
}

}  // namespace wayward
