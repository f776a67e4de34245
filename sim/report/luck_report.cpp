// The luck curve's table and plot; see luck_report.hpp.
#include "sim/report/luck_report.hpp"

#include <algorithm>
#include <cstdio>

#include "sim/io/fileio.hpp"
#include "sim/report/plot.hpp"

namespace wayward {

void write_luck(const Score& s, const std::string& csv_path, const std::string& png_path, const std::string& title) {
    std::string csv = "year,separation_arcmin,inside_field\n";
    char buf[128];
    for (const LuckPoint& l : s.luck) {
        std::snprintf(buf, sizeof buf, "%.4f,%.6f,%d\n", l.year, l.separation_arcmin, l.separation_arcmin <= s.field_radius_deg * 60.0 ? 1 : 0);
        csv += buf;
    }
    write_file_atomic(csv_path, csv);

    plot::Figure fig;
    fig.title = title;
    plot::Panel panel;
    panel.title = s.luck_from_track ? "separation of the predicted track from the true position"
                                    : "separation of the fixed prediction from the true position";
    panel.x_label = "year";
    panel.y_label = "separation (arcmin)";
    panel.log_y = true;
    plot::Series curve;
    curve.label = "separation";
    curve.width = 2.0;
    for (const LuckPoint& l : s.luck) {
        curve.x.push_back(l.year);
        curve.y.push_back(std::max(l.separation_arcmin, 1e-3));
    }
    panel.spans = plot::spans_where_below(curve.x, curve.y, s.field_radius_deg * 60.0, plot::palette(2), "inside the field");
    panel.series.push_back(curve);
    panel.lines.push_back({s.field_radius_deg * 60.0, true, "field radius", plot::palette(1), true});
    panel.lines.push_back({s.epoch_year, false, "search epoch", std::nullopt, true});
    fig.panels.push_back(panel);
    plot::save_png(fig, png_path);
}

}  // namespace wayward
