// Residual tables, plots and summaries; see report.hpp.
#include "sim/report/report.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <iomanip>
#include <set>

#include "sim/fit/residual_summary.hpp"
#include "sim/report/plot.hpp"
#include "sim/base/units.hpp"
#include "sim/io/fileio.hpp"
#include "sim/report/text_table.hpp"

namespace wayward {

std::string residuals_csv(const ModelSetup& setup, const std::vector<std::array<double, 2>>& res) {
    std::string s = "time_days,year,target,era,o_c_lon_arcsec,o_c_lat_arcsec,sigma_lon_arcsec,sigma_lat_arcsec,sigma_estimated,rejected\n";
    char buf[256];
    for (std::size_t k = 0; k < setup.obs.size(); ++k) {
        const FitObservation& f = setup.obs[k];
        std::snprintf(buf, sizeof buf, "%.6f,%.6f,", f.time_days, decimal_year(setup.brief.epoch0_year, f.time_days));
        s += buf;
        s += csv_cell(setup.known.bodies[setup.planets[f.planet]].name) + "," + csv_cell(setup.eras[f.era]) + ",";
        std::snprintf(buf, sizeof buf, "%.6f,%.6f,%.6g,%.6g,%d,%d\n", res[k][0], res[k][1], f.sigma_lon_arcsec, f.sigma_lat_arcsec,
                      f.sigma_recorded ? 0 : 1, f.rejected ? 1 : 0);
        s += buf;
    }
    return s;
}

plot::Figure residuals_figure(const ModelSetup& setup, const std::vector<std::array<double, 2>>& res, const std::string& title) {
    plot::Figure fig;
    fig.title = title;
    fig.share_x = true;
    fig.height_per_panel = 260;
    std::set<std::string> legend_labels;
    for (std::size_t p = 0; p < setup.planets.size(); ++p) {
        const std::string name = setup.known.bodies[setup.planets[p]].name;
        for (int c = 0; c < 2; ++c) {
            const auto axis = static_cast<std::size_t>(c);
            plot::Panel panel;
            panel.title = name + (c == 0 ? ": O−C in λ·cos β" : ": O−C in β");
            panel.x_label = "year";
            panel.y_label = "arcsec";
            std::vector<double> kept_abs;
            for (std::size_t k = 0; k < setup.obs.size(); ++k)
                if (setup.obs[k].planet == p && !setup.obs[k].rejected) kept_abs.push_back(std::abs(res[k][axis]));
            // Scale to the bulk of the kept data (the 99th percentile), so a few large points do not flatten the
            // rest; every point beyond that range is drawn at the edge it lies beyond, never dropped.
            double lim = INFINITY;
            if (!kept_abs.empty()) {
                std::sort(kept_abs.begin(), kept_abs.end());
                const double q = kept_abs[std::min(kept_abs.size() - 1, static_cast<std::size_t>(0.99 * static_cast<double>(kept_abs.size())))];
                if (q > 0) lim = 1.15 * q;
            }
            if (std::isfinite(lim)) panel.y_range = std::make_pair(-lim, lim);
            plot::Series set_aside, beyond;
            set_aside.label = "set aside (beyond 4σ)";
            set_aside.style = plot::Style::points;
            set_aside.color = plot::Color{0.55, 0.55, 0.55, 1.0};
            set_aside.marker = plot::Marker::square;
            set_aside.point_size = 2.0;
            beyond.label = "beyond the axis: drawn at its edge";
            beyond.style = plot::Style::points;
            beyond.color = plot::Color{0.0, 0.0, 0.0, 1.0};
            beyond.marker = plot::Marker::triangle;
            beyond.point_size = 3.5;
            for (std::size_t e = 0; e < setup.eras.size(); ++e) {
                plot::Series s;
                s.label = setup.eras[e];
                s.style = plot::Style::points;
                s.color = plot::palette(e);
                s.point_size = 2.0;
                for (std::size_t k = 0; k < setup.obs.size(); ++k) {
                    const FitObservation& f = setup.obs[k];
                    if (f.planet != p || f.era != e) continue;
                    const double year = decimal_year(setup.brief.epoch0_year, f.time_days), v = res[k][axis];
                    if (!std::isfinite(v)) continue;
                    plot::Series& into = std::abs(v) > lim ? beyond : f.rejected ? set_aside : s;
                    into.x.push_back(year);
                    // At 97% of the edge, so the whole marker shows inside the frame.
                    into.y.push_back(std::abs(v) > lim ? std::copysign(0.97 * lim, v) : v);
                }
                if (!s.x.empty()) panel.series.push_back(std::move(s));
            }
            if (!set_aside.x.empty()) panel.series.push_back(std::move(set_aside));
            if (!beyond.x.empty()) panel.series.push_back(std::move(beyond));
            panel.lines.push_back({0.0, true, "", std::nullopt, false});
            // A legend on the first panel, and on any later one that shows a kind of point not explained above.
            panel.legend = false;
            for (const plot::Series& s : panel.series) panel.legend = legend_labels.insert(s.label).second || panel.legend;
            fig.panels.push_back(std::move(panel));
        }
    }
    return fig;
}

void residuals_plot(const ModelSetup& setup, const std::vector<std::array<double, 2>>& res, const std::string& path,
                    const std::string& title) {
    plot::save_png(residuals_figure(setup, res, title), path);
}

void print_residual_summary(const KnownFit& fit, std::ostream& out) {
    out << std::fixed;
    out << "RMS of O−C (arcsec) by planet and era, observations set aside beyond 4 sigma:\n";
    // Padded by displayed width (pad): the header's Greek letters and the middle dot take two bytes each.
    out << "  " << pad("planet", 12, true) << pad("era", 18, true) << pad("n", 6) << pad("λ·cos β", 10) << pad("β", 10)
        << pad("sigma", 10) << pad("out", 6) << "\n";
    bool any_estimated = false;
    for (const ResidualSummaryRow& r : residual_summary(fit)) {
        out << "  " << pad(r.planet_name, 12, true) << pad(r.era_name, 18, true) << pad(std::to_string(r.kept), 6)
            << pad(table_number("%.3f", r.rms_lon), 10) << pad(table_number("%.3f", r.rms_lat), 10)
            << pad(table_number("%.3f", r.sigma), 9) << (r.sigma_estimated ? "*" : " ") << pad(std::to_string(r.set_aside), 6) << "\n";
        any_estimated = any_estimated || r.sigma_estimated;
    }
    if (any_estimated) out << "  (* sigma estimated from the era's own residuals: the era did not record it)\n";
    out << std::setprecision(3) << "chi2 = " << fit.chi2 << " for " << fit.dof << " degrees of freedom; chi2/dof = "
        << fit.chi2 / static_cast<double>(fit.dof) << "\n";
    out << std::defaultfloat;
}

}  // namespace wayward
