// Legends for the plots: one entry per labelled series, band, reference line and span; sized into columns
// to fit the panel, placed in the plot corner that covers the fewest data points, and drawn with a sample
// of each entry's line, marker or fill. Part of the plot module (plot.hpp).
#include <limits>

#include "sim/report/plot_internal.hpp"

namespace wayward::plot::detail {

Legend legend_entries(const Panel& p) {
    Legend lg;
    if (!p.legend) return lg;
    const std::vector<Color> bc = band_colors(p);
    for (std::size_t i = 0; i < p.series.size(); ++i) {
        const Series& s = p.series[i];
        if (s.label.empty()) continue;
        LegendEntry e;
        e.label = s.label;
        e.kind = EntryKind::series;
        e.color = series_color(p, i);
        e.style = s.style;
        e.marker = s.marker.value_or(marker_for(i));
        e.dashed = s.dashed;
        e.width = s.width;
        for (std::size_t j = 0; j < p.bands.size(); ++j)
            if (p.bands[j].label == s.label) { e.band = bc[j]; e.band_opacity = p.bands[j].opacity; }
        lg.entries.push_back(e);
    }
    for (std::size_t j = 0; j < p.bands.size(); ++j) {
        const Band& b = p.bands[j];
        if (b.label.empty()) continue;
        const bool merged = std::any_of(p.series.begin(), p.series.end(), [&](const Series& s) { return s.label == b.label; });
        if (merged) continue;
        LegendEntry e;
        e.label = b.label;
        e.kind = EntryKind::band;
        e.color = bc[j];
        e.opacity = b.opacity;
        lg.entries.push_back(e);
    }
    for (const auto& l : p.lines) {
        if (l.label.empty()) continue;
        LegendEntry e;
        e.label = l.label;
        e.kind = EntryKind::line;
        e.color = l.color.value_or(ref_line_color);
        e.dashed = l.dashed;
        e.width = 1.5;
        lg.entries.push_back(e);
    }
    for (const auto& s : p.spans) {
        if (s.label.empty()) continue;
        const bool seen = std::any_of(lg.entries.begin(), lg.entries.end(),
                                      [&](const LegendEntry& e) { return e.kind == EntryKind::span && e.label == s.label; });
        if (seen) continue;
        LegendEntry e;
        e.label = s.label;
        e.kind = EntryKind::span;
        e.color = s.color.value_or(span_color);
        e.opacity = s.opacity;
        lg.entries.push_back(e);
    }
    return lg;
}

void size_legend(cairo_t* cr, Legend& lg, double max_h) {
    lg.shown = !lg.entries.empty();
    if (!lg.shown) return;
    double widest = 0.0;
    for (const auto& e : lg.entries) widest = std::max(widest, text_width(cr, e.label, legend_font));
    lg.column_width = legend_sample + 8.0 + widest + 12.0;
    const int n = static_cast<int>(lg.entries.size());
    const int rows_fit = std::max(1, static_cast<int>((max_h - 2 * legend_pad) / legend_row));
    lg.columns = std::max(1, (n + rows_fit - 1) / rows_fit);
    lg.rows = (n + lg.columns - 1) / lg.columns;
    lg.w = lg.columns * lg.column_width - 12.0 + 2 * legend_pad;
    lg.h = lg.rows * legend_row + 2 * legend_pad - 4.0;
}

void draw_legend_sample(cairo_t* cr, const LegendEntry& e, double x, double y) {
    const double cy = y + legend_row / 2.0 - 2.0;
    if (e.band) {
        set_color(cr, *e.band, e.band_opacity);
        cairo_rectangle(cr, x, cy - 6.0, legend_sample, 12.0);
        cairo_fill(cr);
    }
    switch (e.kind) {
        case EntryKind::band:
        case EntryKind::span:
            set_color(cr, e.color, e.opacity);
            cairo_rectangle(cr, x, cy - 6.0, legend_sample, 12.0);
            cairo_fill(cr);
            return;
        case EntryKind::line:
        case EntryKind::series: break;
    }
    if (e.style == Style::histogram) {
        set_color(cr, e.color, 0.35);
        cairo_rectangle(cr, x + 2.0, cy - 6.0, legend_sample - 4.0, 12.0);
        cairo_fill_preserve(cr);
        set_color(cr, e.color);
        cairo_set_line_width(cr, 1.2);
        cairo_stroke(cr);
        return;
    }
    const bool line = e.kind == EntryKind::line || e.style != Style::points;
    if (line) {
        set_color(cr, e.color);
        cairo_set_line_width(cr, std::clamp(e.width, 0.5, 6.0));
        if (e.dashed) {
            const double d[2] = {5.0, 3.0};
            cairo_set_dash(cr, d, 2, 0.0);
        }
        cairo_move_to(cr, x, cy);
        cairo_line_to(cr, x + legend_sample, cy);
        cairo_stroke(cr);
        cairo_set_dash(cr, nullptr, 0, 0.0);
    }
    if (e.kind == EntryKind::series && (e.style == Style::points || e.style == Style::line_points)) {
        set_color(cr, e.color);
        path_marker(cr, e.marker, x + legend_sample / 2.0, cy, 3.5);
        cairo_fill(cr);
    }
}

void draw_legend(cairo_t* cr, const Legend& lg) {
    if (!lg.shown) return;
    cairo_rectangle(cr, lg.x + 0.5, lg.y + 0.5, std::round(lg.w), std::round(lg.h));
    set_color(cr, Color{1.0, 1.0, 1.0, 0.88});
    cairo_fill_preserve(cr);
    set_color(cr, Color{0.75, 0.75, 0.75});
    cairo_set_line_width(cr, 1.0);
    cairo_stroke(cr);
    for (std::size_t i = 0; i < lg.entries.size(); ++i) {
        const int col = static_cast<int>(i) / lg.rows, row = static_cast<int>(i) % lg.rows;
        const double ex = lg.x + legend_pad + col * lg.column_width;
        const double ey = lg.y + legend_pad + row * legend_row;
        draw_legend_sample(cr, lg.entries[i], ex, ey);
        draw_text(cr, lg.entries[i].label, ex + legend_sample + 8.0, ey + legend_row / 2.0 - 2.0, legend_font,
                  text_color, 0.0, 0.5);
    }
}

std::vector<std::pair<double, double>> occupied_points(const Panel& p, const Mapper& m) {
    std::vector<std::pair<double, double>> pts;
    auto add_line = [&](const std::vector<double>& xs, const std::vector<double>& ys) {
        const std::size_t stride = std::max<std::size_t>(1, xs.size() / 20000);
        for (std::size_t i = 0; i < xs.size(); i += stride) {
            if (!finite(xs[i]) || !finite(ys[i])) continue;
            pts.push_back({xs[i], ys[i]});
            const std::size_t j = i + stride;
            if (j < xs.size() && finite(xs[j]) && finite(ys[j])) {
                const double len = std::hypot(xs[j] - xs[i], ys[j] - ys[i]);
                const int k = static_cast<int>(std::min(20.0, len / 8.0));
                for (int q = 1; q < k; ++q) {
                    const double t = static_cast<double>(q) / k;
                    pts.push_back({xs[i] + t * (xs[j] - xs[i]), ys[i] + t * (ys[j] - ys[i])});
                }
            }
        }
    };
    std::vector<double> xs, ys;
    for (const auto& s : p.series) {
        series_line(s, m, xs, ys);
        if (s.style == Style::points) {
            for (std::size_t i = 0; i < xs.size(); ++i)
                if (finite(xs[i]) && finite(ys[i])) pts.push_back({xs[i], ys[i]});
        } else {
            add_line(xs, ys);
        }
    }
    for (const auto& b : p.bands) {
        const std::size_t n = std::min({b.x.size(), b.lo.size(), b.hi.size()});
        xs.clear(); ys.clear();
        std::vector<double> ys2;
        for (std::size_t i = 0; i < n; ++i) { xs.push_back(m.px(b.x[i])); ys.push_back(m.py(b.lo[i])); ys2.push_back(m.py(b.hi[i])); }
        add_line(xs, ys);
        add_line(xs, ys2);
    }
    for (const auto& l : p.lines) {
        if (l.horizontal) add_line({m.area.x, m.area.x + m.area.w}, {m.py(l.value), m.py(l.value)});
        else add_line({m.px(l.value), m.px(l.value)}, {m.area.y, m.area.y + m.area.h});
    }
    return pts;
}

std::size_t place_legend(Legend& lg, const Rect& plot, const std::vector<std::pair<double, double>>& pts) {
    if (!lg.shown) return 0;
    const double l = plot.x + legend_inset, r = plot.x + plot.w - legend_inset - lg.w;
    const double t = plot.y + legend_inset, b = plot.y + plot.h - legend_inset - lg.h;
    const std::pair<double, double> corners[4] = {{r, t}, {l, t}, {r, b}, {l, b}};
    std::size_t best = std::numeric_limits<std::size_t>::max();
    for (const auto& [cx, cy] : corners) {
        const Rect box = expanded(Rect{cx, cy, lg.w, lg.h}, 3.0);
        std::size_t n = 0;
        for (const auto& [px, py] : pts)
            if (inside(box, px, py)) ++n;
        if (n < best) {
            best = n;
            lg.x = std::round(cx);
            lg.y = std::round(cy);
        }
    }
    return best;
}

}  // namespace wayward::plot::detail
