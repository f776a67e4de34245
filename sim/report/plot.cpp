// Drawing figures and bar charts with cairo; see plot.hpp. Layout (margins, tick choice, legend placement)
// is computed first from text measurements, then everything is drawn in one pass onto a PNG or SVG surface.
#include "sim/report/plot.hpp"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <limits>
#include <memory>
#include <numbers>
#include <stdexcept>
#include <tuple>

#include <cairo-svg.h>
#include <cairo.h>

#include "sim/io/fileio.hpp"
#include "sim/score/field_intervals.hpp"

namespace wayward::plot {

namespace {

constexpr const char* font_family = "DejaVu Sans";
constexpr double max_magnitude = 1e300;  // axis arithmetic stays finite below this
constexpr double nan = std::numeric_limits<double>::quiet_NaN();
constexpr int min_size = 16, max_size = 32767;  // cairo image surfaces are limited to 32767 pixels

bool finite(double v) { return std::isfinite(v); }
double clamp_magnitude(double v) { return std::clamp(v, -max_magnitude, max_magnitude); }

// ---------------------------------------------------------------------------------------------- text

// cairo puts the whole context into an error state on invalid UTF-8, so every label is checked first and
// bad bytes become U+FFFD. Hand-written: cairo's own UTF-8 decoder is not public.
std::string sanitize_utf8(const std::string& s) {
    std::string out;
    out.reserve(s.size());
    const auto* p = reinterpret_cast<const unsigned char*>(s.data());
    const std::size_t n = s.size();
    std::size_t i = 0;
    while (i < n) {
        const unsigned char c = p[i];
        std::size_t len = 0;
        std::uint32_t cp = 0;
        if (c < 0x80) { len = 1; cp = c; }
        else if ((c & 0xE0) == 0xC0) { len = 2; cp = c & 0x1Fu; }
        else if ((c & 0xF0) == 0xE0) { len = 3; cp = c & 0x0Fu; }
        else if ((c & 0xF8) == 0xF0) { len = 4; cp = c & 0x07u; }
        bool ok = len > 0 && i + len <= n;
        for (std::size_t k = 1; ok && k < len; ++k) {
            if ((p[i + k] & 0xC0) != 0x80) ok = false;
            else cp = (cp << 6) | (p[i + k] & 0x3Fu);
        }
        // Reject overlong forms, surrogates, values beyond U+10FFFF and control characters other than tab.
        if (ok) {
            const std::uint32_t min_cp[5] = {0, 0, 0x80, 0x800, 0x10000};
            if (cp < min_cp[len] || (cp >= 0xD800 && cp <= 0xDFFF) || cp > 0x10FFFF) ok = false;
            if (cp < 0x20 && cp != '\t') ok = false;
        }
        if (ok) {
            out.append(s, i, len);
            i += len;
        } else {
            out += "\xEF\xBF\xBD";
            i += 1;
        }
    }
    return out;
}

struct Font {
    double size = 12.0;
    bool bold = false;
    bool italic = false;
};
const Font title_font{17.0, true};
const Font panel_title_font{14.0, true};
const Font axis_label_font{13.0};
const Font tick_font{12.0};
const Font legend_font{12.0};
const Font note_font{13.0, false, true};
const Font value_font{10.5};

void set_font(cairo_t* cr, Font f) {
    cairo_select_font_face(cr, font_family, f.italic ? CAIRO_FONT_SLANT_ITALIC : CAIRO_FONT_SLANT_NORMAL,
                           f.bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
    cairo_set_font_size(cr, f.size);
}

double text_width(cairo_t* cr, const std::string& s, Font f) {
    if (s.empty()) return 0.0;
    set_font(cr, f);
    cairo_text_extents_t e;
    cairo_text_extents(cr, sanitize_utf8(s).c_str(), &e);
    return e.x_advance;
}

double line_height(cairo_t* cr, Font f) {
    set_font(cr, f);
    cairo_font_extents_t fe;
    cairo_font_extents(cr, &fe);
    return fe.ascent + fe.descent;
}

// Greedy word wrap at spaces; a word wider than max_w gets a line of its own.
std::vector<std::string> wrap_text(cairo_t* cr, const std::string& s, double max_w, Font f) {
    std::vector<std::string> lines;
    std::string line, word;
    auto flush_word = [&] {
        if (word.empty()) return;
        const std::string joined = line.empty() ? word : line + " " + word;
        if (!line.empty() && text_width(cr, joined, f) > max_w) {
            lines.push_back(line);
            line = word;
        } else {
            line = joined;
        }
        word.clear();
    };
    for (char ch : s) {
        if (ch == ' ') flush_word();
        else word += ch;
    }
    flush_word();
    if (!line.empty() || lines.empty()) lines.push_back(line);
    return lines;
}

void set_color(cairo_t* cr, Color c, double alpha_scale = 1.0) {
    cairo_set_source_rgba(cr, c.r, c.g, c.b, std::clamp(c.a * alpha_scale, 0.0, 1.0));
}

// Draws `s` anchored at (x, y): halign 0 left, 0.5 centre, 1 right; valign 0 top, 0.5 middle, 1 bottom
// of the font's line box. `angle` rotates about the anchor (radians, clockwise on screen).
void draw_text(cairo_t* cr, const std::string& s, double x, double y, Font f, Color c, double halign,
               double valign, double angle = 0.0) {
    if (s.empty()) return;
    const std::string t = sanitize_utf8(s);
    set_font(cr, f);
    cairo_font_extents_t fe;
    cairo_font_extents(cr, &fe);
    cairo_text_extents_t te;
    cairo_text_extents(cr, t.c_str(), &te);
    cairo_save(cr);
    cairo_translate(cr, x, y);
    cairo_rotate(cr, angle);
    cairo_move_to(cr, -halign * te.x_advance, fe.ascent - valign * (fe.ascent + fe.descent));
    set_color(cr, c);
    cairo_show_text(cr, t.c_str());
    cairo_new_path(cr);
    cairo_restore(cr);
}

const Color text_color{0.13, 0.13, 0.13};
const Color muted_color{0.40, 0.40, 0.40};
const Color grid_color{0.89, 0.89, 0.89};
const Color frame_color{0.35, 0.35, 0.35};
const Color ref_line_color{0.25, 0.25, 0.25};
const Color span_color{0.5, 0.5, 0.5};
const Color white{1.0, 1.0, 1.0};

// -------------------------------------------------------------------------------------------- ticks

std::string minus_sign() {
    static const std::string m = font_has_glyphs("\u2212") ? "\u2212" : "-";
    return m;
}

// Replaces ASCII '-' (as printf writes it) with the typographic minus.
std::string with_minus(std::string s) {
    std::string out;
    for (char ch : s) {
        if (ch == '-') out += minus_sign();
        else out += ch;
    }
    return out;
}

// Steps, ticks and tick positions in [lo, hi] for a given step, with a little slack so that a tick that
// lands on an end through rounding is kept.
std::vector<double> ticks_with_step(double lo, double hi, double step) {
    std::vector<double> v;
    if (!(step > 0.0) || !finite(step)) return v;
    const double first = std::ceil(lo / step - 1e-9);
    const double last = std::floor(hi / step + 1e-9);
    if (!finite(first) || !finite(last) || last < first) return v;
    const double count = last - first + 1.0;
    if (count > 10000.0) return v;  // far more than nice_ticks ever picks; guards against misuse
    for (double k = first; k <= last; k += 1.0) {
        double t = k * step;
        if (std::abs(t) < step * 1e-9) t = 0.0;  // no "-0" or 1e-17 labels
        v.push_back(t);
    }
    return v;
}

// A usable [lo, hi]: finite, ordered, of non-zero width that is resolvable in double precision.
std::pair<double, double> sanitize_range(double lo, double hi) {
    if (!finite(lo) && !finite(hi)) return {0.0, 1.0};
    if (!finite(lo)) lo = hi;
    if (!finite(hi)) hi = lo;
    lo = clamp_magnitude(lo);
    hi = clamp_magnitude(hi);
    if (lo > hi) std::swap(lo, hi);
    const double mag = std::max(std::abs(lo), std::abs(hi));
    if (hi - lo <= mag * 1e-12 || hi == lo) {
        // All (nearly) equal: widen by 5% of the magnitude each way, or to +-1 around zero (common practice).
        const double mid = lo / 2.0 + hi / 2.0;
        const double half = mag > 0.0 ? mag * 0.05 : 1.0;
        lo = clamp_magnitude(mid - half);
        hi = clamp_magnitude(mid + half);
    }
    return {lo, hi};
}

// ---------------------------------------------------------------------------------------------- axes

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

// Labels for a whole linear axis.
std::vector<std::string> linear_labels(const std::vector<double>& ticks, double step) {
    std::vector<std::string> out;
    for (double t : ticks) out.push_back(format_tick(t, step));
    return out;
}

std::string superscript(int k) {
    static const char* digits[10] = {"\u2070", "\u00B9", "\u00B2", "\u00B3", "\u2074",
                                     "\u2075", "\u2076", "\u2077", "\u2078", "\u2079"};
    std::string s = k < 0 ? "\u207B" : "";
    const std::string d = std::to_string(std::abs(k));
    for (char ch : d) s += digits[ch - '0'];
    return s;
}

// A linear axis over the data range [dlo, dhi] (or exactly `fixed`), with about `target` ticks. The automatic
// range is padded by 4% each side and snapped outward to a tick when one lies in the outer three quarters
// of the padding, so an axis ends on a round number when that costs little but data never sits on the
// frame (our own rule; Heckbert's "loose" labelling always snaps, which can waste most of a step). With
// `sticky_zero` an end of the data at exactly 0 is the end of the axis (histogram and bar baselines).
Axis linear_axis(bool have_data, double dlo, double dhi, std::optional<std::pair<double, double>> fixed, int target,
                 bool sticky_zero = false) {
    Axis a;
    if (fixed) {
        std::tie(a.lo, a.hi) = sanitize_range(fixed->first, fixed->second);
        const Ticks t = nice_ticks(a.lo, a.hi, target);
        a.ticks = t.values;
        a.labels = linear_labels(a.ticks, t.step);
        return a;
    }
    if (!have_data) { dlo = 0.0; dhi = 1.0; }
    const bool zero_lo = sticky_zero && have_data && dlo == 0.0, zero_hi = sticky_zero && have_data && dhi == 0.0;
    std::tie(dlo, dhi) = sanitize_range(dlo, dhi);
    const double pad = (dhi - dlo) * 0.04;
    const double plo = clamp_magnitude(dlo - pad), phi = clamp_magnitude(dhi + pad);
    const Ticks t = nice_ticks(plo, phi, target);
    a.lo = plo;
    a.hi = phi;
    const double snap_lo = std::ceil(plo / t.step) * t.step;
    if (snap_lo <= dlo - 0.25 * pad) a.lo = snap_lo;
    const double snap_hi = std::floor(phi / t.step) * t.step;
    if (snap_hi >= dhi + 0.25 * pad) a.hi = snap_hi;
    if (zero_lo) a.lo = 0.0;
    if (zero_hi) a.hi = 0.0;
    if (!(a.hi > a.lo)) { a.lo = plo; a.hi = phi; }
    a.ticks = ticks_with_step(a.lo, a.hi, t.step);
    a.labels = linear_labels(a.ticks, t.step);
    return a;
}

// A log10 axis: decades (every few decades when there are many), with 2 and 5 added inside a short range.
Axis log_axis(bool have_data, double dlo, double dhi, std::optional<std::pair<double, double>> fixed, int target) {
    Axis a;
    a.log = true;
    double llo, lhi;
    const bool fixed_ok = fixed && fixed->first > 0.0 && fixed->second > 0.0 && finite(fixed->first) &&
                          finite(fixed->second) && fixed->first != fixed->second;
    if (fixed_ok) {
        llo = std::log10(std::min(fixed->first, fixed->second));
        lhi = std::log10(std::max(fixed->first, fixed->second));
    } else {
        if (!have_data || !(dlo > 0.0) || !(dhi > 0.0)) { dlo = 1.0; dhi = 10.0; }
        llo = std::log10(dlo);
        lhi = std::log10(dhi);
        if (lhi - llo < 1e-9) { llo -= 0.5; lhi += 0.5; }
        const double pad = (lhi - llo) * 0.04;
        const double plo = llo - pad, phi = lhi + pad;
        // Snap to a decade in the outer three quarters of the padding, as for linear axes.
        const double data_llo = llo, data_lhi = lhi;
        llo = std::ceil(plo) <= data_llo - 0.25 * pad ? std::ceil(plo) : plo;
        lhi = std::floor(phi) >= data_lhi + 0.25 * pad ? std::floor(phi) : phi;
    }
    llo = std::max(llo, -320.0);
    lhi = std::min(lhi, 308.0);
    if (!(lhi > llo)) lhi = llo + 1.0;
    a.lo = std::pow(10.0, llo);
    a.hi = std::pow(10.0, lhi);
    const int k0 = static_cast<int>(std::ceil(llo - 1e-9)), k1 = static_cast<int>(std::floor(lhi + 1e-9));
    const int decades = k1 - k0 + 1;
    int stride = std::max(1, static_cast<int>(std::ceil(static_cast<double>(decades) / std::max(target, 2))));
    std::vector<std::pair<double, int>> ticks;  // value, exponent (or a sentinel for 2 and 5 multiples)
    while (true) {
        ticks.clear();
        for (int k = k0; k <= k1; ++k)  // multiples of the stride, so 10^0 is a tick when in range
            if (((k % stride) + stride) % stride == 0) ticks.push_back({std::pow(10.0, k), k});
        if (ticks.size() >= 2 || stride == 1) break;
        stride = std::max(1, stride / 2);
    }
    if (decades <= 2) {
        for (int k = k0 - 1; k <= k1; ++k)
            for (double m : {2.0, 5.0}) {
                const double v = m * std::pow(10.0, k);
                if (std::log10(v) >= llo - 1e-9 && std::log10(v) <= lhi + 1e-9) ticks.push_back({v, 1000});
            }
        std::sort(ticks.begin(), ticks.end());
    }
    if (ticks.size() < 2) {
        // Less than a factor of 2.5 in range: plain nice ticks on the values.
        const Ticks t = nice_ticks(a.lo, a.hi, target);
        a.ticks = t.values;
        a.labels = linear_labels(a.ticks, t.step);
        return a;
    }
    bool plain = true;  // plain numbers when every tick is between 0.001 and 10000, else 10ⁿ
    for (const auto& t : ticks)
        if (t.first < 1e-3 * (1 - 1e-9) || t.first > 1e4 * (1 + 1e-9)) plain = false;
    for (const auto& [v, k] : ticks) {
        a.ticks.push_back(v);
        if (plain) {
            char buf[64];
            std::snprintf(buf, sizeof buf, "%g", v);
            a.labels.push_back(buf);
        } else if (k == 1000) {
            const int e = static_cast<int>(std::floor(std::log10(v) + 1e-9));
            const double m = std::round(v / std::pow(10.0, e));
            a.labels.push_back(std::to_string(static_cast<int>(m)) + "\u00D710" + superscript(e));
        } else {
            a.labels.push_back("10" + superscript(k));
        }
    }
    return a;
}

// Fewer ticks until the widest label fits between neighbours (horizontal axes).
template <typename MakeAxis>
Axis fitted_x_axis(cairo_t* cr, double length, MakeAxis make) {
    int target = std::max(2, static_cast<int>(length / 90.0));
    Axis a = make(target);
    while (target > 2) {
        double widest = 0.0;
        for (const auto& l : a.labels) widest = std::max(widest, text_width(cr, l, tick_font));
        double min_gap = length;
        for (std::size_t i = 1; i < a.ticks.size(); ++i)
            min_gap = std::min(min_gap, std::abs(a.unit(a.ticks[i]) - a.unit(a.ticks[i - 1])) * length);
        if (widest + 14.0 <= min_gap) break;
        --target;
        a = make(target);
    }
    return a;
}

// ------------------------------------------------------------------------------------------ geometry

// Liang–Barsky clipping of a segment to a rectangle (hand-written: cairo clips what it draws but needs
// coordinates within its fixed-point range, so far-away points are cut first). False when outside.
bool clip_segment(double& x0, double& y0, double& x1, double& y1, const Rect& r) {
    double t0 = 0.0, t1 = 1.0;
    const double dx = x1 - x0, dy = y1 - y0;
    const double p[4] = {-dx, dx, -dy, dy};
    const double q[4] = {x0 - r.x, r.x + r.w - x0, y0 - r.y, r.y + r.h - y0};
    for (int i = 0; i < 4; ++i) {
        if (p[i] == 0.0) {
            if (q[i] < 0.0) return false;
        } else {
            const double t = q[i] / p[i];
            if (p[i] < 0.0) t0 = std::max(t0, t);
            else t1 = std::min(t1, t);
        }
    }
    if (t0 > t1) return false;
    const double nx0 = x0 + t0 * dx, ny0 = y0 + t0 * dy, nx1 = x0 + t1 * dx, ny1 = y0 + t1 * dy;
    x0 = nx0; y0 = ny0; x1 = nx1; y1 = ny1;
    return true;
}

Rect expanded(const Rect& r, double by) { return {r.x - by, r.y - by, r.w + 2 * by, r.h + 2 * by}; }
bool inside(const Rect& r, double x, double y) { return x >= r.x && x <= r.x + r.w && y >= r.y && y <= r.y + r.h; }

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
void path_polyline(cairo_t* cr, const std::vector<double>& xs, const std::vector<double>& ys, const Rect& clip) {
    bool pen = false;
    double pen_x = 0.0, pen_y = 0.0;
    for (std::size_t i = 1; i < xs.size(); ++i) {
        double x0 = xs[i - 1], y0 = ys[i - 1], x1 = xs[i], y1 = ys[i];
        if (!finite(x0) || !finite(y0) || !finite(x1) || !finite(y1)) { pen = false; continue; }
        if (!clip_segment(x0, y0, x1, y1, clip)) { pen = false; continue; }
        if (!pen || std::abs(pen_x - x0) > 1e-6 || std::abs(pen_y - y0) > 1e-6) cairo_move_to(cr, x0, y0);
        cairo_line_to(cr, x1, y1);
        pen = true;
        pen_x = x1;
        pen_y = y1;
    }
    // A single isolated finite point on a line gets no segment; markers are the way to show those.
}

void path_marker(cairo_t* cr, Marker m, double x, double y, double r) {
    switch (m) {
        case Marker::circle: cairo_new_sub_path(cr); cairo_arc(cr, x, y, r, 0.0, 2.0 * std::numbers::pi); break;
        case Marker::square: cairo_rectangle(cr, x - 0.9 * r, y - 0.9 * r, 1.8 * r, 1.8 * r); break;
        case Marker::triangle:
            cairo_move_to(cr, x, y - 1.25 * r);
            cairo_line_to(cr, x + 1.1 * r, y + 0.7 * r);
            cairo_line_to(cr, x - 1.1 * r, y + 0.7 * r);
            cairo_close_path(cr);
            break;
        case Marker::diamond:
            cairo_move_to(cr, x, y - 1.3 * r);
            cairo_line_to(cr, x + 1.0 * r, y);
            cairo_line_to(cr, x, y + 1.3 * r);
            cairo_line_to(cr, x - 1.0 * r, y);
            cairo_close_path(cr);
            break;
    }
}

Marker marker_for(std::size_t i) {
    static const Marker cycle[4] = {Marker::circle, Marker::square, Marker::triangle, Marker::diamond};
    return cycle[i % 4];
}

// Pixel vertices of a series' line (steps expanded), NaN where the line breaks.
void series_line(const Series& s, const Mapper& m, std::vector<double>& xs, std::vector<double>& ys) {
    xs.clear();
    ys.clear();
    const std::size_t n = std::min(s.x.size(), s.y.size());
    if (s.style == Style::step) {
        for (std::size_t i = 0; i < n; ++i) {
            const double x = m.px(s.x[i]), y = m.py(s.y[i]);
            if (!finite(x) || !finite(y)) { xs.push_back(nan); ys.push_back(nan); continue; }
            xs.push_back(x); ys.push_back(y);
            if (i + 1 < n) {
                const double xn = m.px(s.x[i + 1]);
                if (finite(xn)) { xs.push_back(xn); ys.push_back(y); }
            }
        }
        return;
    }
    if (s.style == Style::histogram) {
        // The outline of the bars, down to the baseline at both ends and across empty or missing bins.
        const std::size_t bins = s.x.size() > 0 ? std::min(s.y.size(), s.x.size() - 1) : 0;
        const double base = m.area.y + m.area.h;
        double prev_top = nan;
        for (std::size_t i = 0; i < bins; ++i) {
            const double xl = m.px(s.x[i]), xr = m.px(s.x[i + 1]);
            double top = m.py(s.y[i]);
            if (!finite(top) && finite(s.y[i])) top = base;  // e.g. a zero count on a log axis
            if (!finite(xl) || !finite(xr) || !finite(top)) {
                if (finite(prev_top)) { xs.push_back(xs.empty() ? nan : xs.back()); ys.push_back(base); }
                xs.push_back(nan); ys.push_back(nan);
                prev_top = nan;
                continue;
            }
            if (!finite(prev_top)) { xs.push_back(xl); ys.push_back(base); }
            xs.push_back(xl); ys.push_back(top);
            xs.push_back(xr); ys.push_back(top);
            prev_top = top;
        }
        if (finite(prev_top)) { xs.push_back(xs.back()); ys.push_back(base); }
        return;
    }
    for (std::size_t i = 0; i < n; ++i) {
        xs.push_back(m.px(s.x[i]));
        ys.push_back(m.py(s.y[i]));
    }
}

// ------------------------------------------------------------------------------------------- legend

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

constexpr double legend_pad = 8.0, legend_row = 19.0, legend_sample = 28.0, legend_inset = 8.0;

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

// -------------------------------------------------------------------------------------------- panels

Color series_color(const Panel& p, std::size_t i) { return p.series[i].color.value_or(palette(i)); }

// Band colours: explicit, else the same-labelled series', else the next unused palette colour.
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

DataRange x_data(const Panel& p) {
    DataRange r;
    for (const auto& s : p.series) {
        const std::size_t n = s.style == Style::histogram ? s.x.size() : std::min(s.x.size(), s.y.size());
        for (std::size_t i = 0; i < n; ++i)
            if (s.style == Style::histogram || finite(s.y[i])) r.add(s.x[i]);
    }
    for (const auto& b : p.bands) {
        const std::size_t n = std::min({b.x.size(), b.lo.size(), b.hi.size()});
        for (std::size_t i = 0; i < n; ++i)
            if (finite(b.lo[i]) || finite(b.hi[i])) r.add(b.x[i]);
    }
    for (const auto& l : p.lines)
        if (!l.horizontal) r.add(l.value);
    if (!r.have)  // spans only: show them
        for (const auto& s : p.spans)
            if (s.along_x) { r.add(s.from); r.add(s.to); }
    return r;
}

// The y data range, counting only points whose x lies in `xr` (when the x range is fixed).
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

struct PanelLayout {
    Rect outer, plot;
    Axis x, y;
    Legend legend;
    bool has_data = false;
};

// Pixel points the legend should not cover: markers, vertices and samples along lines and band edges.
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

// Puts the legend in the plot corner covering the fewest data points; returns that count.
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

double left_margin(cairo_t* cr, const Panel& p, const Axis& y) {
    double widest = 0.0;
    for (const auto& l : y.labels) widest = std::max(widest, text_width(cr, l, tick_font));
    return 12.0 + (p.y_label.empty() ? 0.0 : line_height(cr, axis_label_font) + 6.0) + widest + 9.0;
}

struct FigureLayout {
    double title_h = 0.0;
    int width = 0, height = 0;
    std::vector<PanelLayout> panels;
};

// Empty figures are drawn as one empty panel so that the output is always a valid image.
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
        return fitted_x_axis(cr, width, [&](int target) { return linear_axis(d.have, d.lo, d.hi, p.x_range, target); });
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

void draw_grid(cairo_t* cr, const Rect& a, const Axis& x, const Axis& y) {
    cairo_set_line_width(cr, 1.0);
    set_color(cr, grid_color);
    for (double t : x.ticks) {
        const double px = std::round(a.x + x.unit(t) * a.w) + 0.5;
        cairo_move_to(cr, px, a.y);
        cairo_line_to(cr, px, a.y + a.h);
    }
    for (double t : y.ticks) {
        const double py = std::round(a.y + a.h - y.unit(t) * a.h) + 0.5;
        cairo_move_to(cr, a.x, py);
        cairo_line_to(cr, a.x + a.w, py);
    }
    cairo_stroke(cr);
}

void draw_frame(cairo_t* cr, const Rect& a) {
    cairo_set_line_width(cr, 1.0);
    set_color(cr, frame_color);
    cairo_rectangle(cr, std::round(a.x) + 0.5, std::round(a.y) + 0.5, std::round(a.w), std::round(a.h));
    cairo_stroke(cr);
}

void draw_ticks(cairo_t* cr, const Rect& a, const Axis& x, const Axis* y) {
    set_color(cr, frame_color);
    cairo_set_line_width(cr, 1.0);
    const double bottom = std::round(a.y + a.h) + 0.5;
    for (std::size_t i = 0; i < x.ticks.size(); ++i) {
        const double px = std::round(a.x + x.unit(x.ticks[i]) * a.w) + 0.5;
        cairo_move_to(cr, px, bottom);
        cairo_line_to(cr, px, bottom + 4.0);
        cairo_stroke(cr);
        draw_text(cr, x.labels[i], px, bottom + 7.0, tick_font, text_color, 0.5, 0.0);
    }
    if (!y) return;
    const double left = std::round(a.x) + 0.5;
    for (std::size_t i = 0; i < y->ticks.size(); ++i) {
        const double py = std::round(a.y + a.h - y->unit(y->ticks[i]) * a.h) + 0.5;
        cairo_move_to(cr, left, py);
        cairo_line_to(cr, left - 4.0, py);
        cairo_stroke(cr);
        draw_text(cr, y->labels[i], left - 7.0, py, tick_font, text_color, 1.0, 0.5);
    }
}

void draw_panel(cairo_t* cr, const Panel& p, const PanelLayout& pl) {
    const Rect& a = pl.plot;
    const Mapper m{a, &pl.x, &pl.y};
    const Rect line_clip = expanded(a, 20.0);

    draw_grid(cr, a, pl.x, pl.y);

    cairo_save(cr);
    cairo_rectangle(cr, a.x, a.y, a.w, a.h);
    cairo_clip(cr);

    // Spans behind everything.
    for (const auto& s : p.spans) {
        if (std::isnan(s.from) || std::isnan(s.to)) continue;
        set_color(cr, s.color.value_or(span_color), s.opacity);
        if (s.along_x) {
            const auto xend = [&](double v) { return std::isinf(v) ? (v < 0 ? a.x : a.x + a.w) : m.cpx(v); };
            const double x0 = xend(s.from), x1 = xend(s.to);
            if (!finite(x0) || !finite(x1)) continue;
            cairo_rectangle(cr, std::min(x0, x1), a.y, std::abs(x1 - x0), a.h);
        } else {
            const auto yend = [&](double v) { return std::isinf(v) ? (v < 0 ? a.y + a.h : a.y) : m.cpy(v); };
            const double y0 = yend(s.from), y1 = yend(s.to);
            if (!finite(y0) || !finite(y1)) continue;
            cairo_rectangle(cr, a.x, std::min(y0, y1), a.w, std::abs(y1 - y0));
        }
        cairo_fill(cr);
    }

    // Bands: one polygon per run of finite points.
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

    // Reference lines.
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

    // Series in order.
    std::vector<double> xs, ys;
    for (std::size_t si = 0; si < p.series.size(); ++si) {
        const Series& s = p.series[si];
        const Color c = series_color(p, si);
        const double width = finite(s.width) ? std::clamp(s.width, 0.25, 20.0) : 1.5;
        const double radius = finite(s.point_size) ? std::clamp(s.point_size, 0.5, 20.0) : 2.5;
        const std::size_t n = std::min(s.x.size(), s.y.size());
        if (s.style == Style::histogram) {
            const std::size_t bins = s.x.size() > 0 ? std::min(s.y.size(), s.x.size() - 1) : 0;
            const double base = a.y + a.h;
            set_color(cr, c, 0.35);
            for (std::size_t i = 0; i < bins; ++i) {
                const double xl = m.cpx(s.x[i]), xr = m.cpx(s.x[i + 1]), top = m.cpy(s.y[i]);
                if (!finite(xl) || !finite(xr) || !finite(top)) continue;
                cairo_rectangle(cr, std::min(xl, xr), std::min(top, base), std::abs(xr - xl), std::abs(base - top));
            }
            cairo_fill(cr);
        }
        // Error bars first so markers sit on top.
        if (!s.y_err.empty() && s.style != Style::histogram) {
            set_color(cr, c, 0.75);
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
                const double cap = std::min(radius + 1.0, 4.0);
                for (double ye : {m.py(s.y[i] - e), m.py(s.y[i] + e)})
                    if (finite(ye) && inside(line_clip, px, ye)) { cairo_move_to(cr, px - cap, ye); cairo_line_to(cr, px + cap, ye); }
            }
            cairo_stroke(cr);
        }
        if (s.style != Style::points) {
            series_line(s, m, xs, ys);
            path_polyline(cr, xs, ys, line_clip);
            set_color(cr, c);
            cairo_set_line_width(cr, s.style == Style::histogram ? std::min(width, 1.5) : width);
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
                        path_marker(cr, Marker::circle, xs[k], ys[k], std::max(width, 2.0));
                cairo_fill(cr);
            }
        }
        if (s.style == Style::points || s.style == Style::line_points) {
            const Marker mk = s.marker.value_or(marker_for(si));
            set_color(cr, c);
            const Rect mark_clip = expanded(a, radius * 2.0);
            for (std::size_t i = 0; i < n; ++i) {
                const double px = m.px(s.x[i]), py = m.py(s.y[i]);
                if (!finite(px) || !finite(py) || !inside(mark_clip, px, py)) continue;
                path_marker(cr, mk, px, py, radius);
            }
            cairo_fill(cr);
        }
    }
    cairo_restore(cr);

