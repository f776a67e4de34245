// The map over every plausible minimum. See mixture.hpp.
#include "sim/solve/mixture.hpp"

#include <algorithm>
#include <cmath>
#include <set>

#include "sim/base/random.hpp"
#include "sim/base/units.hpp"
#include "sim/physics/elements.hpp"

namespace wayward {

namespace {

bool qualifies(const Minimum& m, double epoch_year) {
    if (!m.flags.empty() || !m.prediction || !(m.probability >= mixture_min_probability)) return false;
    const Prediction& q = *m.prediction;
    const double det = q.cov_ll * q.cov_bb - q.cov_lb * q.cov_lb;
    return std::abs(q.epoch_year - epoch_year) < 1e-9 && q.cov_ll > 0.0 && q.cov_bb > 0.0 && det > 0.0 && std::isfinite(det) &&
           std::isfinite(q.lon) && std::isfinite(q.lat);
}

}  // namespace

int mix_other_minima(Prediction& p, const std::vector<Minimum>& minima, std::uint64_t seed) {
    const std::size_t n = p.sample_lon.size();
    if (n == 0 || p.sample_lat.size() != n || p.sample_weight.size() != n || minima.empty() || !p.sample_group.empty()) return 0;
    const double p_best = minima.front().probability;
    if (!(p_best > 0.0)) return 0;
    std::vector<std::size_t> taken;
    double total = p_best;
    for (std::size_t i = 1; i < minima.size(); ++i)
        if (qualifies(minima[i], p.epoch_year)) {
            taken.push_back(i);
            total += minima[i].probability;
        }
    if (taken.empty()) return 0;
    p.sample_group.assign(n, 0);
    double own = 0.0;
    for (double w : p.sample_weight) own += w;
    for (double& w : p.sample_weight) w *= p_best / total / own;
    for (std::size_t i : taken) {
        const Prediction& q = *minima[i].prediction;
        const double share = minima[i].probability / total;
        const auto count = static_cast<std::size_t>(std::max<long>(mixture_min_bodies, std::lround(static_cast<double>(n) * share)));
        // Cholesky factor of the 2 x 2 covariance of (lambda cos beta, beta) offsets, arcsec^2.
        const double l11 = std::sqrt(q.cov_ll), l21 = q.cov_lb / l11, l22 = std::sqrt(std::max(q.cov_bb - l21 * l21, 0.0));
        Rng rng = make_rng(seed, "minimum samples", i);
        for (std::size_t k = 0; k < count; ++k) {
            const double z1 = normal(rng), z2 = normal(rng);
            const double x = l11 * z1, y = l21 * z1 + l22 * z2;  // arcsec
            p.sample_lon.push_back(wrap_two_pi(q.lon + x * arcsec / std::cos(q.lat)));
            p.sample_lat.push_back(std::clamp(q.lat + y * arcsec, -pi / 2, pi / 2));
            p.sample_weight.push_back(share / static_cast<double>(count));
            p.sample_group.push_back(static_cast<int>(i));
        }
    }
    p.samples_used = static_cast<int>(p.sample_lon.size());
    double sum = 0.0, sum_sq = 0.0;
    for (double w : p.sample_weight) sum += w;
    for (double& w : p.sample_weight) {
        w /= sum;  // exactly one in total, whatever the rounding
        sum_sq += w * w;
    }
    p.effective_samples = 1.0 / sum_sq;
    return static_cast<int>(taken.size());
}

MixedShare mixed_share(const Prediction& p) {
    MixedShare m;
    std::set<int> groups;
    for (std::size_t k = 0; k < p.sample_group.size() && k < p.sample_weight.size(); ++k)
        if (p.sample_group[k] != 0) {
            groups.insert(p.sample_group[k]);
            ++m.bodies;
            m.probability += p.sample_weight[k];
        }
    m.minima = static_cast<int>(groups.size());
    return m;
}

}  // namespace wayward
