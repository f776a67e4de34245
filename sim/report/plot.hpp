// Plots for people reading results: panels of curves, points with error bars, shaded bands, reference
// lines and shaded spans (stacked vertically in a figure), histograms, and grouped bar charts. Drawn with
// cairo to PNG or SVG; colours from the Okabe–Ito colour-blind-safe set; ticks from Heckbert's "nice
// numbers". Plain value types and free functions. Non-finite values are skipped everywhere.
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace wayward::plot {

struct Color {
    double r = 0.0, g = 0.0, b = 0.0, a = 1.0;  // each in [0, 1]
};
// The Okabe–Ito colours (Okabe & Ito 2008, "Color Universal Design"), ordered so that the first ones
// contrast most on white: blue, vermillion, bluish green, reddish purple, orange, sky blue, black,
// yellow. Cycles for i >= 8.
Color palette(std::size_t i);

// line: a polyline broken at non-finite points. points: markers. step: a "steps-post" line (level y[i]
// from x[i] to x[i+1]). histogram: filled bars, x holds the bin edges (one more than y, the heights).
enum class Style { line, points, line_points, step, histogram };
enum class Marker { circle, square, triangle, diamond };

struct Series {
    std::string label;  // legend text; empty: no legend entry
    std::vector<double> x, y;
    std::vector<double> y_err;  // optional symmetric error bars (same length as y, or empty)
    Style style = Style::line;
    std::optional<Color> color;    // default: palette(index of the series in its panel)
    std::optional<Marker> marker;  // default: cycles with the series index, so eras differ in shape too
    double width = 1.5;            // line width, pixels
    double point_size = 2.5;       // marker radius, pixels
    bool dashed = false;
};

// A shaded region between lo and hi (e.g. a confidence band). Without a colour it takes the colour of
// the series with the same label, if any (and shares its legend entry), else the next palette colour.
struct Band {
    std::string label;
    std::vector<double> x, lo, hi;
    std::optional<Color> color;
    double opacity = 0.25;  // multiplies the colour's alpha
};

// A straight reference line across the plot (e.g. a search radius).
struct RefLine {
    double value = 0.0;
    bool horizontal = true;  // true: y = value; false: x = value
    std::string label;
    std::optional<Color> color;  // default: dark grey
    bool dashed = true;
};

// A shaded interval drawn behind the data (an era, or where a curve is inside a limit). Infinite ends
// extend to the edge of the plot; spans do not widen the automatic axis ranges.
struct Span {
    double from = 0.0, to = 0.0;
    bool along_x = true;  // true: an interval of x (a vertical strip); false: an interval of y
    std::optional<Color> color;  // default: grey
    std::string label;           // spans with the same label share one legend entry
    double opacity = 0.15;       // multiplies the colour's alpha
};

struct Panel {
    std::string title, x_label, y_label;
    std::vector<Series> series;
    std::vector<Band> bands;
    std::vector<RefLine> lines;
    std::vector<Span> spans;
    std::optional<std::pair<double, double>> x_range, y_range;  // default: fitted to the finite data
    bool legend = true;
    bool log_y = false;  // non-positive y values are skipped
    bool log_x = false;  // a log10 x axis; non-positive x values are skipped
    bool whole_x = false;  // x counts whole things (nights): ticks at whole numbers only
};

// Panels stacked vertically, sharing the width (and the x axis when share_x).
struct Figure {
    std::string title;
    std::vector<Panel> panels;
    int width = 1000;
    int height_per_panel = 320;
    bool share_x = false;  // one x range for all panels (the union of their data, unless a panel fixes its own)
};

// A grouped bar chart: one slot per category, one bar per group in each slot.
struct Bars {
    std::string title, x_label, y_label;
    std::vector<std::string> categories;
    std::vector<std::string> group_labels;
    std::vector<std::vector<double>> values;  // values[group][category]; missing or non-finite: no bar
    int width = 1000, height = 480;
    bool log_y = false;        // bars rise from the bottom of the axis; non-positive values are skipped
    bool value_labels = true;  // print each value above its bar when every label fits its bar
};

// Ticks at multiples of a "nice" step (1, 2 or 5 times a power of ten) inside [lo, hi], after Heckbert,
// "Nice numbers for graph labels", Graphics Gems (1990): of the nice steps near (hi - lo) / (target - 1),
// the one giving the tick count nearest target_count. Degenerate or non-finite input gives a usable range
// (all-equal values are widened by 5%); magnitudes beyond 1e300 are clamped.
struct Ticks {
    double lo = 0.0, hi = 1.0;   // the range the ticks were chosen for (after sanitising)
    double step = 0.2;
    std::vector<double> values;  // ascending, each a multiple of step within [lo, hi]
};
Ticks nice_ticks(double lo, double hi, int target_count = 6);
// Heckbert's nicenum: a nice number near x > 0; rounded to nearest when `round`, else the next above.
double nice_number(double x, bool round);
// A tick label: fixed-point with as many decimals as the step needs, scientific for large or tiny
// magnitudes, and a true minus sign (U+2212).
std::string format_tick(double value, double step);

// Counts per bin. Bins are half-open [e_i, e_{i+1}) except the last, which is closed [e_{n-1}, e_n]: a
// value on an interior edge goes to the bin above it, the maximum goes to the last bin.
struct Histogram {
    std::vector<double> edges;   // bins + 1 ascending values
    std::vector<double> counts;  // bins values
    std::size_t non_finite = 0;  // samples skipped because NaN or infinite
    std::size_t outside = 0;     // finite samples outside an explicit range
};
// The range defaults to [min, max] of the finite samples (widened if they are all equal, [0, 1] if there
// are none). bins is clamped to [1, 100000].
Histogram bin_samples(const std::vector<double>& samples, int bins,
                      std::optional<std::pair<double, double>> range = std::nullopt);
Series histogram_series(const Histogram& h, std::string label);
// A series drawn as markers (no line), empty: the caller adds the points.
Series point_series(std::string label, Marker marker, double point_size, Color color);
// A panel holding one histogram: x label `label`, y label "count", no legend.
Panel histogram(const std::vector<double>& samples, int bins, std::string label,
                std::optional<std::pair<double, double>> range = std::nullopt);

// The x intervals where the curve (x, y) is at or below `limit`, with crossings linearly interpolated;
// non-finite points break the curve. Each span gets `color` and `label`.
std::vector<Span> spans_where_below(const std::vector<double>& x, const std::vector<double>& y, double limit,
                                    std::optional<Color> color = std::nullopt, const std::string& label = "");

// The data area of panel `index` in pixels, as laid out in the PNG (for tests and annotations).
struct Rect {
    double x = 0.0, y = 0.0, w = 0.0, h = 0.0;
};
Rect plot_area(const Figure& figure, std::size_t index);

// Whether the plotting font has a glyph for every character of the UTF-8 text.
bool font_has_glyphs(const std::string& utf8);

// Written atomically (a temporary file beside the target, then renamed). Throw std::runtime_error
// naming the path on failure (unwritable path, size outside 16..32767 pixels).
// With SVG copies on (the commands' --svg), save_png also writes the same figure as SVG beside the PNG (the same
// name with .svg), so every figure of every command is available as vector graphics for a report.
void set_svg_copies(bool on);
bool svg_copies_on();
void save_png(const Figure& figure, const std::string& path);
void save_svg(const Figure& figure, const std::string& path);
void save_png(const Bars& bars, const std::string& path);
void save_svg(const Bars& bars, const std::string& path);

}  // namespace wayward::plot