    draw_frame(cr, a);
    draw_ticks(cr, a, pl.x, &pl.y);

    if (!pl.has_data)
        draw_text(cr, "no data", a.x + a.w / 2.0, a.y + a.h / 2.0, note_font, muted_color, 0.5, 0.5);
    draw_legend(cr, pl.legend);

    draw_text(cr, p.title, a.x, pl.outer.y + 10.0, panel_title_font, text_color, 0.0, 0.0);
    const double tick_h = line_height(cr, tick_font);
    draw_text(cr, p.x_label, a.x + a.w / 2.0, a.y + a.h + 8.0 + tick_h + 6.0, axis_label_font, text_color, 0.5, 0.0);
    draw_text(cr, p.y_label, pl.outer.x + 12.0, a.y + a.h / 2.0, axis_label_font, text_color, 0.5, 0.0, -std::numbers::pi / 2.0);
}

void draw_figure(cairo_t* cr, const Figure& f, const FigureLayout& L) {
    set_color(cr, white);
    cairo_paint(cr);
    const std::vector<Panel>& panels = panels_of(f);
    for (std::size_t i = 0; i < panels.size(); ++i) draw_panel(cr, panels[i], L.panels[i]);
    draw_text(cr, f.title, L.width / 2.0, 12.0, title_font, text_color, 0.5, 0.0);
}

// ---------------------------------------------------------------------------------------------- bars

void draw_bars(cairo_t* cr, const Bars& b) {
    const double W = b.width, H = b.height;
    set_color(cr, white);
    cairo_paint(cr);
    const std::size_t ncat = b.categories.size();
    const std::size_t ngroups = b.values.size();
    auto value = [&](std::size_t g, std::size_t c) { return c < b.values[g].size() ? b.values[g][c] : nan; };

    // Legend: one row under the title (outside the data, so it never covers a bar).
    Legend lg;
    for (std::size_t g = 0; g < ngroups; ++g) {
        const std::string label = g < b.group_labels.size() ? b.group_labels[g] : "";
        if (label.empty()) continue;
        LegendEntry e;
        e.label = label;
        e.kind = EntryKind::band;
        e.color = palette(g);
        lg.entries.push_back(e);
    }
    const double title_h = b.title.empty() ? 0.0 : 40.0;
    const double legend_h = lg.entries.empty() ? 0.0 : legend_row + 8.0;
    const double tick_h = line_height(cr, tick_font), label_h = line_height(cr, axis_label_font);

    DataRange d;
    for (std::size_t g = 0; g < ngroups; ++g)
        for (std::size_t c = 0; c < ncat; ++c) {
            const double v = value(g, c);
            if (b.log_y && !(v > 0.0)) continue;
            d.add(v);
        }
    const bool have = d.have;
    if (!b.log_y && have) {
        d.add(0.0);  // bars rise from zero
        if (b.value_labels) {  // head room for the labels above the tallest bar
            const double span = std::max(d.hi - d.lo, std::abs(d.hi) * 1e-9);
            if (d.hi > 0.0) d.add(d.hi + span * 0.07);
            if (d.lo < 0.0) d.add(d.lo - span * 0.07);
        }
    }
    if (b.log_y && have) {
        d.add(d.lo / 4.0);  // the smallest bar must rise visibly above the bottom of the axis
        if (b.value_labels) d.add(d.hi * std::pow(d.hi / d.lo, 0.07) * 1.2);
    }

    // Category labels: horizontal, wrapped onto up to three lines to fit their slot, else slanted.
    const double top = title_h + legend_h + 10.0;
    const double plot_h_guess = H - top - 80.0;
    const int target = std::max(2, static_cast<int>(plot_h_guess / 48.0));
    Axis y = b.log_y ? log_axis(have, d.lo, d.hi, std::nullopt, target)
                     : linear_axis(have, d.lo, d.hi, std::nullopt, target, true);

    double ywide = 0.0;
    for (const auto& l : y.labels) ywide = std::max(ywide, text_width(cr, l, tick_font));
    Rect a;
    a.x = 12.0 + (b.y_label.empty() ? 0.0 : label_h + 6.0) + ywide + 9.0;
    a.w = std::max(10.0, W - a.x - 20.0);
    const double slot = ncat > 0 ? a.w / static_cast<double>(ncat) : a.w;
    std::vector<std::vector<std::string>> wrapped;
    bool slanted = false;
    std::size_t lines = 1;
    double widest = 0.0;
    for (const auto& c : b.categories) {
        wrapped.push_back(wrap_text(cr, c, slot - 8.0, tick_font));
        for (const auto& l : wrapped.back()) slanted = slanted || text_width(cr, l, tick_font) > slot - 8.0;
        lines = std::max(lines, wrapped.back().size());
        widest = std::max(widest, text_width(cr, c, tick_font));
    }
    slanted = slanted || lines > 3;
    constexpr double slant = 35.0 * std::numbers::pi / 180.0;
    const double cat_h = slanted ? std::min(widest * std::sin(slant) + tick_h * std::cos(slant), H * 0.4)
                                 : tick_h * static_cast<double>(lines);
    const double bottom = 8.0 + cat_h + (b.x_label.empty() ? 8.0 : 6.0 + label_h + 8.0);
    a.y = top;
    a.h = std::max(10.0, H - top - bottom);

    draw_grid(cr, a, Axis{}, y);  // horizontal grid lines only

    // Bars.
    const double group_w = slot * 0.8;
    const double bar_w = ngroups > 0 ? group_w / static_cast<double>(ngroups) : group_w;
    const Axis xdummy;
    const Mapper m{a, &xdummy, &y};
    const double base = b.log_y ? a.y + a.h : std::clamp(m.py(0.0), a.y, a.y + a.h);
    cairo_save(cr);
    cairo_rectangle(cr, a.x, a.y, a.w, a.h);
    cairo_clip(cr);
    for (std::size_t g = 0; g < ngroups; ++g)
        for (std::size_t c = 0; c < ncat; ++c) {
            const double v = value(g, c);
            const double top_px = m.cpy(v);
            if (!finite(v) || !finite(top_px)) continue;
            const double x0 = a.x + slot * static_cast<double>(c) + (slot - group_w) / 2.0 + bar_w * static_cast<double>(g);
            cairo_rectangle(cr, x0 + 0.5, std::min(top_px, base), bar_w - 1.0, std::abs(base - top_px));
            set_color(cr, palette(g));
            cairo_fill(cr);
        }
    cairo_restore(cr);

    // Value labels, only if every one fits its bar.
    if (b.value_labels) {
        std::vector<std::tuple<double, double, std::string, bool>> labels;
        bool fit = true;
        for (std::size_t g = 0; g < ngroups; ++g)
            for (std::size_t c = 0; c < ncat; ++c) {
                const double v = value(g, c);
                const double top_px = m.py(v);
                if (!finite(v) || !finite(top_px) || !inside(expanded(a, 0.5), a.x, top_px)) continue;
                char buf[64];
                std::snprintf(buf, sizeof buf, "%.3g", v);
                const std::string s = with_minus(buf);
                if (text_width(cr, s, value_font) > bar_w + 4.0) fit = false;
                const double cx = a.x + slot * static_cast<double>(c) + (slot - group_w) / 2.0 + bar_w * (static_cast<double>(g) + 0.5);
                labels.emplace_back(cx, top_px, s, v < 0.0);
            }
        if (fit)
            for (const auto& [cx, py, s, below] : labels)
                draw_text(cr, s, cx, below ? py + 3.0 : py - 3.0, value_font, text_color, 0.5, below ? 0.0 : 1.0);
    }

    draw_frame(cr, a);
    if (!b.log_y && base > a.y && base < a.y + a.h) {  // the zero line
        set_color(cr, frame_color);
        cairo_move_to(cr, a.x, std::round(base) + 0.5);
        cairo_line_to(cr, a.x + a.w, std::round(base) + 0.5);
        cairo_stroke(cr);
    }
    draw_ticks(cr, a, Axis{}, &y);
    for (std::size_t c = 0; c < ncat; ++c) {
        const double cx = a.x + slot * (static_cast<double>(c) + 0.5);
        if (slanted) {
            draw_text(cr, b.categories[c], cx + 4.0, a.y + a.h + 8.0, tick_font, text_color, 1.0, 0.0, -slant);
            continue;
        }
        for (std::size_t k = 0; k < wrapped[c].size(); ++k)
            draw_text(cr, wrapped[c][k], cx, a.y + a.h + 8.0 + tick_h * static_cast<double>(k), tick_font, text_color, 0.5, 0.0);
    }
    if (!have) draw_text(cr, "no data", a.x + a.w / 2.0, a.y + a.h / 2.0, note_font, muted_color, 0.5, 0.5);

    if (!lg.entries.empty()) {
        double x = a.x + a.w;
        std::vector<double> widths;
        for (const auto& e : lg.entries) widths.push_back(legend_sample + 8.0 + text_width(cr, e.label, legend_font) + 16.0);
        double total = 0.0;
        for (double w : widths) total += w;
        x = std::max(a.x, a.x + a.w - total + 16.0);
        for (std::size_t i = 0; i < lg.entries.size(); ++i) {
            draw_legend_sample(cr, lg.entries[i], x, title_h + 6.0);
            draw_text(cr, lg.entries[i].label, x + legend_sample + 8.0, title_h + 6.0 + legend_row / 2.0 - 2.0, legend_font,
                      text_color, 0.0, 0.5);
            x += widths[i];
        }
    }
    draw_text(cr, b.title, W / 2.0, 12.0, title_font, text_color, 0.5, 0.0);
    draw_text(cr, b.x_label, a.x + a.w / 2.0, a.y + a.h + 8.0 + cat_h + 6.0, axis_label_font, text_color, 0.5, 0.0);
    draw_text(cr, b.y_label, 12.0, a.y + a.h / 2.0, axis_label_font, text_color, 0.5, 0.0, -std::numbers::pi / 2.0);
}

// ------------------------------------------------------------------------------------------- output

struct SurfaceDeleter {
    void operator()(cairo_surface_t* s) const { cairo_surface_destroy(s); }
};
struct ContextDeleter {
    void operator()(cairo_t* c) const { cairo_destroy(c); }
};
using SurfacePtr = std::unique_ptr<cairo_surface_t, SurfaceDeleter>;
using ContextPtr = std::unique_ptr<cairo_t, ContextDeleter>;

cairo_status_t append_bytes(void* closure, const unsigned char* data, unsigned int length) {
    static_cast<std::string*>(closure)->append(reinterpret_cast<const char*>(data), length);
    return CAIRO_STATUS_SUCCESS;
}

void check_size(double w, double h, const std::string& path) {
    if (!(w >= min_size && w <= max_size && h >= min_size && h <= max_size))
        throw std::runtime_error("cannot write " + path + ": image size " + std::to_string(static_cast<long long>(w)) + "x" +
                                 std::to_string(static_cast<long long>(h)) + " is outside " + std::to_string(min_size) +
                                 ".." + std::to_string(max_size) + " pixels");
}

void check_status(cairo_status_t st, const std::string& path) {
    if (st != CAIRO_STATUS_SUCCESS) throw std::runtime_error("cannot write " + path + ": " + cairo_status_to_string(st));
}

enum class Format { png, svg };

// Renders with `draw(cr)` onto a width x height surface and returns the encoded file.
template <typename Draw>
std::string render(Format fmt, int width, int height, const std::string& path, Draw draw) {
    std::string bytes;
    SurfacePtr surface(fmt == Format::png ? cairo_image_surface_create(CAIRO_FORMAT_ARGB32, width, height)
                                          : cairo_svg_surface_create_for_stream(append_bytes, &bytes, width, height));
    check_status(cairo_surface_status(surface.get()), path);
    if (fmt == Format::svg) cairo_svg_surface_set_document_unit(surface.get(), CAIRO_SVG_UNIT_PX);
    {
        ContextPtr cr(cairo_create(surface.get()));
        draw(cr.get());
        check_status(cairo_status(cr.get()), path);
    }
    if (fmt == Format::png) check_status(cairo_surface_write_to_png_stream(surface.get(), append_bytes, &bytes), path);
    cairo_surface_finish(surface.get());
    check_status(cairo_surface_status(surface.get()), path);
    return bytes;
}

// A scratch context for measuring text before the real surface exists (same font, same hinting as PNG).
// The context keeps its own reference to the surface.
ContextPtr measuring_context() {
    SurfacePtr scratch(cairo_image_surface_create(CAIRO_FORMAT_ARGB32, 1, 1));
    return ContextPtr(cairo_create(scratch.get()));
}

// The encoded bytes go to a temporary file beside `path` which is then renamed over it (fileio.hpp).
void save_figure(const Figure& f, const std::string& path, Format fmt) {
    ContextPtr mc = measuring_context();
    check_size(f.width, std::max(0.0, (f.title.empty() ? 0.0 : 40.0) + static_cast<double>(f.height_per_panel) *
                                                                          static_cast<double>(panels_of(f).size())),
               path);
    const FigureLayout L = layout_figure(mc.get(), f);
    write_file_atomic(path, render(fmt, L.width, L.height, path, [&](cairo_t* cr) { draw_figure(cr, f, L); }));
}

void save_bars(const Bars& b, const std::string& path, Format fmt) {
    check_size(b.width, b.height, path);
    write_file_atomic(path, render(fmt, b.width, b.height, path, [&](cairo_t* cr) { draw_bars(cr, b); }));
}

}  // namespace

