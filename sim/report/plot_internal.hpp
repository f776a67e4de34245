// What the plot module's sources (sim/report/plot_*.cpp) share and nobody else uses: fonts and colours, the axis
// type, pixel mapping and clipping, legends, panel data ranges and layouts. The public interface is plot.hpp.
// Layout (margins, tick choice, legend placement) is computed first from text measurements, then everything
// is drawn in one pass onto a PNG or SVG surface.
#pragma once

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <functional>
#include <limits>
#include <memory>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include <cairo.h>

#include "sim/report/plot.hpp"

namespace wayward::plot::detail {

inline constexpr double max_magnitude = 1e300;  // axis arithmetic stays finite below this
inline constexpr double nan = std::numeric_limits<double>::quiet_NaN();

inline bool finite(double v) { return std::isfinite(v); }
inline double clamp_magnitude(double v) { return std::clamp(v, -max_magnitude, max_magnitude); }

// ---------------------------------------------------------------------------- text (plot_text.cpp)

struct Font {
    double size = 12.0;
    bool bold = false;
    bool italic = false;
};
inline constexpr Font title_font{17.0, true};
inline constexpr Font panel_title_font{14.0, true};
inline constexpr Font axis_label_font{13.0};
inline constexpr Font tick_font{12.0};
inline constexpr Font legend_font{12.0};
inline constexpr Font note_font{13.0, false, true};
inline constexpr Font value_font{10.5};

inline constexpr Color text_color{0.13, 0.13, 0.13};
inline constexpr Color muted_color{0.40, 0.40, 0.40};
inline constexpr Color grid_color{0.89, 0.89, 0.89};
inline constexpr Color frame_color{0.35, 0.35, 0.35};
inline constexpr Color ref_line_color{0.25, 0.25, 0.25};
inline constexpr Color span_color{0.5, 0.5, 0.5};
inline constexpr Color white{1.0, 1.0, 1.0};

void set_font(cairo_t* cr, Font f);
double text_width(cairo_t* cr, const std::string& s, Font f);
double line_height(cairo_t* cr, Font f);
// Greedy word wrap at spaces; a word wider than max_w gets a line of its own.
std::vector<std::string> wrap_text(cairo_t* cr, const std::string& s, double max_w, Font f);
void set_color(cairo_t* cr, Color c, double alpha_scale = 1.0);
// Draws `s` anchored at (x, y): halign 0 left, 0.5 centre, 1 right; valign 0 top, 0.5 middle, 1 bottom
// of the font's line box. `angle` rotates about the anchor (radians, clockwise on screen).
void draw_text(cairo_t* cr, const std::string& s, double x, double y, Font f, Color c, double halign,
               double valign, double angle = 0.0);

// -------------------------------------------------------------------------- output (plot_output.cpp)

struct SurfaceDeleter {
    void operator()(cairo_surface_t* s) const { cairo_surface_destroy(s); }
};
struct ContextDeleter {
    void operator()(cairo_t* c) const { cairo_destroy(c); }
};
using SurfacePtr = std::unique_ptr<cairo_surface_t, SurfaceDeleter>;
using ContextPtr = std::unique_ptr<cairo_t, ContextDeleter>;

// A scratch context for measuring text before the real surface exists (same font, same hinting as PNG).
ContextPtr measuring_context();

// ----------------------------------------------------------------------------- axes (plot_axes.cpp)

// Replaces ASCII '-' (as printf writes it) with the typographic minus.
std::string with_minus(std::string s);
// A usable [lo, hi]: finite, ordered, of non-zero width that is resolvable in double precision.
std::pair<double, double> sanitize_range(double lo, double hi);

struct Axis {
    double lo = 0.0, hi = 1.0;  // data units (positive when log)
    bool log = false;
    std::vector<double> ticks;
    std::vector<std::string> labels;

