// The years of a score's luck window during which the prediction is inside the search field: the luck curve's
// separation at or below the field radius, crossings interpolated (intervals_at_or_below). The viewer's luck
// plot draws these; luck.png shades the same intervals.
#pragma once

#include <vector>

#include "sim/score/field_intervals.hpp"
#include "sim/score/score.hpp"

namespace wayward {

std::vector<Interval> inside_field_intervals(const Score& score);

}  // namespace wayward