// ------------------------------------------------------------------------------------------- public

Color palette(std::size_t i) {
    // Okabe & Ito (2008) colours as 8-bit sRGB (from memory; widely reproduced).
    static const unsigned hex[8] = {0x0072B2, 0xD55E00, 0x009E73, 0xCC79A7, 0xE69F00, 0x56B4E9, 0x000000, 0xF0E442};
    const unsigned h = hex[i % 8];
    return Color{((h >> 16) & 0xFF) / 255.0, ((h >> 8) & 0xFF) / 255.0, (h & 0xFF) / 255.0, 1.0};
}

double nice_number(double x, bool round) {
    if (!(x > 0.0) || !finite(x)) return 1.0;
    const double e = std::floor(std::log10(x));
    const double p = std::pow(10.0, e);
    const double f = x / p;  // in [1, 10)
    double nf;
    if (round) nf = f < 1.5 ? 1.0 : f < 3.0 ? 2.0 : f < 7.0 ? 5.0 : 10.0;
    else nf = f <= 1.0 ? 1.0 : f <= 2.0 ? 2.0 : f <= 5.0 ? 5.0 : 10.0;
    return nf * p;
}

Ticks nice_ticks(double lo, double hi, int target_count) {
    Ticks t;
    std::tie(t.lo, t.hi) = sanitize_range(lo, hi);
    const int n = std::clamp(target_count, 2, 1000);
    // Heckbert rounds the range up to a nice number first and then the step; that can halve the number of
    // ticks (e.g. two ticks for 0..13). Instead the 1-2-5 steps around range / (n - 1) are tried and the
    // one whose tick count is nearest n wins (ties: the larger step).
    const double raw = (t.hi / (n - 1) - t.lo / (n - 1));
    const double p = std::pow(10.0, std::floor(std::log10(raw)));
    auto count = [&](double step) {
        const double first = std::ceil(t.lo / step - 1e-9), last = std::floor(t.hi / step + 1e-9);
        return last - first + 1.0;
    };
    t.step = nice_number(raw, true);
    double best = std::abs(count(t.step) - n);
    for (double m : {0.5, 1.0, 2.0, 5.0, 10.0}) {
        const double step = m * p;
        const double c = count(step);
        if (!finite(step) || !(step > 0.0) || c < 2.0) continue;
        const double miss = std::abs(c - n);
        if (miss < best || (miss == best && step > t.step)) {
            best = miss;
            t.step = step;
        }
    }
    t.values = ticks_with_step(t.lo, t.hi, t.step);
    for (int k = 0; t.values.size() < 2 && k < 4; ++k) {  // a short range between two ticks: finer steps
        t.step = nice_number(t.step / 2.0, true);
        t.values = ticks_with_step(t.lo, t.hi, t.step);
    }
    return t;
}

