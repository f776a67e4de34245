// A campaign's summary and plots; see campaign_report.hpp.
#include "sim/report/campaign_report.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <functional>
#include <map>
#include <optional>
#include <set>
#include <sstream>

#include "sim/base/random.hpp"
#include "sim/base/statistics.hpp"
#include "sim/io/fileio.hpp"
#include "sim/report/plot.hpp"
#include "sim/report/text_table.hpp"

namespace wayward {

namespace fs = std::filesystem;

namespace {

constexpr double level = 0.95;

// The rows grouped by settings and epoch, and by scenario and settings, in the order they first appear.
struct Groups {
    std::vector<std::string> settings, scenarios;
    std::map<std::pair<std::size_t, long long>, std::vector<const CaseRow*>> by_epoch;       // (settings, epoch key)
    std::map<std::pair<std::size_t, std::size_t>, std::vector<const CaseRow*>> by_scenario;  // (scenario, settings)
    std::map<long long, double> x_value;                                                      // epoch key -> x
    std::size_t failed = 0, undetected = 0;
    std::set<std::uint64_t> seeds;
    std::size_t settings_index(const std::string& s) const {
        return static_cast<std::size_t>(std::find(settings.begin(), settings.end(), s) - settings.begin());
    }
};

Groups group_rows(const std::vector<CaseRow>& rows, const CampaignManifest& m) {
    Groups g;
    auto index_of = [](std::vector<std::string>& v, const std::string& s) {
        const auto it = std::find(v.begin(), v.end(), s);
        if (it != v.end()) return static_cast<std::size_t>(it - v.begin());
        v.push_back(s);
        return v.size() - 1;
    };
    for (const CaseRow& r : rows) {
        const double x = m.epochs_are_offsets ? r.epoch_offset_years : r.epoch_year;
        const long long key = std::llround(x * 1e4);
        const std::size_t si = index_of(g.settings, r.settings), ci = index_of(g.scenarios, r.scenario);
        g.by_epoch[{si, key}].push_back(&r);
        g.by_scenario[{ci, si}].push_back(&r);
        g.x_value[key] = x;
        g.failed += r.ok ? 0 : 1;
        g.undetected += r.ok && !r.detected ? 1 : 0;
        g.seeds.insert(r.seed);
    }
    return g;
}

double fraction(const std::vector<const CaseRow*>& rows, const std::function<std::optional<bool>(const CaseRow&)>& test) {
    std::size_t n = 0, yes = 0;
    for (const CaseRow* r : rows) {
        const auto t = test(*r);
        if (!t) continue;
        ++n;
        yes += *t ? 1 : 0;
    }
    return n ? static_cast<double>(yes) / static_cast<double>(n) : NAN;
}

// Success-rate curves per settings, for the plot.
struct Curves {
    std::vector<std::vector<double>> x, rate, lo, hi;
    explicit Curves(std::size_t n) : x(n), rate(n), lo(n), hi(n) {}
};

class SummaryTable {
public:
    SummaryTable(std::ostringstream& t, const Groups& g, bool offsets) : t_(t) {
        std::size_t first = 10;
        for (const std::string& n : g.settings) first = std::max(first, n.size() + 2);
        for (const std::string& n : g.scenarios) first = std::max(first, n.size() + 2);
        cols_ = {{"settings", first}, {offsets ? "epoch (±yr)" : "epoch", 12}, {"cases", 7}, {"success", 9}, {"interval", 17},
                 {"median sep", 12}, {"90% sep", 10}, {"in 1σ", 7}, {"in 2σ", 7}, {"r90 holds", 11}, {"luck", 7}, {"closest − centre", 18}};
    }
    void header(const std::string& first) {
        t_ << pad(first, cols_[0].second, true);
        for (std::size_t k = 1; k < cols_.size(); ++k) t_ << pad(cols_[k].first, cols_[k].second);
        t_ << "\n";
    }
    RateInterval line(const std::string& a, const std::string& b, const std::vector<const CaseRow*>& g) {
        std::vector<bool> hits;
        std::vector<double> sep, luck, closest;
        for (const CaseRow* r : g) {
            hits.push_back(r->ok && r->hit);
            if (r->ok) {
                sep.push_back(r->separation_arcmin);
                luck.push_back(r->luck_fraction);
                closest.push_back(r->closest_minus_centre_years());
            }
        }
        const RateInterval ri = wilson_rate(hits, level);
        auto in_sigma = [](double k) {
            return [k](const CaseRow& r) -> std::optional<bool> { if (!r.mahalanobis) return std::nullopt; return r.inside_sigma(k); };
        };
        auto r90 = [](const CaseRow& r) -> std::optional<bool> {
            if (!r.ok || !std::isfinite(r.radius90_arcmin)) return std::nullopt;
            return r.radius90_holds();
        };
        const std::vector<std::string> cells = {
            a, b, std::to_string(g.size()), table_number("%.2f", ri.rate),
            "[" + table_number("%.2f", ri.lo) + ", " + table_number("%.2f", ri.hi) + "]" + (g.size() < small_sample_cases ? " ~" : "  "),
            table_number("%.2f", quantile(sep, 0.5)), table_number("%.2f", quantile(sep, 0.9)),
            table_number("%.2f", fraction(g, in_sigma(1.0))), table_number("%.2f", fraction(g, in_sigma(2.0))),
            table_number("%.2f", fraction(g, r90)), table_number("%.2f", quantile(luck, 0.5)), table_number("%+.1f", quantile(closest, 0.5))};
        for (std::size_t k = 0; k < cells.size(); ++k) t_ << pad(cells[k], cols_[k].second, k == 0);
        t_ << "\n";
        return ri;
    }

private:
    std::ostringstream& t_;
    std::vector<std::pair<std::string, std::size_t>> cols_;
};

// Nights needed for a share q of the cases to have found the body: the smallest n with at least q of them found by
// night n; NaN when the budget runs out first (cases not found count as never).
double nights_for_share(const std::vector<const CaseRow*>& rows, double q) {
    std::vector<int> nights;
    for (const CaseRow* r : rows)
        if (r->searched && r->search_found) nights.push_back(r->search_night);
    std::size_t n = 0;
    // Failed solves and records that did not demand a body (no pointing, so no search) count as not found.
    for (const CaseRow* r : rows) n += r->searched || !r->ok || !r->detected ? 1 : 0;
    std::sort(nights.begin(), nights.end());
    const auto needed = static_cast<std::size_t>(std::ceil(q * static_cast<double>(n) - 1e-9));
    if (n == 0 || needed == 0 || needed > nights.size()) return NAN;
    return nights[needed - 1];
}

// The search rehearsal's table: per settings and epoch, the share of cases whose search found the body within the
// campaign's night budget, with its Wilson interval, and the nights needed for 50 % and 90 % of them.
void search_table(std::ostringstream& t, const CampaignManifest& m, const Groups& g) {
    t << "\nSearch rehearsal: the body confirmed by the telescope within the campaign's night budget (discovery),\n"
         "with a 95% Wilson interval; night of discovery and telescope hours (medians over the cases that found it);\n"
         "nights for 50% / 90%: the nights after which that share of all cases had found it (\"-\": not within the budget).\n"
         "Failed solves count as not found.\n\n";
    std::size_t first = 10;
    for (const std::string& n : g.settings) first = std::max(first, n.size() + 2);
    const std::vector<std::pair<std::string, std::size_t>> cols = {
        {"settings", first}, {m.epochs_are_offsets ? "epoch (±yr)" : "epoch", 12}, {"cases", 7}, {"found", 7}, {"discovery", 11},
        {"interval", 15}, {"night", 7}, {"hours", 8}, {"50%", 6}, {"90%", 6}};
    for (std::size_t k = 0; k < cols.size(); ++k) t << pad(cols[k].first, cols[k].second, k == 0);
    t << "\n";
    for (const auto& [key, group] : g.by_epoch) {
        const double x = g.x_value.at(key.second);
        std::size_t n = 0, found = 0;
        std::vector<double> night, hours;
        for (const CaseRow* r : group) {
            if (!r->searched && r->ok && r->detected) continue;
            ++n;
            if (r->searched && r->search_found) {
                ++found;
                night.push_back(r->search_night);
                hours.push_back(r->search_hours);
            }
        }
        const WilsonInterval wi = wilson_interval(static_cast<double>(found), static_cast<double>(n));
        const std::vector<const CaseRow*>& cases = group;  // (a structured binding cannot be captured before C++20's fix in clang 16)
        auto nights_cell = [&](double q) {
            const double v = nights_for_share(cases, q);
            return std::isfinite(v) ? table_number("%.0f", v) : std::string("-");
        };
        const std::vector<std::string> cells = {
            g.settings[key.first], m.epochs_are_offsets ? table_number("%+g", x) : table_number("%g", x), std::to_string(n),
            std::to_string(found), n ? table_number("%.2f", static_cast<double>(found) / static_cast<double>(n)) : "-",
            "[" + table_number("%.2f", wi.lo) + ", " + table_number("%.2f", wi.hi) + "]", table_number("%.0f", quantile(night, 0.5)),
            table_number("%.1f", quantile(hours, 0.5)), nights_cell(0.5), nights_cell(0.9)};
        for (std::size_t k = 0; k < cells.size(); ++k) t << pad(cells[k], cols[k].second, k == 0);
        t << "\n";
    }
}

// The map of samples, where a case has one (the solve's virtual bodies where its map was not linear, or a team's
// stated samples): how often the truth lies in its 50 % and 90 %
// highest-density regions (a calibrated map: 50 % and 90 %), with 95 % Wilson intervals.
void map_table(std::ostringstream& t, const CampaignManifest& m, const Groups& g) {
    t << "\nThe map of samples (cases whose region is a map: the solve's weighted virtual bodies where its map is not linear,\n"
         "or a team's stated samples): the truth inside its 50% and 90% highest-probability regions, with 95% Wilson\n"
         "intervals; a calibrated map gives 50% and 90%.\n\n";
    std::size_t first = 10;
    for (const std::string& n : g.settings) first = std::max(first, n.size() + 2);
    const std::vector<std::pair<std::string, std::size_t>> cols = {{"settings", first}, {m.epochs_are_offsets ? "epoch (±yr)" : "epoch", 12},
                                                                   {"with map", 10}, {"in 50%", 8}, {"interval", 15}, {"in 90%", 8},
                                                                   {"interval", 15}};
    for (std::size_t k = 0; k < cols.size(); ++k) t << pad(cols[k].first, cols[k].second, k == 0);
    t << "\n";
    for (const auto& [key, group] : g.by_epoch) {
        const double x = g.x_value.at(key.second);
        std::size_t n = 0, in50 = 0, in90 = 0;
        for (const CaseRow* r : group) {
            if (!r->ok || !std::isfinite(r->map_rank)) continue;
            ++n;
            in50 += r->map_rank <= 0.5 ? 1 : 0;
            in90 += r->map_rank <= 0.9 ? 1 : 0;
        }
        const WilsonInterval w50 = wilson_interval(static_cast<double>(in50), static_cast<double>(n));
        const WilsonInterval w90 = wilson_interval(static_cast<double>(in90), static_cast<double>(n));
        auto share = [&](std::size_t k) { return n ? table_number("%.2f", static_cast<double>(k) / static_cast<double>(n)) : std::string("-"); };
        auto interval = [&](const WilsonInterval& w) {
            return n ? "[" + table_number("%.2f", w.lo) + ", " + table_number("%.2f", w.hi) + "]" + (n < small_sample_cases ? " ~" : "  ")
                     : std::string("-");
        };
        const std::vector<std::string> cells = {g.settings[key.first], m.epochs_are_offsets ? table_number("%+g", x) : table_number("%g", x),
                                                std::to_string(n), share(in50), interval(w50), share(in90), interval(w90)};
        for (std::size_t k = 0; k < cells.size(); ++k) t << pad(cells[k], cols[k].second, k == 0);
        t << "\n";
    }
}

std::string summary_text(const std::vector<CaseRow>& rows, const CampaignManifest& m, const Groups& g, Curves& curves) {
    std::ostringstream t;
    t << "Campaign " << m.name << " (id " << m.id.substr(0, 12) << "), shard " << m.shard.text();
    if (!m.merged_from.empty()) t << " (merged from " << m.merged_from.size() << " folders)";
    t << "\n" << rows.size() << " cases: " << g.scenarios.size() << " scenario(s), " << g.seeds.size() << " system(s), " << g.settings.size()
      << " setting(s), " << g.x_value.size() << " epoch(s); " << g.failed << " failed";
    if (g.undetected) t << "; " << g.undetected << " not detected (the record did not demand a hidden body: no pointing, a miss)";
    t << "\n\n";
    t << "success: the true position within the field radius of the prediction at the epoch; interval: 95% Wilson score\n"
         "interval (~: fewer than " << small_sample_cases << " cases, a small sample, so the rate is rough). in 1σ, in 2σ: the truth\n"
         "inside the predicted 1σ or 2σ ellipse (Gaussian errors would put it there 39% and 86% of the time). r90 holds:\n"
         "within the radius holding 90% of the covariance samples. luck: fraction of the luck window inside the field.\n"
         "closest − centre: year of closest agreement minus the data's centre (the σ-weighted mean observation time).\n"
         "Separations in arcmin; failed cases count as misses.\n\n";
    SummaryTable table(t, g, m.epochs_are_offsets);
    table.header("settings");
    for (const auto& [key, group] : g.by_epoch) {
        const double x = g.x_value.at(key.second);
        const std::string epoch = m.epochs_are_offsets ? table_number("%+g", x) : table_number("%g", x);
        const RateInterval ri =
            table.line(g.settings[key.first], epoch, group);
        curves.x[key.first].push_back(x);
        curves.rate[key.first].push_back(ri.rate);
        curves.lo[key.first].push_back(ri.lo);
        curves.hi[key.first].push_back(ri.hi);
    }
    if (std::any_of(rows.begin(), rows.end(), [](const CaseRow& r) { return r.searched; })) search_table(t, m, g);
    if (std::any_of(rows.begin(), rows.end(), [](const CaseRow& r) { return std::isfinite(r.map_rank); })) map_table(t, m, g);
    if (g.scenarios.size() > 1) {
        t << "\nBy scenario (all epochs together):\n";
        table.header("scenario");
        for (const auto& [key, group] : g.by_scenario)
            table.line(g.scenarios[key.first], g.settings[key.second], group);
    }
    if (g.failed) {
        t << "\nFailed cases:\n";
        std::size_t shown = 0;
        for (const CaseRow& r : rows) {
            if (r.ok) continue;
            if (++shown > 10) { t << "  ... and " << g.failed - 10 << " more (see cases.csv)\n"; break; }
            t << "  case " << r.index << " (" << r.scenario << ", seed " << r.seed << ", " << r.settings << "): " << r.note << "\n";
        }
    }
    return t.str();
}

void plot_success(const CampaignManifest& m, const Groups& g, const Curves& c, const std::string& title, const std::string& path) {
    plot::Figure f;
    f.title = title;
    plot::Panel p;
    p.title = "success rate against search epoch, with 95% Wilson bands";
    p.x_label = m.epochs_are_offsets ? "search epoch − the scenario's search epoch (years)" : "search epoch (year)";
    p.y_label = "success rate";
    p.y_range = std::make_pair(-0.06, 1.06);  // rates of 0 and 1 sit clear of the frame
    for (std::size_t s = 0; s < g.settings.size(); ++s) {
        plot::Series ser;
        ser.label = g.settings[s];
        ser.x = c.x[s];
        ser.y = c.rate[s];
        ser.style = plot::Style::line_points;
        p.series.push_back(ser);
        p.bands.push_back({g.settings[s], c.x[s], c.lo[s], c.hi[s], std::nullopt, 0.2});
    }
    if (m.epochs_are_offsets) p.lines.push_back({0.0, false, "search epoch", std::nullopt, true});
    f.panels.push_back(p);
    plot::save_png(f, path);
}

// Histogram bins: about the square root of the count, between 5 and 40; the range of the values unless given.
int bin_count(std::size_t n) {
    return std::clamp(static_cast<int>(std::lround(std::sqrt(static_cast<double>(std::max<std::size_t>(n, 1))))), 5, 40);
}
std::optional<std::pair<double, double>> value_range(const std::vector<double>& all) {
    if (all.empty()) return std::nullopt;
    const auto [lo, hi] = std::minmax_element(all.begin(), all.end());
    return std::make_pair(*lo, *hi > *lo ? *hi : *lo + 1.0);
}

// A histogram drawn as its outline (a step line from 0 up and back to 0), so that the histograms of several
// settings overlap without blending into a colour no legend names; the second and later ones dashed, so equal
// outlines stay apart. With `log_edges` the bins were taken in log10 and the edges are turned back into values.
plot::Series outline_series(const plot::Histogram& h, const std::string& label, std::size_t index, bool log_edges) {
    plot::Series s;
    s.label = label;
    s.style = plot::Style::step;
    s.width = 2.0;
    s.dashed = index > 0;
    if (h.edges.empty()) return s;
    auto edge = [&](double e) { return log_edges ? std::pow(10.0, e) : e; };
    s.x.push_back(edge(h.edges.front()));
    s.y.push_back(0.0);
    for (std::size_t k = 0; k < h.counts.size(); ++k) {
        s.x.push_back(edge(h.edges[k]));
        s.y.push_back(h.counts[k]);
    }
    s.x.push_back(edge(h.edges.back()));
    s.y.push_back(0.0);
    return s;
}

void plot_histograms(const std::vector<CaseRow>& rows, const Groups& g, const std::string& title, const std::string& path,
                     const std::string& panel_title, const std::string& label, const std::function<double(const CaseRow&)>& value,
                     std::optional<std::pair<double, double>> range, const std::vector<plot::RefLine>& lines, bool log_x = false) {
    std::vector<std::vector<double>> v(g.settings.size());
    std::vector<double> all;
    for (const CaseRow& r : rows) {
        if (!r.ok) continue;
        const double x = log_x ? (value(r) > 0 ? std::log10(value(r)) : NAN) : value(r);
        if (!std::isfinite(x)) continue;
        v[g.settings_index(r.settings)].push_back(x);
        all.push_back(x);
    }
    if (!range) range = value_range(all);
    plot::Figure f;
    f.title = title;
    plot::Panel p;
    p.title = panel_title;
    p.x_label = label;
    p.y_label = "cases";
    p.log_x = log_x;
    for (std::size_t s = 0; s < g.settings.size(); ++s)
        p.series.push_back(outline_series(plot::bin_samples(v[s], bin_count(all.size()), range), g.settings[s], s, log_x));
    p.lines = lines;
    f.panels.push_back(p);
    plot::save_png(f, path);
}

void plot_closest(const std::vector<CaseRow>& rows, const Groups& g, const std::string& title, const std::string& path) {
    plot::Figure f;
    f.title = title;
    f.height_per_panel = 340;
    plot::Panel p;
    p.title = "epoch of closest agreement relative to the data's centre, for each case";
    p.x_label = "search epoch − data centre (years)";
    p.y_label = "closest agreement − data centre (years)";
    std::vector<double> all;
    std::vector<std::vector<double>> per(g.settings.size());
    for (std::size_t s = 0; s < g.settings.size(); ++s) {
        plot::Series ser;
        ser.label = g.settings[s];
        ser.style = plot::Style::points;
        for (const CaseRow& r : rows) {
            if (!r.ok || r.settings != g.settings[s]) continue;
            ser.x.push_back(r.epoch_year - r.data_centre_year);
            ser.y.push_back(r.closest_minus_centre_years());
            per[s].push_back(r.closest_minus_centre_years());
            all.push_back(r.closest_minus_centre_years());
        }
        p.series.push_back(ser);
    }
    p.lines.push_back({0.0, true, "data centre", std::nullopt, true});
    f.panels.push_back(p);
    plot::Panel h;
    h.title = "distribution of the same";
    h.x_label = "closest agreement − data centre (years)";
    h.y_label = "cases";
    const auto range = value_range(all);
    for (std::size_t s = 0; s < g.settings.size(); ++s)
        h.series.push_back(outline_series(plot::bin_samples(per[s], bin_count(all.size()), range), g.settings[s], s, false));
    h.lines.push_back({0.0, false, "data centre", std::nullopt, true});
    f.panels.push_back(h);
    plot::save_png(f, path);
}

}  // namespace

std::string write_campaign_report(const std::vector<CaseRow>& rows, const CampaignManifest& m, const std::string& dir) {
    const Groups g = group_rows(rows, m);
    Curves curves(g.settings.size());
    const std::string summary = summary_text(rows, m, g, curves);
    write_file_atomic((fs::path(dir) / "summary.txt").string(), summary);

    const std::string title = "Campaign " + m.name + " (" + std::to_string(rows.size()) + " cases)";
    auto at = [&dir](const char* file) { return (fs::path(dir) / file).string(); };
    plot_success(m, g, curves, title, at("success_vs_epoch.png"));
    std::vector<plot::RefLine> radius_lines;
    std::set<long long> radii;
    for (const CaseRow& r : rows)
        if (radii.insert(std::llround(r.field_radius_arcmin * 1e3)).second && r.field_radius_arcmin > 0)
            radius_lines.push_back({r.field_radius_arcmin, false, "field radius " + table_number("%g", r.field_radius_arcmin) + "′",
                                    std::nullopt, true});  // dark grey: no setting's colour
    plot_histograms(rows, g, title, at("separations.png"), "distribution of the separation between prediction and truth at the search epoch",
                    "separation (arcmin, log scale; bins of equal width in log)", [](const CaseRow& r) { return r.separation_arcmin; },
                    std::nullopt, radius_lines, true);
    plot_histograms(rows, g, title, at("luck_fraction.png"), "distribution of the luck fraction (share of the luck window inside the field)",
                    "luck fraction", [](const CaseRow& r) { return r.luck_fraction; }, std::make_pair(0.0, 1.0), {});
    plot_closest(rows, g, title, at("closest_agreement.png"));
    return summary;
}

}  // namespace wayward
