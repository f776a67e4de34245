// Axis ticks for plots drawn outside sim/report; see ticks.hpp.
#include "sim/report/ticks.hpp"

#include <cmath>

#include "sim/report/plot.hpp"

namespace wayward {

std::vector<double> axis_ticks(double lo, double hi, int target_count, bool log) {
    std::vector<double> ticks;
    if (!(hi > lo)) return ticks;
    if (!log) return plot::nice_ticks(lo, hi, target_count).values;
    if (!(lo > 0)) return ticks;
    const int d0 = static_cast<int>(std::floor(std::log10(lo))), d1 = static_cast<int>(std::ceil(std::log10(hi)));
    const bool fine = d1 - d0 <= 3;
    for (int d = d0; d <= d1; ++d)
        for (double m : {1.0, 2.0, 5.0}) {
            if (!fine && m != 1.0) continue;
            const double v = m * std::pow(10.0, d);
            if (v >= lo * (1 - 1e-9) && v <= hi * (1 + 1e-9)) ticks.push_back(v);
        }
    return ticks;
}

std::string axis_tick_label(double value, double spacing, bool log) {
    return plot::format_tick(value, log ? value : spacing);
}

}  // namespace wayward
