// Small sample statistics shared by campaigns, the budget and their reports.
#pragma once

#include <algorithm>
#include <cmath>
#include <vector>

namespace wayward {

// Quantile q in [0, 1] by linear interpolation between order statistics (definition 7 of Hyndman & Fan 1996,
// the common default); non-finite values are left out; NaN when nothing is left.
inline double quantile(std::vector<double> v, double q) {
    v.erase(std::remove_if(v.begin(), v.end(), [](double x) { return !std::isfinite(x); }), v.end());
    if (v.empty()) return NAN;
    std::sort(v.begin(), v.end());
    const double h = q * static_cast<double>(v.size() - 1);
    const auto lo = static_cast<std::size_t>(std::floor(h));
    const std::size_t hi = std::min(lo + 1, v.size() - 1);
    return v[lo] + (h - static_cast<double>(lo)) * (v[hi] - v[lo]);
}

}  // namespace wayward
