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

// Wilson score interval of a binomial proportion (Wilson 1927, JASA 22, 209; Agresti & Coull 1998, Am. Stat. 52,
// 119): k successes in n trials at normal quantile z (1.959964 for 95 %). Written out because it is two lines of
// algebra, and Boost.Math's binomial bounds are Clopper-Pearson and Jeffreys, not Wilson. {NaN, NaN} when n is 0.
struct WilsonInterval {
    double lo = NAN, hi = NAN;
};
inline WilsonInterval wilson_interval(double k, double n, double z = 1.959963984540054) {
    if (!(n > 0.0)) return {};
    const double p = k / n, z2 = z * z;
    const double centre = (p + z2 / (2.0 * n)) / (1.0 + z2 / n);
    const double half = z / (1.0 + z2 / n) * std::sqrt(p * (1.0 - p) / n + z2 / (4.0 * n * n));
    return {std::max(0.0, centre - half), std::min(1.0, centre + half)};
}

}  // namespace wayward
