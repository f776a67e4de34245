// Grouped bar charts: one slot per category, one bar per group in each slot, bars rising from zero (or from
// the bottom of a log axis); category labels wrapped or slanted to fit, value labels above the bars when
// every one fits, the legend in a row under the title. Part of the plot module (plot.hpp).
#include <cstdio>
#include <numbers>
#include <tuple>

#include "sim/report/plot_internal.hpp"

namespace wayward::plot::detail {

namespace {

constexpr double slant = 35.0 * std::numbers::pi / 180.0;  // of category labels too wide for their slot

double bar_value(const Bars& b, std::size_t g, std::size_t c) { return c < b.values[g].size() ? b.values[g][c] : nan; }

// Legend: one row under the title (outside the data, so it never covers a bar).
Legend bars_legend(const Bars& b) {
    Legend lg;
    for (std::size_t g = 0; g < b.values.size(); ++g) {
        const std::string label = g < b.group_labels.size() ? b.group_labels[g] : "";
        if (label.empty()) continue;
        LegendEntry e;
        e.label = label;
        e.kind = EntryKind::band;
        e.color = palette(g);
        lg.entries.push_back(e);
    }
    return lg;
}

// The range the y axis covers: the drawable values, zero (bars rise from it) and head room for value labels.
DataRange bars_range(const Bars& b) {
    DataRange d;
    for (std::size_t g = 0; g < b.values.size(); ++g)
        for (std::size_t c = 0; c < b.categories.size(); ++c) {
            const double v = bar_value(b, g, c);
            if (b.log_y && !(v > 0.0)) continue;
            d.add(v);
        }
    if (!b.log_y && d.have) {
        d.add(0.0);  // bars rise from zero
        if (b.value_labels) {  // head room for the labels above the tallest bar
            const double span = std::max(d.hi - d.lo, std::abs(d.hi) * 1e-9);
            if (d.hi > 0.0) d.add(d.hi + span * 0.07);
            if (d.lo < 0.0) d.add(d.lo - span * 0.07);
        }
    }
    if (b.log_y && d.have) {
        d.add(d.lo / 4.0);  // the smallest bar must rise visibly above the bottom of the axis
        if (b.value_labels) d.add(d.hi * std::pow(d.hi / d.lo, 0.07) * 1.2);
    }
    return d;
}

struct BarsLayout {
    double title_h = 0.0, tick_h = 0.0;
    Axis y;
    Rect a;                  // the plot area
    double slot = 0.0;       // width of one category's slot
    double group_w = 0.0, bar_w = 0.0;
    std::vector<std::vector<std::string>> wrapped;  // each category label, line by line
    bool slanted = false;    // category labels slanted instead
    double cat_h = 0.0;      // height of the category labels
};

BarsLayout layout_bars(cairo_t* cr, const Bars& b, const DataRange& d, bool has_legend) {
    BarsLayout L;
    const double W = b.width, H = b.height;
    const std::size_t ncat = b.categories.size();
    const std::size_t ngroups = b.values.size();
    L.title_h = b.title.empty() ? 0.0 : 40.0;
    const double legend_h = has_legend ? legend_row + 8.0 : 0.0;
    L.tick_h = line_height(cr, tick_font);
    const double label_h = line_height(cr, axis_label_font);

    const double top = L.title_h + legend_h + 10.0;
    const double plot_h_guess = H - top - 80.0;
    const int target = std::max(2, static_cast<int>(plot_h_guess / 48.0));
    L.y = b.log_y ? log_axis(d.have, d.lo, d.hi, std::nullopt, target)
                  : linear_axis(d.have, d.lo, d.hi, std::nullopt, target, true);

    double ywide = 0.0;
    for (const auto& l : L.y.labels) ywide = std::max(ywide, text_width(cr, l, tick_font));
    Rect& a = L.a;
    a.x = 12.0 + (b.y_label.empty() ? 0.0 : label_h + 6.0) + ywide + 9.0;
    a.w = std::max(10.0, W - a.x - 20.0);
    L.slot = ncat > 0 ? a.w / static_cast<double>(ncat) : a.w;
    // Category labels: horizontal, wrapped onto up to three lines to fit their slot, else slanted.
    std::size_t lines = 1;
    double widest = 0.0;
    for (const auto& c : b.categories) {
        L.wrapped.push_back(wrap_text(cr, c, L.slot - 8.0, tick_font));
        for (const auto& l : L.wrapped.back()) L.slanted = L.slanted || text_width(cr, l, tick_font) > L.slot - 8.0;
        lines = std::max(lines, L.wrapped.back().size());
        widest = std::max(widest, text_width(cr, c, tick_font));
    }
    L.slanted = L.slanted || lines > 3;
    L.cat_h = L.slanted ? std::min(widest * std::sin(slant) + L.tick_h * std::cos(slant), H * 0.4)
                        : L.tick_h * static_cast<double>(lines);
    const double bottom = 8.0 + L.cat_h + (b.x_label.empty() ? 8.0 : 6.0 + label_h + 8.0);
    a.y = top;
    a.h = std::max(10.0, H - top - bottom);

    L.group_w = L.slot * 0.8;
    L.bar_w = ngroups > 0 ? L.group_w / static_cast<double>(ngroups) : L.group_w;
    return L;
}

// The bars, from `base` (pixels) to their values, clipped to the plot area.
void draw_bar_rects(cairo_t* cr, const Bars& b, const BarsLayout& L, const Mapper& m, double base) {
    const Rect& a = L.a;
    cairo_save(cr);
    cairo_rectangle(cr, a.x, a.y, a.w, a.h);
    cairo_clip(cr);
    for (std::size_t g = 0; g < b.values.size(); ++g)
        for (std::size_t c = 0; c < b.categories.size(); ++c) {
            const double v = bar_value(b, g, c);
            const double top_px = m.cpy(v);
            if (!finite(v) || !finite(top_px)) continue;
            const double x0 = a.x + L.slot * static_cast<double>(c) + (L.slot - L.group_w) / 2.0 + L.bar_w * static_cast<double>(g);
            cairo_rectangle(cr, x0 + 0.5, std::min(top_px, base), L.bar_w - 1.0, std::abs(base - top_px));
            set_color(cr, palette(g));
            cairo_fill(cr);
        }
    cairo_restore(cr);
}

// Value labels, only if every one fits its bar.
void draw_value_labels(cairo_t* cr, const Bars& b, const BarsLayout& L, const Mapper& m) {
    const Rect& a = L.a;
    std::vector<std::tuple<double, double, std::string, bool>> labels;
    bool fit = true;
    for (std::size_t g = 0; g < b.values.size(); ++g)
        for (std::size_t c = 0; c < b.categories.size(); ++c) {
            const double v = bar_value(b, g, c);
            const double top_px = m.py(v);
            if (!finite(v) || !finite(top_px) || !inside(expanded(a, 0.5), a.x, top_px)) continue;
            char buf[64];
            std::snprintf(buf, sizeof buf, "%.3g", v);
            const std::string s = with_minus(buf);
            if (text_width(cr, s, value_font) > L.bar_w + 4.0) fit = false;
            const double cx = a.x + L.slot * static_cast<double>(c) + (L.slot - L.group_w) / 2.0 + L.bar_w * (static_cast<double>(g) + 0.5);
            labels.emplace_back(cx, top_px, s, v < 0.0);
        }
    if (fit)
        for (const auto& [cx, py, s, below] : labels)
            draw_text(cr, s, cx, below ? py + 3.0 : py - 3.0, value_font, text_color, 0.5, below ? 0.0 : 1.0);
}

// The frame, the zero line, the y ticks and the category labels under their slots.
void draw_bars_axes(cairo_t* cr, const Bars& b, const BarsLayout& L, double base) {
    const Rect& a = L.a;
    draw_frame(cr, a);
    if (!b.log_y && base > a.y && base < a.y + a.h) {  // the zero line
        set_color(cr, frame_color);
        cairo_move_to(cr, a.x, std::round(base) + 0.5);
        cairo_line_to(cr, a.x + a.w, std::round(base) + 0.5);
        cairo_stroke(cr);
    }
    draw_ticks(cr, a, Axis{}, &L.y);
    for (std::size_t c = 0; c < b.categories.size(); ++c) {
        const double cx = a.x + L.slot * (static_cast<double>(c) + 0.5);
        if (L.slanted) {
            draw_text(cr, b.categories[c], cx + 4.0, a.y + a.h + 8.0, tick_font, text_color, 1.0, 0.0, -slant);
            continue;
        }
        for (std::size_t k = 0; k < L.wrapped[c].size(); ++k)
            draw_text(cr, L.wrapped[c][k], cx, a.y + a.h + 8.0 + L.tick_h * static_cast<double>(k), tick_font, text_color, 0.5, 0.0);
    }
}

// The legend's one row, right-aligned with the plot area (left-aligned when it is wider).
void draw_bars_legend(cairo_t* cr, const Legend& lg, const BarsLayout& L) {
    if (lg.entries.empty()) return;
    const Rect& a = L.a;
    std::vector<double> widths;
    for (const auto& e : lg.entries) widths.push_back(legend_sample + 8.0 + text_width(cr, e.label, legend_font) + 16.0);
    double total = 0.0;
    for (double w : widths) total += w;
    double x = std::max(a.x, a.x + a.w - total + 16.0);
    for (std::size_t i = 0; i < lg.entries.size(); ++i) {
        draw_legend_sample(cr, lg.entries[i], x, L.title_h + 6.0);
        draw_text(cr, lg.entries[i].label, x + legend_sample + 8.0, L.title_h + 6.0 + legend_row / 2.0 - 2.0, legend_font,
                  text_color, 0.0, 0.5);
        x += widths[i];
    }
}

}  // namespace

void draw_bars(cairo_t* cr, const Bars& b) {
    set_color(cr, white);
    cairo_paint(cr);
    const Legend lg = bars_legend(b);
    const DataRange d = bars_range(b);
    const BarsLayout L = layout_bars(cr, b, d, !lg.entries.empty());
    const Rect& a = L.a;

    draw_grid(cr, a, Axis{}, L.y);  // horizontal grid lines only
    const Axis xdummy;
    const Mapper m{a, &xdummy, &L.y};
    const double base = b.log_y ? a.y + a.h : std::clamp(m.py(0.0), a.y, a.y + a.h);
    draw_bar_rects(cr, b, L, m, base);
    if (b.value_labels) draw_value_labels(cr, b, L, m);
    draw_bars_axes(cr, b, L, base);
    if (!d.have) draw_text(cr, "no data", a.x + a.w / 2.0, a.y + a.h / 2.0, note_font, muted_color, 0.5, 0.5);
    draw_bars_legend(cr, lg, L);

    draw_text(cr, b.title, b.width / 2.0, 12.0, title_font, text_color, 0.5, 0.0);
    draw_text(cr, b.x_label, a.x + a.w / 2.0, a.y + a.h + 8.0 + L.cat_h + 6.0, axis_label_font, text_color, 0.5, 0.0);
    draw_text(cr, b.y_label, 12.0, a.y + a.h / 2.0, axis_label_font, text_color, 0.5, 0.0, -std::numbers::pi / 2.0);
}

}  // namespace wayward::plot::detail