std::string format_tick(double value, double step) {
    if (!finite(value)) return "";
    step = std::abs(step);
    if (!(step > 0.0) || !finite(step)) step = std::max(std::abs(value), 1.0);
    if (std::abs(value) < step * 1e-9) value = 0.0;  // "0.0" like its neighbours, never "-0.0" or "1e-17"
    if (value == 0.0 && step < 1e-4) return "0";       // beside scientific labels
    const double mag = std::abs(value);
    const int step_exp = static_cast<int>(std::floor(std::log10(step) + 1e-9));
    char buf[64];
    if (value != 0.0 && (mag >= 1e6 || step < 1e-4)) {
        const int value_exp = static_cast<int>(std::floor(std::log10(mag) + 1e-9));
        const int precision = std::clamp(value_exp - step_exp, 0, 15);
        std::snprintf(buf, sizeof buf, "%.*e", precision, value);
        // "2.5e+06" -> "2.5e6", "1e-05" -> "1e-5"
        std::string s = buf;
        const std::size_t e = s.find('e');
        if (e != std::string::npos) {
            std::string mant = s.substr(0, e), ex = s.substr(e + 1);
            const bool neg = !ex.empty() && ex[0] == '-';
            if (!ex.empty() && (ex[0] == '+' || ex[0] == '-')) ex.erase(0, 1);
            while (ex.size() > 1 && ex[0] == '0') ex.erase(0, 1);
            s = mant + "e" + (neg ? "-" : "") + ex;
        }
        return with_minus(s);
    }
    const int decimals = std::clamp(-step_exp, 0, 10);
    std::snprintf(buf, sizeof buf, "%.*f", decimals, value);
    return with_minus(buf);
}

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

