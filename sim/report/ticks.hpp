// Tick positions and labels for an axis drawn elsewhere (the viewer's plots): linear axes take the same
// 1-2-5 ticks as the PNG figures (plot::nice_ticks, after Heckbert, "Nice numbers for graph labels",
// Graphics Gems 1990); log10 axes take decades, with 2 and 5 between them when the range spans at most three.
#pragma once

#include <string>
#include <vector>

namespace wayward {

// Ticks inside [lo, hi], about `target_count` of them on a linear axis. Empty for an empty range, or for a
// log axis whose lo is not positive.
std::vector<double> axis_ticks(double lo, double hi, int target_count, bool log);
// A label with as many decimals as the spacing needs (plot::format_tick); on a log axis each tick is its own
// spacing, so 0.05 reads "0.05" beside "0.1".
std::string axis_tick_label(double value, double spacing, bool log);

}  // namespace wayward
