// Axes for the plots: Heckbert's "nice numbers" ticks ("Nice numbers for graph labels", Graphics Gems, 1990)
// and their labels, linear and log10 axes fitted to the data, and drawing the grid, frame and tick marks.
// Part of the plot module (plot.hpp).
#include <cstdio>
#include <tuple>

#include "sim/report/plot_internal.hpp"

namespace wayward::plot {

namespace detail {

namespace {

std::string minus_sign() {
    static const std::string m = font_has_glyphs("\u2212") ? "\u2212" : "-";
    return m;
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

}  // namespace

std::string with_minus(std::string s) {
    std::string out;
    for (char ch : s) {
        if (ch == '-') out += minus_sign();
        else out += ch;
    }
    return out;
}

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

// A linear axis over the data range [dlo, dhi] (or exactly `fixed`), with about `target` ticks. The automatic
// range is padded by 4% each side and snapped outward to a tick when one lies in the outer three quarters
// of the padding, so an axis ends on a round number when that costs little but data never sits on the
// frame (our own rule; Heckbert's "loose" labelling always snaps, which can waste most of a step). With
// `sticky_zero` an end of the data at exactly 0 is the end of the axis (histogram and bar baselines).
Axis whole_number_ticks(Axis a) {
    if (a.log || a.ticks.size() < 2) return a;
    const double step = a.ticks[1] - a.ticks[0];
    if (step >= 1.0 - 1e-9) return a;  // already whole numbers (a nice step of at least 1 keeps integer ticks)
    a.ticks = ticks_with_step(a.lo, a.hi, 1.0);
    a.labels = linear_labels(a.ticks, 1.0);
    return a;
}

Axis linear_axis(bool have_data, double dlo, double dhi, std::optional<std::pair<double, double>> fixed, int target,
                 bool sticky_zero) {
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
        // 2 and 5 inside each decade; in a range shorter than a decade, where those leave fewer than three
        // labels (40 to 160 would show only 50 and 100), 3 as well, then every whole multiple.
        const std::vector<std::pair<double, int>> decade_ticks = ticks;
        for (const std::vector<double>& multiples : {std::vector<double>{2, 5}, {2, 3, 5}, {2, 3, 4, 5, 6, 7, 8, 9}}) {
            ticks = decade_ticks;
            for (int k = k0 - 1; k <= k1; ++k)
                for (double m : multiples) {
                    const double v = m * std::pow(10.0, k);
                    if (std::log10(v) >= llo - 1e-9 && std::log10(v) <= lhi + 1e-9) ticks.push_back({v, 1000});
                }
            if (ticks.size() >= 3 || lhi - llo >= 1.0) break;
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

Axis fitted_x_axis(cairo_t* cr, double length, const std::function<Axis(int)>& make) {
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

}  // namespace detail

using namespace detail;

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

}  // namespace wayward::plot
