// Intervals of a sampled curve at or below a limit, crossings interpolated; see field_intervals.hpp.
#include "sim/score/field_intervals.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace wayward {

std::vector<Interval> intervals_at_or_below(const std::vector<double>& x, const std::vector<double>& y, double limit) {
    std::vector<Interval> out;
    if (!std::isfinite(limit)) return out;
    const std::size_t n = std::min(x.size(), y.size());
    bool inside = false;                                       // within a run at or below the limit
    double start = 0.0;                                        // x where the current run began
    double last_x = std::numeric_limits<double>::quiet_NaN();  // the last finite point of the run
    auto close = [&](double end) {
        if (inside) out.push_back(Interval{start, end});
        inside = false;
    };
    auto open = [&](double from) {
        start = from;
        inside = true;
    };
    for (std::size_t i = 0; i < n; ++i) {
        if (!std::isfinite(x[i]) || !std::isfinite(y[i])) {
            if (inside) close(last_x);
            continue;
        }
        const bool in = y[i] <= limit;
        const bool prev_ok = i > 0 && std::isfinite(x[i - 1]) && std::isfinite(y[i - 1]);
        if (prev_ok) {
            const bool prev_in = y[i - 1] <= limit;
            // Interpolated crossing between the two samples.
            const double t = (limit - y[i - 1]) / (y[i] - y[i - 1]);
            const double xc = x[i - 1] + (std::isfinite(t) ? std::clamp(t, 0.0, 1.0) : 0.0) * (x[i] - x[i - 1]);
            if (in && !prev_in) open(xc);
            if (!in && prev_in) close(xc);
        } else if (in) {
            open(x[i]);
        }
        last_x = x[i];
    }
    if (inside) close(last_x);
    return out;
}

}  // namespace wayward