Rect plot_area(const Figure& figure, std::size_t index) {
    ContextPtr mc = measuring_context();
    const FigureLayout L = layout_figure(mc.get(), figure);
    if (index >= L.panels.size()) throw std::out_of_range("plot_area: no panel " + std::to_string(index));
    return L.panels[index].plot;
}

bool font_has_glyphs(const std::string& utf8) {
    const std::string t = sanitize_utf8(utf8);
    if (t != utf8) return false;
    ContextPtr mc = measuring_context();
    set_font(mc.get(), tick_font);
    cairo_scaled_font_t* sf = cairo_get_scaled_font(mc.get());
    cairo_glyph_t* glyphs = nullptr;
    int count = 0;
    const cairo_status_t st = cairo_scaled_font_text_to_glyphs(sf, 0.0, 0.0, t.c_str(), static_cast<int>(t.size()), &glyphs,
                                                               &count, nullptr, nullptr, nullptr);
    bool ok = st == CAIRO_STATUS_SUCCESS;
    for (int i = 0; ok && i < count; ++i)
        if (glyphs[i].index == 0) ok = false;  // glyph 0 is the font's "missing glyph"
    cairo_glyph_free(glyphs);
    return ok;
}

void save_png(const Figure& figure, const std::string& path) { save_figure(figure, path, Format::png); }
void save_svg(const Figure& figure, const std::string& path) { save_figure(figure, path, Format::svg); }
void save_png(const Bars& bars, const std::string& path) { save_bars(bars, path, Format::png); }
void save_svg(const Bars& bars, const std::string& path) { save_bars(bars, path, Format::svg); }

}  // namespace wayward::plot
