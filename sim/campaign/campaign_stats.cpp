// Statistics of campaign rows: the bootstrap interval of a success rate. See campaign.hpp.
#include "sim/campaign/campaign.hpp"

#include <algorithm>
#include <cmath>

#include <boost/random/uniform_int_distribution.hpp>

#include "sim/base/random.hpp"
#include "sim/base/statistics.hpp"

namespace wayward {

RateInterval bootstrap_rate(const std::vector<bool>& hits, int resamples, double level, std::uint64_t seed) {
    RateInterval ri;
    const std::size_t n = hits.size();
    if (n == 0) {
        ri.rate = ri.lo = ri.hi = NAN;
        return ri;
    }
    const auto count = static_cast<double>(std::count(hits.begin(), hits.end(), true));
    ri.rate = count / static_cast<double>(n);
    Rng rng = make_rng(seed, "campaign-bootstrap");
    boost::random::uniform_int_distribution<std::size_t> pick(0, n - 1);
    std::vector<double> rates(static_cast<std::size_t>(std::max(resamples, 1)));
    for (double& r : rates) {
        std::size_t h = 0;
        for (std::size_t i = 0; i < n; ++i) h += hits[pick(rng)] ? 1 : 0;
        r = static_cast<double>(h) / static_cast<double>(n);
    }
    ri.lo = quantile(rates, 0.5 * (1.0 - level));
    ri.hi = quantile(rates, 1.0 - 0.5 * (1.0 - level));
    return ri;
}
}  // namespace wayward
