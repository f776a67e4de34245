// The search rehearsal's picture with the cairo plots of plot.hpp. See search_plot.hpp.
#include "sim/report/search_plot.hpp"

#include <cmath>

#include "sim/base/units.hpp"
#include "sim/report/plot.hpp"

namespace wayward {

void save_search_png(const RehearsalResult& r, const Telescope& tel, double epoch0_year, const std::string& path) {
    plot::Panel map;
    map.title = "Fields searched over the probability map (offsets from the predicted centre of each night)";
    map.x_label = "east offset ξ (deg)";
    map.y_label = "north offset η (deg)";
    plot::Series samples;
    samples.label = r.region.from_virtual_bodies ? "region samples (the solve's virtual bodies)" : "region samples (the solution's Gaussian)";
    samples.style = plot::Style::points;
    samples.point_size = 0.8;
    samples.color = plot::Color{0.55, 0.55, 0.55, 0.6};
    for (const RegionSample& s : r.region.samples) {
        if (std::hypot(s.xi, s.eta) > 100.0) continue;  // a draw beyond the tangent plane's reach (region.hpp)
        samples.x.push_back(s.xi / deg);
        samples.y.push_back(s.eta / deg);
    }
    map.series.push_back(samples);
    const double half = 0.5 * tel.field_of_view_deg;
    bool first = true;
    for (const VisitRecord& v : r.log) {
        if (v.outcome != VisitOutcome::observed) continue;
        double cl = 0.0, cb = 0.0, xi = 0.0, eta = 0.0;
        region_centre(r.region, decimal_year(epoch0_year, v.t_days), cl, cb);
        to_tangent(cl, cb, v.lon, v.lat, xi, eta);
        plot::Series f;
        f.label = first ? "fields searched" : "";
        f.color = plot::palette(0);
        f.width = 1.0;
        const int n = tel.shape == FieldShape::square ? 4 : 32;
        for (int k = 0; k <= n; ++k) {
            const double a = two_pi * (k + 0.5) / n;
            const double rad = tel.shape == FieldShape::square ? half * std::sqrt(2.0) : half;
            f.x.push_back(xi / deg + rad * std::cos(a));
            f.y.push_back(eta / deg + rad * std::sin(a));
        }
        map.series.push_back(f);
        first = false;
    }
    if (r.found) {
        double cl = 0.0, cb = 0.0, xi = 0.0, eta = 0.0;
        region_centre(r.region, r.found_year, cl, cb);
        to_tangent(cl, cb, r.found_lon, r.found_lat, xi, eta);
        plot::Series found;
        found.label = "found here";
        found.style = plot::Style::points;
        found.marker = plot::Marker::diamond;
        found.point_size = 6.0;
        found.color = plot::palette(1);
        found.x = {xi / deg};
        found.y = {eta / deg};
        map.series.push_back(found);
    }

    plot::Panel covered;
    covered.title = "Probability covered (fields searched on clear nights)";
    covered.x_label = "night";
    covered.whole_x = true;
    covered.y_label = "fraction of the prior";
    covered.y_range = std::pair{0.0, 1.04};  // a little room above 1, so a full coverage line is not drawn on the frame
    plot::Series c;
    c.label = "covered";
    c.style = plot::Style::line_points;
    for (const NightRecord& n : r.nights) {
        c.x.push_back(n.night);
        c.y.push_back(n.probability_covered);
    }
    covered.series.push_back(c);
    plot::Figure fig;
    fig.title = "Telescope search rehearsal";
    fig.panels = {map, covered};
    fig.height_per_panel = 420;
    plot::save_png(fig, path);
}

}  // namespace wayward
