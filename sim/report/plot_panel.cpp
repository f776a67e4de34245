// Figures of stacked panels: laying out each panel (margins shared so stacked panels line up, axes fitted to
// the data, legends placed where they cover no data) and drawing a panel's spans, bands, reference lines,
// series, frame, ticks, legend and labels in that order. Part of the plot module (plot.hpp).
#include <numbers>
#include <tuple>

#include "sim/report/plot_internal.hpp"

namespace wayward::plot::detail {

namespace {

double left_margin(cairo_t* cr, const Panel& p, const Axis& y) {
    double widest = 0.0;
    for (const auto& l : y.labels) widest = std::max(widest, text_width(cr, l, tick_font));
    return 12.0 + (p.y_label.empty() ? 0.0 : line_height(cr, axis_label_font) + 6.0) + widest + 9.0;
}

}  // namespace

const std::vector<Panel>& panels_of(const Figure& f) {
    static const std::vector<Panel> one_empty(1);
    return f.panels.empty() ? one_empty : f.panels;
}

FigureLayout layout_figure(cairo_t* cr, const Figure& f) {
    FigureLayout L;
    const std::vector<Panel>& panels = panels_of(f);
    L.title_h = f.title.empty() ? 0.0 : 40.0;
    L.width = f.width;
    const double hpp = f.height_per_panel;
    L.height = static_cast<int>(std::min<double>(L.title_h + hpp * static_cast<double>(panels.size()), 1e9));
    const double tick_h = line_height(cr, tick_font), label_h = line_height(cr, axis_label_font);

    // x data: per panel, or the union when shared.
    std::vector<DataRange> xd;
    DataRange shared;
    for (const auto& p : panels) {
        xd.push_back(x_data(p));
        if (!p.x_range && xd.back().have) { shared.add(xd.back().lo); shared.add(xd.back().hi); }
    }

    L.panels.resize(panels.size());
    for (std::size_t i = 0; i < panels.size(); ++i) {
        const Panel& p = panels[i];
        PanelLayout& pl = L.panels[i];
        pl.outer = Rect{0.0, L.title_h + hpp * static_cast<double>(i), static_cast<double>(f.width), hpp};
        const double top = p.title.empty() ? 14.0 : 34.0;
        const double bottom = 8.0 + tick_h + (p.x_label.empty() ? 8.0 : 6.0 + label_h + 8.0);
        pl.plot.y = pl.outer.y + top;
        pl.plot.h = std::max(10.0, pl.outer.h - top - bottom);
        pl.has_data = has_drawable_data(p);
        pl.legend = legend_entries(p);
        size_legend(cr, pl.legend, pl.plot.h);
    }

    // y axes (they fix the left margins, which are then shared so stacked panels line up).
    std::vector<std::optional<std::pair<double, double>>> x_fixed(panels.size());
    std::vector<DataRange> yd(panels.size());
    auto make_y = [&](std::size_t i, const DataRange& d) {
        const Panel& p = panels[i];
        const int target = std::max(2, static_cast<int>(L.panels[i].plot.h / 48.0));
        return p.log_y ? log_axis(d.have, d.lo, d.hi, p.y_range, target)
                       : linear_axis(d.have, d.lo, d.hi, p.y_range, target, d.sticky_zero);
    };
    for (std::size_t i = 0; i < panels.size(); ++i) {
        const Panel& p = panels[i];
        if (p.x_range) x_fixed[i] = p.x_range;
        yd[i] = y_data(p, x_fixed[i]);
        L.panels[i].y = make_y(i, yd[i]);
    }
    auto plot_x_extent = [&](double left) {
        return std::pair<double, double>{left, std::max(10.0, f.width - left - 26.0)};
    };
    auto make_x = [&](std::size_t i, double width) {
        const Panel& p = panels[i];
        const DataRange& d = (f.share_x && !p.x_range && shared.have) ? shared : xd[i];
        return fitted_x_axis(cr, width, [&](int target) {
            if (p.log_x) return log_axis(d.have, d.lo, d.hi, p.x_range, target);
            const Axis a = linear_axis(d.have, d.lo, d.hi, p.x_range, target);
            return p.whole_x ? whole_number_ticks(a) : a;
        });
    };
    double left = 0.0;
    for (std::size_t i = 0; i < panels.size(); ++i) left = std::max(left, left_margin(cr, panels[i], L.panels[i].y));
    for (std::size_t i = 0; i < panels.size(); ++i) {
        PanelLayout& pl = L.panels[i];
        std::tie(pl.plot.x, pl.plot.w) = plot_x_extent(left);
        pl.x = make_x(i, pl.plot.w);
    }

    // Legends: the emptiest corner; if every corner covers data, raise the top of an automatic linear y
    // axis to make room above the data (a few tries, as the ticks move with the range).
    for (std::size_t i = 0; i < panels.size(); ++i) {
        const Panel& p = panels[i];
        PanelLayout& pl = L.panels[i];
        if (!pl.legend.shown) continue;
        std::size_t covered = place_legend(pl.legend, pl.plot, occupied_points(p, Mapper{pl.plot, &pl.x, &pl.y}));
        const bool can_raise = !p.y_range && !p.log_y && yd[i].have && pl.legend.h < 0.45 * pl.plot.h;
        DataRange raised = yd[i];
        for (int attempt = 0; covered > 0 && can_raise && attempt < 3; ++attempt) {
            const auto [lo, hi] = sanitize_range(raised.lo, raised.hi);
            const double room = (pl.legend.h + legend_inset + 6.0) / (pl.plot.h - pl.legend.h - legend_inset - 6.0);
            raised.lo = lo;
            raised.hi = clamp_magnitude(hi + (hi - lo) * room * (1.0 + 0.3 * attempt));
            pl.y = make_y(i, raised);
            covered = place_legend(pl.legend, pl.plot, occupied_points(p, Mapper{pl.plot, &pl.x, &pl.y}));
        }
    }
    // Raised axes may have wider labels: settle the margins once more, keeping each legend's corner.
    double left2 = 0.0;
    for (std::size_t i = 0; i < panels.size(); ++i) left2 = std::max(left2, left_margin(cr, panels[i], L.panels[i].y));
    if (left2 != left) {
        for (std::size_t i = 0; i < panels.size(); ++i) {
            PanelLayout& pl = L.panels[i];
            const bool at_left = pl.legend.x < pl.plot.x + pl.plot.w / 2.0 - pl.legend.w / 2.0;
            std::tie(pl.plot.x, pl.plot.w) = plot_x_extent(left2);
            pl.x = make_x(i, pl.plot.w);
            pl.legend.x = std::round(at_left ? pl.plot.x + legend_inset : pl.plot.x + pl.plot.w - legend_inset - pl.legend.w);
        }
    }
    return L;
}

namespace {

// Spans behind everything.
void draw_spans(cairo_t* cr, const Panel& p, const Mapper& m) {
    const Rect& a = m.area;
    for (const auto& s : p.spans) {
        if (std::isnan(s.from) || std::isnan(s.to)) continue;
        set_color(cr, s.color.value_or(span_color), s.opacity);
        if (s.along_x) {
            const auto xend = [&](double v) { return std::isinf(v) ? (v < 0 ? a.x : a.x + a.w) : m.cpx(v); };
            const double x0 = xend(s.from), x1 = xend(s.to);
            if (!finite(x0) || !finite(x1)) continue;
            // At least 3 px wide, so a span of a single epoch (zero width in data) still shows.
            const double w = std::max(std::abs(x1 - x0), 3.0), left = std::clamp(0.5 * (x0 + x1) - 0.5 * w, a.x, a.x + a.w - w);
            cairo_rectangle(cr, std::abs(x1 - x0) >= 3.0 ? std::min(x0, x1) : left, a.y, w, a.h);
        } else {
            const auto yend = [&](double v) { return std::isinf(v) ? (v < 0 ? a.y + a.h : a.y) : m.cpy(v); };
            const double y0 = yend(s.from), y1 = yend(s.to);
            if (!finite(y0) || !finite(y1)) continue;
            const double h = std::max(std::abs(y1 - y0), 3.0), top = std::clamp(0.5 * (y0 + y1) - 0.5 * h, a.y, a.y + a.h - h);
            cairo_rectangle(cr, a.x, std::abs(y1 - y0) >= 3.0 ? std::min(y0, y1) : top, a.w, h);
        }
        cairo_fill(cr);
    }
}

// Bands: one polygon per run of finite points.
void draw_bands(cairo_t* cr, const Panel& p, const Mapper& m) {
    const std::vector<Color> bc = band_colors(p);
    for (std::size_t j = 0; j < p.bands.size(); ++j) {
        const Band& b = p.bands[j];
        const std::size_t n = std::min({b.x.size(), b.lo.size(), b.hi.size()});
        set_color(cr, bc[j], b.opacity);
        std::size_t i = 0;
        while (i < n) {
            auto ok = [&](std::size_t k) { return finite(m.px(b.x[k])) && finite(m.py(b.lo[k])) && finite(m.py(b.hi[k])); };
            while (i < n && !ok(i)) ++i;
            const std::size_t start = i;
            while (i < n && ok(i)) ++i;
            if (i - start < 2) continue;
            cairo_move_to(cr, m.cpx(b.x[start]), m.cpy(b.hi[start]));
            for (std::size_t k = start + 1; k < i; ++k) cairo_line_to(cr, m.cpx(b.x[k]), m.cpy(b.hi[k]));
            for (std::size_t k = i; k-- > start;) cairo_line_to(cr, m.cpx(b.x[k]), m.cpy(b.lo[k]));
            cairo_close_path(cr);
            cairo_fill(cr);
        }
    }
}

void draw_ref_lines(cairo_t* cr, const Panel& p, const Mapper& m) {
    const Rect& a = m.area;
    for (const auto& l : p.lines) {
        const double v = l.horizontal ? m.py(l.value) : m.px(l.value);
        if (!finite(v) || !inside(expanded(a, 1.0), l.horizontal ? a.x : v, l.horizontal ? v : a.y)) continue;
        set_color(cr, l.color.value_or(ref_line_color));
        cairo_set_line_width(cr, 1.5);
        if (l.dashed) {
            const double d[2] = {7.0, 4.0};
            cairo_set_dash(cr, d, 2, 0.0);
        }
        if (l.horizontal) { cairo_move_to(cr, a.x, v); cairo_line_to(cr, a.x + a.w, v); }
        else { cairo_move_to(cr, v, a.y); cairo_line_to(cr, v, a.y + a.h); }
        cairo_stroke(cr);
        cairo_set_dash(cr, nullptr, 0, 0.0);
    }
}

// How one series is drawn: its colour and its line width and marker radius, clamped to sane sizes.
struct SeriesPen {
    Color color;
    double width = 1.5;
    double radius = 2.5;
};

void draw_histogram_fill(cairo_t* cr, const Series& s, const Mapper& m, const SeriesPen& pen) {
    const Rect& a = m.area;
    const std::size_t bins = s.x.size() > 0 ? std::min(s.y.size(), s.x.size() - 1) : 0;
    const double base = a.y + a.h;
    set_color(cr, pen.color, 0.35);
    for (std::size_t i = 0; i < bins; ++i) {
        const double xl = m.cpx(s.x[i]), xr = m.cpx(s.x[i + 1]), top = m.cpy(s.y[i]);
        if (!finite(xl) || !finite(xr) || !finite(top)) continue;
        cairo_rectangle(cr, std::min(xl, xr), std::min(top, base), std::abs(xr - xl), std::abs(base - top));
    }
    cairo_fill(cr);
}

void draw_error_bars(cairo_t* cr, const Series& s, const Mapper& m, const SeriesPen& pen, const Rect& line_clip) {
    const Rect& a = m.area;
    const std::size_t n = std::min(s.x.size(), s.y.size());
    set_color(cr, pen.color, 0.75);
    cairo_set_line_width(cr, 1.0);
    for (std::size_t i = 0; i < std::min(n, s.y_err.size()); ++i) {
        const double e = std::abs(s.y_err[i]);
        const double px = m.px(s.x[i]);
        double y0 = m.py(s.y[i] - e), y1 = m.py(s.y[i] + e);
        if (!finite(px) || !finite(s.y[i]) || !finite(e)) continue;
        if (!finite(y0)) y0 = a.y + a.h + 20.0;  // lower end below a log axis
        if (!finite(y1)) continue;
        double x0 = px, x1 = px;
        if (!clip_segment(x0, y0, x1, y1, line_clip)) continue;
        cairo_move_to(cr, x0, y0);
        cairo_line_to(cr, x1, y1);
        const double cap = std::min(pen.radius + 1.0, 4.0);
        for (double ye : {m.py(s.y[i] - e), m.py(s.y[i] + e)})
            if (finite(ye) && inside(line_clip, px, ye)) { cairo_move_to(cr, px - cap, ye); cairo_line_to(cr, px + cap, ye); }
    }
    cairo_stroke(cr);
}

// The series' line (xs, ys are scratch buffers for its pixel vertices).
void draw_series_line(cairo_t* cr, const Series& s, const Mapper& m, const SeriesPen& pen, const Rect& line_clip,
                      std::vector<double>& xs, std::vector<double>& ys) {
    series_line(s, m, xs, ys);
    path_polyline(cr, xs, ys, line_clip);
    set_color(cr, pen.color);
    cairo_set_line_width(cr, s.style == Style::histogram ? std::min(pen.width, 1.5) : pen.width);
    cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);
    cairo_set_line_cap(cr, CAIRO_LINE_CAP_ROUND);
    if (s.dashed) {
        const double d[2] = {6.0, 4.0};
        cairo_set_dash(cr, d, 2, 0.0);
    }
    cairo_stroke(cr);
    cairo_set_dash(cr, nullptr, 0, 0.0);
    // A finite point with no finite neighbour makes no segment: show it as a dot.
    if (s.style == Style::line || s.style == Style::step) {
        auto ok = [&](std::size_t k) { return finite(xs[k]) && finite(ys[k]); };
        for (std::size_t k = 0; k < xs.size(); ++k)
            if (ok(k) && (k == 0 || !ok(k - 1)) && (k + 1 == xs.size() || !ok(k + 1)) && inside(line_clip, xs[k], ys[k]))
                path_marker(cr, Marker::circle, xs[k], ys[k], std::max(pen.width, 2.0));
        cairo_fill(cr);
    }
}

void draw_series_markers(cairo_t* cr, const Series& s, Marker mk, const Mapper& m, const SeriesPen& pen) {
    const std::size_t n = std::min(s.x.size(), s.y.size());
    set_color(cr, pen.color);
    const Rect mark_clip = expanded(m.area, pen.radius * 2.0);
    for (std::size_t i = 0; i < n; ++i) {
        const double px = m.px(s.x[i]), py = m.py(s.y[i]);
        if (!finite(px) || !finite(py) || !inside(mark_clip, px, py)) continue;
        path_marker(cr, mk, px, py, pen.radius);
    }
    cairo_fill(cr);
}

// Series in order: histogram fills, then error bars (so markers sit on top), lines, markers.
void draw_series(cairo_t* cr, const Panel& p, const Mapper& m) {
    const Rect line_clip = expanded(m.area, 20.0);
    std::vector<double> xs, ys;
    for (std::size_t si = 0; si < p.series.size(); ++si) {
        const Series& s = p.series[si];
        SeriesPen pen;
        pen.color = series_color(p, si);
        pen.width = finite(s.width) ? std::clamp(s.width, 0.25, 20.0) : 1.5;
        pen.radius = finite(s.point_size) ? std::clamp(s.point_size, 0.5, 20.0) : 2.5;
        if (s.style == Style::histogram) draw_histogram_fill(cr, s, m, pen);
        if (!s.y_err.empty() && s.style != Style::histogram) draw_error_bars(cr, s, m, pen, line_clip);
        if (s.style != Style::points) draw_series_line(cr, s, m, pen, line_clip, xs, ys);
        if (s.style == Style::points || s.style == Style::line_points)
            draw_series_markers(cr, s, s.marker.value_or(marker_for(si)), m, pen);
    }
}

// The panel's title and axis labels.
void draw_panel_labels(cairo_t* cr, const Panel& p, const PanelLayout& pl) {
    const Rect& a = pl.plot;
    draw_text(cr, p.title, a.x, pl.outer.y + 10.0, panel_title_font, text_color, 0.0, 0.0);
    const double tick_h = line_height(cr, tick_font);
    draw_text(cr, p.x_label, a.x + a.w / 2.0, a.y + a.h + 8.0 + tick_h + 6.0, axis_label_font, text_color, 0.5, 0.0);
    draw_text(cr, p.y_label, pl.outer.x + 12.0, a.y + a.h / 2.0, axis_label_font, text_color, 0.5, 0.0, -std::numbers::pi / 2.0);
}

void draw_panel(cairo_t* cr, const Panel& p, const PanelLayout& pl) {
    const Rect& a = pl.plot;
    const Mapper m{a, &pl.x, &pl.y};

    draw_grid(cr, a, pl.x, pl.y);

    cairo_save(cr);
    cairo_rectangle(cr, a.x, a.y, a.w, a.h);
    cairo_clip(cr);
    draw_spans(cr, p, m);
    draw_bands(cr, p, m);
    draw_ref_lines(cr, p, m);
    draw_series(cr, p, m);
    cairo_restore(cr);

    draw_frame(cr, a);
    draw_ticks(cr, a, pl.x, &pl.y);

    if (!pl.has_data)
        draw_text(cr, "no data", a.x + a.w / 2.0, a.y + a.h / 2.0, note_font, muted_color, 0.5, 0.5);
    draw_legend(cr, pl.legend);
    draw_panel_labels(cr, p, pl);
}

}  // namespace

void draw_figure(cairo_t* cr, const Figure& f, const FigureLayout& L) {
    set_color(cr, white);
    cairo_paint(cr);
    const std::vector<Panel>& panels = panels_of(f);
    for (std::size_t i = 0; i < panels.size(); ++i) draw_panel(cr, panels[i], L.panels[i]);
    draw_text(cr, f.title, L.width / 2.0, 12.0, title_font, text_color, 0.5, 0.0);
}

}  // namespace wayward::plot::detail
