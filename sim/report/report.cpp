// Residual tables, plots and summaries; see report.hpp.
#include "sim/report/report.hpp"

#include <cmath>
#include <cstdio>
#include <iomanip>

#include "sim/fit/residual_summary.hpp"
#include "sim/report/plot.hpp"
#include "sim/base/units.hpp"

namespace wayward {

std::string residuals_csv(const ModelSetup& setup, const std::vector<std::array<double, 2>>& res) {
    std::string s = "time_days,year,target,era,o_c_lon_arcsec,o_c_lat_arcsec,sigma_lon_arcsec,sigma_lat_arcsec,sigma_estimated,rejected\n";
    char buf[256];
    for (std::size_t k = 0; k < setup.obs.size(); ++k) {
        const FitObservation& f = setup.obs[k];
        std::snprintf(buf, sizeof buf, "%.6f,%.6f,%s,%s,%.6f,%.6f,%.6g,%.6g,%d,%d\n", f.time_days,
                      decimal_year(setup.brief.epoch0_year, f.time_days), setup.known.bodies[setup.planets[f.planet]].name.c_str(),
                      setup.eras[f.era].c_str(), res[k][0], res[k][1], f.sigma_lon_arcsec, f.sigma_lat_arcsec,
                      f.sigma_recorded ? 0 : 1, f.rejected ? 1 : 0);
        s += buf;
    }
    return s;
}

void residuals_plot(const ModelSetup& setup, const std::vector<std::array<double, 2>>& res, const std::string& path,
                    const std::string& title) {
    plot::Figure fig;
    fig.title = title;
    fig.share_x = true;
    fig.height_per_panel = 260;
    for (std::size_t p = 0; p < setup.planets.size(); ++p) {
        const std::string name = setup.known.bodies[setup.planets[p]].name;
        for (int c = 0; c < 2; ++c) {
            plot::Panel panel;
            panel.title = name + (c == 0 ? ": O−C in λ·cos β" : ": O−C in β");
            panel.x_label = "year";
            panel.y_label = "arcsec";
            std::vector<double> all;
            for (std::size_t e = 0; e < setup.eras.size(); ++e) {
                plot::Series s;
                s.label = setup.eras[e];
                s.style = plot::Style::points;
                s.color = plot::palette(e);
                s.point_size = 2.0;
                for (std::size_t k = 0; k < setup.obs.size(); ++k) {
                    const FitObservation& f = setup.obs[k];
                    if (f.planet != p || f.era != e || f.rejected) continue;
                    s.x.push_back(decimal_year(setup.brief.epoch0_year, f.time_days));
                    s.y.push_back(res[k][static_cast<std::size_t>(c)]);
                    all.push_back(std::abs(res[k][static_cast<std::size_t>(c)]));
                }
                if (!s.x.empty()) panel.series.push_back(std::move(s));
            }
            // Scale to the bulk of the data (the 99th percentile), so a few large points do not flatten the rest.
            if (!all.empty()) {
                std::sort(all.begin(), all.end());
                const double lim = 1.15 * all[std::min(all.size() - 1, static_cast<std::size_t>(0.99 * static_cast<double>(all.size())))];
                if (lim > 0) panel.y_range = std::make_pair(-lim, lim);
            }
            panel.lines.push_back({0.0, true, "", std::nullopt, false});
            panel.legend = p == 0 && c == 0;
            fig.panels.push_back(std::move(panel));
        }
    }
    plot::save_png(fig, path);
}

void print_residual_summary(const KnownFit& fit, std::ostream& out) {
    out << std::fixed;
    out << "RMS of O−C (arcsec) by planet and era, observations set aside beyond 4 sigma:\n";
    out << "  " << std::left << std::setw(12) << "planet" << std::setw(18) << "era" << std::right << std::setw(6) << "n"
        << std::setw(10) << "λ·cos β" << std::setw(10) << "β" << std::setw(10) << "sigma" << std::setw(6) << "out" << "\n";
    for (const ResidualSummaryRow& r : residual_summary(fit))
        out << "  " << std::left << std::setw(12) << r.planet_name << std::setw(18) << r.era_name << std::right << std::setw(6)
            << r.kept << std::setprecision(3) << std::setw(10) << r.rms_lon << std::setw(10) << r.rms_lat << std::setw(9)
            << r.sigma << (r.sigma_estimated ? "*" : " ") << std::setw(6) << r.set_aside << "\n";
    out << "  (* sigma estimated from the era's own residuals: the era did not record it)\n";
    out << std::setprecision(3) << "chi2 = " << fit.chi2 << " for " << fit.dof << " degrees of freedom; chi2/dof = "
        << fit.chi2 / static_cast<double>(fit.dof) << "\n";
    out << std::defaultfloat;
}

}  // namespace wayward
