// Plot geometry: Liang–Barsky clipping of segments (Liang & Barsky, "A new concept and method for line
// clipping", ACM TOG 3(1), 1984), polylines broken at non-finite points, markers, and the pixel outline of a
// series (lines, steps, histogram bars). Part of the plot module (plot.hpp).
#include <numbers>

#include "sim/report/plot_internal.hpp"

namespace wayward::plot::detail {

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

}  // namespace wayward::plot::detail
