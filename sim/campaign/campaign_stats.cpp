// Statistics of campaign rows: the Wilson score interval of a success rate (Wilson 1927). See campaign.hpp.
#include "sim/campaign/campaign.hpp"

#include <algorithm>
#include <cmath>

#include <boost/math/distributions/normal.hpp>

namespace wayward {

RateInterval wilson_rate(std::size_t successes, std::size_t cases, double level) {
    RateInterval ri;
    if (cases == 0 || successes > cases || !(level > 0.0 && level < 1.0)) {
        ri.rate = ri.lo = ri.hi = NAN;
        return ri;
    }
    const double n = static_cast<double>(cases);
    const double p = static_cast<double>(successes) / n;
    const double z = boost::math::quantile(boost::math::normal(), 0.5 + 0.5 * level);
    const double z2n = z * z / n;
    const double centre = (p + 0.5 * z2n) / (1.0 + z2n);
    const double half = z / (1.0 + z2n) * std::sqrt(p * (1.0 - p) / n + 0.25 * z2n / n);
    ri.rate = p;
    // At 0 and n successes the bounds are exactly 0 and 1; clamping keeps rounding from leaving [0, 1].
    ri.lo = successes == 0 ? 0.0 : std::clamp(centre - half, 0.0, 1.0);
    ri.hi = successes == cases ? 1.0 : std::clamp(centre + half, 0.0, 1.0);
    return ri;
}

RateInterval wilson_rate(const std::vector<bool>& hits, double level) {
    return wilson_rate(static_cast<std::size_t>(std::count(hits.begin(), hits.end(), true)), hits.size(), level);
}
}  // namespace wayward