    // Position along the axis, 0 at lo and 1 at hi; NaN when the value cannot be placed.
    double unit(double v) const {
        if (!finite(v)) return nan;
        if (log) {
            if (!(v > 0.0)) return nan;
            return (std::log10(v) - std::log10(lo)) / (std::log10(hi) - std::log10(lo));
        }
        return (clamp_magnitude(v) - lo) / (hi - lo);
    }
};

Axis linear_axis(bool have_data, double dlo, double dhi, std::optional<std::pair<double, double>> fixed, int target,
                 bool sticky_zero = false);
Axis log_axis(bool have_data, double dlo, double dhi, std::optional<std::pair<double, double>> fixed, int target);
// The same axis with ticks at whole numbers only (a count, a night): a step below one becomes one.
Axis whole_number_ticks(Axis a);
// Fewer ticks until the widest label fits between neighbours (horizontal axes); make(target) builds the axis.
Axis fitted_x_axis(cairo_t* cr, double length, const std::function<Axis(int)>& make);

void draw_grid(cairo_t* cr, const Rect& a, const Axis& x, const Axis& y);
void draw_frame(cairo_t* cr, const Rect& a);
// Tick marks and labels below the x axis and, when y is given, left of the y axis.
void draw_ticks(cairo_t* cr, const Rect& a, const Axis& x, const Axis* y);

// --------------------------------------------------------------------- geometry (plot_geometry.cpp)

// Clips the segment to the rectangle in place; false when it lies outside.
bool clip_segment(double& x0, double& y0, double& x1, double& y1, const Rect& r);
inline Rect expanded(const Rect& r, double by) { return {r.x - by, r.y - by, r.w + 2 * by, r.h + 2 * by}; }
inline bool inside(const Rect& r, double x, double y) {
    return x >= r.x && x <= r.x + r.w && y >= r.y && y <= r.y + r.h;
}

struct Mapper {
    Rect area;
    const Axis* x;
    const Axis* y;
    double px(double v) const { return area.x + x->unit(v) * area.w; }
    double py(double v) const { return area.y + area.h - y->unit(v) * area.h; }
    // Pixel coordinates clamped to a generous box, for filled shapes (exact for axis-aligned rectangles).
    double cpx(double v) const { return std::clamp(px(v), area.x - 1e4, area.x + area.w + 1e4); }
    double cpy(double v) const { return std::clamp(py(v), area.y - 1e4, area.y + area.h + 1e4); }
};

// A polyline through (xs[i], ys[i]) in pixels, broken at NaN, clipped to `clip`.
void path_polyline(cairo_t* cr, const std::vector<double>& xs, const std::vector<double>& ys, const Rect& clip);
void path_marker(cairo_t* cr, Marker m, double x, double y, double r);
Marker marker_for(std::size_t i);
// Pixel vertices of a series' line (steps expanded), NaN where the line breaks.
void series_line(const Series& s, const Mapper& m, std::vector<double>& xs, std::vector<double>& ys);

// ------------------------------------------------------------------------- data (plot_data.cpp)

Color series_color(const Panel& p, std::size_t i);
// Band colours: explicit, else the same-labelled series', else the next unused palette colour.
std::vector<Color> band_colors(const Panel& p);

struct DataRange {
    bool have = false;
    bool sticky_zero = false;  // a baseline at 0 (histogram bars) ends the axis there
    double lo = 0.0, hi = 0.0;
    void add(double v) {
        if (!finite(v)) return;
        v = clamp_magnitude(v);
        if (!have) { lo = hi = v; have = true; }
        else { lo = std::min(lo, v); hi = std::max(hi, v); }
    }
};

DataRange x_data(const Panel& p);
// The y data range, counting only points whose x lies in `xr` (when the x range is fixed).
DataRange y_data(const Panel& p, std::optional<std::pair<double, double>> xr);
bool has_drawable_data(const Panel& p);

// ------------------------------------------------------------------------- legend (plot_legend.cpp)

enum class EntryKind { series, band, line, span };
struct LegendEntry {
    std::string label;
    EntryKind kind = EntryKind::series;
    Color color;
    Style style = Style::line;
    Marker marker = Marker::circle;
    bool dashed = false;
    double width = 1.5;
    double opacity = 1.0;
    std::optional<Color> band;  // a band drawn behind a series' sample
    double band_opacity = 0.25;
};

struct Legend {
    std::vector<LegendEntry> entries;
    int columns = 1, rows = 0;
    double column_width = 0.0, w = 0.0, h = 0.0;
    double x = 0.0, y = 0.0;  // top-left corner in pixels
    bool shown = false;
};

inline constexpr double legend_pad = 8.0, legend_row = 19.0, legend_sample = 28.0, legend_inset = 8.0;

Legend legend_entries(const Panel& p);
// Columns and size of the legend so that it is at most max_h tall.
void size_legend(cairo_t* cr, Legend& lg, double max_h);
// Pixel points the legend should not cover: markers, vertices and samples along lines and band edges.
std::vector<std::pair<double, double>> occupied_points(const Panel& p, const Mapper& m);
// Puts the legend in the plot corner covering the fewest data points; returns that count.
std::size_t place_legend(Legend& lg, const Rect& plot, const std::vector<std::pair<double, double>>& pts);
void draw_legend_sample(cairo_t* cr, const LegendEntry& e, double x, double y);
void draw_legend(cairo_t* cr, const Legend& lg);

// -------------------------------------------------------------------------- panels (plot_panel.cpp)

struct PanelLayout {
    Rect outer, plot;
    Axis x, y;
    Legend legend;
    bool has_data = false;
};

struct FigureLayout {
    double title_h = 0.0;
    int width = 0, height = 0;
    std::vector<PanelLayout> panels;
};

// Empty figures are drawn as one empty panel so that the output is always a valid image.
const std::vector<Panel>& panels_of(const Figure& f);
FigureLayout layout_figure(cairo_t* cr, const Figure& f);
void draw_figure(cairo_t* cr, const Figure& f, const FigureLayout& L);

// ---------------------------------------------------------------------------- bars (plot_bars.cpp)

void draw_bars(cairo_t* cr, const Bars& b);

}  // namespace wayward::plot::detail
