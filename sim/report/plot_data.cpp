// What a panel's data asks of the plot: colours of its series and bands, the data ranges its axes must
// cover, whether anything is drawable; and the public helpers that turn samples into histograms and a curve
// into the spans where it is below a limit. Part of the plot module (plot.hpp).
#include <tuple>

#include "sim/report/plot_internal.hpp"
#include "sim/score/field_intervals.hpp"

namespace wayward::plot {

namespace detail {

Color series_color(const Panel& p, std::size_t i) { return p.series[i].color.value_or(palette(i)); }

std::vector<Color> band_colors(const Panel& p) {
    std::vector<Color> out;
    std::size_t next = p.series.size();
    for (const auto& b : p.bands) {
        if (b.color) { out.push_back(*b.color); continue; }
        std::optional<Color> c;
        for (std::size_t i = 0; i < p.series.size() && !c; ++i)
            if (!b.label.empty() && p.series[i].label == b.label) c = series_color(p, i);
        out.push_back(c ? *c : palette(next++));
    }
    return out;
}

DataRange x_data(const Panel& p) {
    DataRange r;
    auto add = [&](double v) {
        if (p.log_x && !(v > 0.0)) return;
        r.add(v);
    };
    for (const auto& s : p.series) {
        const std::size_t n = s.style == Style::histogram ? s.x.size() : std::min(s.x.size(), s.y.size());
        for (std::size_t i = 0; i < n; ++i)
            if (s.style == Style::histogram || finite(s.y[i])) add(s.x[i]);
    }
    for (const auto& b : p.bands) {
        const std::size_t n = std::min({b.x.size(), b.lo.size(), b.hi.size()});
        for (std::size_t i = 0; i < n; ++i)
            if (finite(b.lo[i]) || finite(b.hi[i])) add(b.x[i]);
    }
    for (const auto& l : p.lines)
        if (!l.horizontal) add(l.value);
    if (!r.have)  // spans only: show them
        for (const auto& s : p.spans)
            if (s.along_x) { add(s.from); add(s.to); }
    return r;
}

DataRange y_data(const Panel& p, std::optional<std::pair<double, double>> xr) {
    DataRange r;
    auto x_ok = [&](double x) { return !xr || (x >= std::min(xr->first, xr->second) && x <= std::max(xr->first, xr->second)); };
    auto add = [&](double v) {
        if (p.log_y && !(v > 0.0)) return;
        r.add(v);
    };
    for (const auto& s : p.series) {
        if (s.style == Style::histogram) {
            const std::size_t bins = s.x.size() > 0 ? std::min(s.y.size(), s.x.size() - 1) : 0;
            for (std::size_t i = 0; i < bins; ++i)
                if (x_ok(s.x[i]) || x_ok(s.x[i + 1])) {
                    add(s.y[i]);
                    if (!p.log_y && finite(s.y[i])) { add(0.0); r.sticky_zero = true; }
                }
            continue;
        }
        const std::size_t n = std::min(s.x.size(), s.y.size());
        for (std::size_t i = 0; i < n; ++i) {
            if (!finite(s.x[i]) || !x_ok(s.x[i]) || !finite(s.y[i])) continue;
            add(s.y[i]);
            if (i < s.y_err.size() && finite(s.y_err[i])) {
                add(s.y[i] - std::abs(s.y_err[i]));
                add(s.y[i] + std::abs(s.y_err[i]));
            }
        }
    }
    for (const auto& b : p.bands) {
        const std::size_t n = std::min({b.x.size(), b.lo.size(), b.hi.size()});
        for (std::size_t i = 0; i < n; ++i)
            if (finite(b.x[i]) && x_ok(b.x[i])) { add(b.lo[i]); add(b.hi[i]); }
    }
    for (const auto& l : p.lines)
        if (l.horizontal) add(l.value);
    if (!r.have)
        for (const auto& s : p.spans)
            if (!s.along_x) { add(s.from); add(s.to); }
    return r;
}

bool has_drawable_data(const Panel& p) {
    for (const auto& s : p.series) {
        const std::size_t n = std::min(s.x.size(), s.y.size());
        for (std::size_t i = 0; i < n; ++i)
            if (finite(s.x[i]) && finite(s.y[i]) && (!p.log_y || s.y[i] > 0.0)) return true;
    }
    for (const auto& b : p.bands) {
        const std::size_t n = std::min({b.x.size(), b.lo.size(), b.hi.size()});
        for (std::size_t i = 0; i < n; ++i)
            if (finite(b.x[i]) && finite(b.lo[i]) && finite(b.hi[i])) return true;
    }
    return false;
}

}  // namespace detail

using namespace detail;

Histogram bin_samples(const std::vector<double>& samples, int bins, std::optional<std::pair<double, double>> range) {
    Histogram h;
    const int n = std::clamp(bins, 1, 100000);
    double lo = 0.0, hi = 1.0;
    const bool explicit_range = range && finite(range->first) && finite(range->second) && range->first != range->second;
    if (explicit_range) {
        lo = std::min(range->first, range->second);
        hi = std::max(range->first, range->second);
    } else {
        DataRange d;
        for (double v : samples) d.add(v);
        if (d.have) {
            lo = d.lo;
            hi = d.hi;
            if (!(hi > lo)) std::tie(lo, hi) = sanitize_range(lo, hi);
        }
    }
    lo = clamp_magnitude(lo);
    hi = clamp_magnitude(hi);
    const double width = hi / n - lo / n;  // no overflow for ranges near the double limit
    h.edges.resize(static_cast<std::size_t>(n) + 1);
    for (int i = 0; i <= n; ++i) h.edges[static_cast<std::size_t>(i)] = lo + width * i;
    h.edges.back() = hi;
    h.counts.assign(static_cast<std::size_t>(n), 0.0);
    for (double v : samples) {
        if (!finite(v)) { ++h.non_finite; continue; }
        if (v < lo || v > hi) { ++h.outside; continue; }
        double k = std::floor((v - lo) / width);
        std::size_t i = finite(k) ? static_cast<std::size_t>(std::clamp(k, 0.0, static_cast<double>(n - 1))) : 0;
        // Settle rounding against the stored edges so the documented edge rule holds exactly.
        while (i + 1 < h.counts.size() && v >= h.edges[i + 1]) ++i;
        while (i > 0 && v < h.edges[i]) --i;
        h.counts[i] += 1.0;
    }
    return h;
}

Series point_series(std::string label, Marker marker, double point_size, Color color) {
    Series s;
    s.label = std::move(label);
    s.style = Style::points;
    s.marker = marker;
    s.point_size = point_size;
    s.color = color;
    return s;
}

Series histogram_series(const Histogram& h, std::string label) {
    Series s;
    s.label = std::move(label);
    s.x = h.edges;
    s.y = h.counts;
    s.style = Style::histogram;
    return s;
}

Panel histogram(const std::vector<double>& samples, int bins, std::string label,
                std::optional<std::pair<double, double>> range) {
    Panel p;
    p.x_label = label;
    p.y_label = "count";
    p.legend = false;
    p.series.push_back(histogram_series(bin_samples(samples, bins, range), std::move(label)));
    return p;
}

std::vector<Span> spans_where_below(const std::vector<double>& x, const std::vector<double>& y, double limit,
                                    std::optional<Color> color, const std::string& label) {
    std::vector<Span> out;
    for (const Interval& i : intervals_at_or_below(x, y, limit)) out.push_back(Span{i.from, i.to, true, color, label});
    return out;
}

}  // namespace wayward::plot
