// Where a separation curve is inside the search field: the intervals of x over which a sampled curve y(x) is at
// or below a limit, each crossing placed by linear interpolation between the two samples either side (a run
// starting or ending at a sample of the curve's edge, or beside a non-finite sample, starts or ends there).
// The luck plot shades these; inside_field_intervals (luck_intervals.hpp) applies them to a score's luck curve.
#pragma once

#include <vector>

namespace wayward {


struct Interval {
    double from = 0.0, to = 0.0;
};

// Non-finite points break the curve; a non-finite limit gives no intervals.
std::vector<Interval> intervals_at_or_below(const std::vector<double>& x, const std::vector<double>& y, double limit);

}  // namespace wayward
