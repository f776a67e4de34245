// The error budget's table, CSV files and chart; see budget_report.hpp.
#include "sim/report/budget_report.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <sstream>

#include "sim/base/format.hpp"
#include "sim/base/statistics.hpp"
#include "sim/io/fileio.hpp"
#include "sim/report/plot.hpp"
#include "sim/report/text_table.hpp"

namespace wayward {

namespace {

std::string cell(double v) {
    if (!std::isfinite(v)) return "-";
    return detail::fmt(v >= 100 ? "%.1f" : v >= 1 ? "%.3f" : "%.2e", v);
}
}  // namespace

double budget_share(const BudgetResult& b, const BudgetLine& l) {
    if (!l.present || l.key == "all-off" || l.key == "all-on" || !std::isfinite(l.median) || !(b.quadrature_median > 0)) return NAN;
    if (!b.combined.empty() && std::find(b.combined.begin(), b.combined.end(), l.key) == b.combined.end()) return NAN;
    return l.median * l.median / (b.quadrature_median * b.quadrature_median);
}

std::string budget_table(const BudgetResult& b) {
    constexpr std::size_t kLabel = 58;
    std::ostringstream t;
    t << "Error budget of " << b.scenario_name << ": error of the predicted position at " << detail::fmt("%g", b.epoch_year) << ", over "
      << b.runs << " system(s)\n";
    t << "Solve: distance free unless the line says otherwise; " << b.priors << "\n";
    if (!b.what_if.empty()) t << "What-ifs: " << b.what_if << "\n";
    t << "\n" << pad("source", kLabel, true) << pad("median", 10) << pad("90%", 10) << pad("failed", 8) << pad("share", 8) << "\n";
    t << pad("", kLabel, true) << pad("(arcmin)", 10) << pad("(arcmin)", 10) << pad("", 8) << pad("(%)", 8) << "\n";
    auto row = [&](const BudgetLine& l) {
        t << (display_width(l.label) >= kLabel ? l.label + "\n" + std::string(kLabel, ' ') : pad(l.label, kLabel, true));
        if (!l.present) {
            t << pad("not in this scenario", 20) << "\n";
            return;
        }
        t << pad(cell(l.median), 10) << pad(cell(l.p90), 10) << pad(std::to_string(l.failed), 8);
        const double share = budget_share(b, l);
        t << (std::isfinite(share) ? pad(detail::fmt("%.0f", 100.0 * share), 8) : std::string()) << "\n";
    };
    for (const BudgetLine& l : b.lines)
        if (l.key != "all-on") row(l);
    if (std::isfinite(b.quadrature_median))
        t << pad(b.combined.empty() ? "quadrature sum of the single sources" : "quadrature sum of the sources combined below", kLabel, true) << pad(cell(b.quadrature_median), 10) << pad(cell(b.quadrature_p90), 10) << "\n";
    if (const BudgetLine* on = b.line("all-on")) row(*on);
    if (b.combined.empty() && b.line("all-on"))
        t << "(all sources on: every source above at once, the solve's choices included; --combine picks some)\n";
    t << "share: a source's median squared over the quadrature sum's, i.e. its part of the sum of squares.\n";
    const BudgetLine* on = b.line("all-on");
    if (on && on->present && std::isfinite(on->median) && std::isfinite(b.quadrature_median) && b.quadrature_median > 0) {
        const double ratio = on->median / b.quadrature_median;
        t << "All on is " << detail::fmt("%.2f", ratio) << " times the quadrature sum. "
          << (ratio > 1.5 ? "The sum assumes independent errors that add linearly; the fit is\n"
                            "non-linear, and sources acting together can pull it further than each alone. Plan with the all-on line.\n"
              : ratio < 0.67 ? "The sources partly cancel when on together; the sum overstates\n"
                               "the error. Plan with the all-on line.\n"
                             : "The sources add nearly as independent errors do.\n");
    }
    if (b.runs < 20)
        t << "Only " << b.runs << " run" << (b.runs == 1 ? "" : "s") << ": a small sample; the medians are rough and the 90% column is little more than the\n"
             "largest errors seen (use --runs 20 or more).\n";
    if (std::isfinite(b.radius50))
        t << "\nSearch radius holding 50% / 90% / 99% of the all-on runs: " << cell(b.radius50) << " / " << cell(b.radius90) << " / "
          << cell(b.radius99) << " arcmin (the scenario's field radius: " << detail::fmt("%g", b.field_radius_arcmin) << " arcmin)"
          << (b.runs < 100 ? "; with fewer than 100 runs the 99% radius is little more than the largest error seen" : "") << "\n";
    if (b.search_nights > 0 && b.line("all-on")) {
        const WilsonInterval wi = wilson_interval(b.search_found, static_cast<double>(b.search_found_night.size()));
        auto nights = [](double v) { return std::isfinite(v) ? detail::fmt("%.0f", v) : std::string("-"); };
        t << "Telescope search of the all-on solutions (" << b.search_nights << " nights from the search epoch, the scenario's telescope): found in "
          << b.search_found << " of " << b.search_found_night.size() << " runs (95% Wilson interval " << detail::fmt("%.2f", wi.lo) << " to "
          << detail::fmt("%.2f", wi.hi) << "); nights needed for 50% / 90% success: " << nights(b.search_nights50) << " / "
          << nights(b.search_nights90) << " (-: not within " << b.search_nights << " nights)\n";
    }
    return t.str();
}

std::string budget_csv(const BudgetResult& b) {
    std::ostringstream t;
    t << "key,label,present,runs,failed,median_arcmin,p90_arcmin\n";
    auto f = [](double v) { return std::isfinite(v) ? detail::fmt("%.6g", v) : std::string(); };
    for (const BudgetLine& l : b.lines)
        t << csv_cell(l.key) << "," << csv_cell(l.label) << "," << (l.present ? 1 : 0) << "," << (l.present ? b.runs : 0) << "," << l.failed << ","
          << f(l.median) << "," << f(l.p90) << "\n";
    t << "quadrature-sum,\"quadrature sum of the single sources\",1," << b.runs << ",0," << f(b.quadrature_median) << "," << f(b.quadrature_p90) << "\n";
    t << "search-radius-50,\"all-on runs within this radius: 50%\",1," << b.runs << ",0," << f(b.radius50) << ",\n";
    t << "search-radius-90,\"all-on runs within this radius: 90%\",1," << b.runs << ",0," << f(b.radius90) << ",\n";
    t << "search-radius-99,\"all-on runs within this radius: 99%\",1," << b.runs << ",0," << f(b.radius99) << ",\n";
    return t.str();
}

std::string budget_runs_csv(const BudgetResult& b) {
    std::ostringstream t;
    const bool search = b.search_nights > 0;
    t << "key,run,seed,separation_arcmin" << (search ? ",search_night" : "") << "\n";
    for (const BudgetLine& l : b.lines)
        for (std::size_t r = 0; r < l.separations_arcmin.size(); ++r) {
            t << csv_cell(l.key) << "," << r << "," << b.seeds[r] << "," << (std::isfinite(l.separations_arcmin[r]) ? detail::fmt("%.6g", l.separations_arcmin[r]) : "");
            // The all-on run's night of discovery (empty: not found within the nights); other lines are not searched.
            if (search) t << "," << (l.key == "all-on" && b.search_found_night[r] > 0 ? std::to_string(b.search_found_night[r]) : std::string());
            t << "\n";
        }
    return t.str();
}

void budget_plot(const BudgetResult& b, const std::string& png_path) {
    plot::Bars bars;
    bars.title = "Error budget of " + b.scenario_name + " at " + detail::fmt("%g", b.epoch_year) + " (" + std::to_string(b.runs) + " systems)";
    bars.x_label = "error source (each alone)";
    bars.y_label = "separation at the search epoch (arcmin)";
    bars.group_labels = {"median", "90th percentile"};
    bars.values.assign(2, {});
    bars.log_y = true;
    bars.width = 1200;
    auto add = [&](const std::string& label, double med, double p90) {
        bars.categories.push_back(label);
        bars.values[0].push_back(med);
        bars.values[1].push_back(p90);
    };
    const std::map<std::string, std::string> short_names = {
        {"all-off", "all off"}, {"systematic", "systematic"}, {"rounding", "rounding"}, {"outliers", "outliers"},
        {"distance-prior", "distance prior"}, {"masses", "masses"}, {"orbits", "orbits"}, {"shape-priors", "e, tilt priors"},
        {"light-time", "light time"}, {"all-on", "all on"}};
    for (const BudgetLine& l : b.lines) {
        if (l.key == "all-on" || !l.present) continue;  // sources the scenario does not have get no slot
        const auto it = short_names.find(l.key);
        const std::string name = it != short_names.end() ? it->second : l.key.rfind("random:", 0) == 0 ? "noise: " + l.key.substr(7) : l.key;
        add(name, l.median, l.p90);
    }
    add("quadrature sum", b.quadrature_median, b.quadrature_p90);
    if (const BudgetLine* on = b.line("all-on")) add("all on", on->median, on->p90);
    plot::save_png(bars, png_path);
}

}  // namespace wayward
