// Every plausible solution: relative probabilities and physical checks. See minima.hpp.
#include "sim/solve/minima.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "sim/base/units.hpp"

namespace wayward {

std::vector<std::string> implausibility_flags(const HiddenOrbit& orbit, const Brief& brief) {
    std::vector<std::string> flags;
    if (orbit.mass >= hydrogen_burning_limit_solar) flags.push_back("a star's mass (beyond the hydrogen-burning limit, 0.075 solar)");
    else if (orbit.mass >= deuterium_burning_limit_solar) flags.push_back("a brown dwarf's mass (beyond 13 Jupiter masses)");
    const double e = std::hypot(orbit.k, orbit.h);
    const double q = orbit.semi_major_axis * (1.0 - e), big_q = orbit.semi_major_axis * (1.0 + e);
    for (const BriefPlanet& p : brief.planets) {
        const double ap = p.elements.semi_major_axis, ep = p.elements.eccentricity;
        const double mutual_hill = std::cbrt((p.mass + orbit.mass) / (3.0 * brief.star_mass)) * 0.5 * (ap + orbit.semi_major_axis);
        // The gap between the two orbits' nearest approach: the inner one's apoapsis to the outer one's periapsis.
        const double gap = orbit.semi_major_axis >= ap ? q - ap * (1.0 + ep) : ap * (1.0 - ep) - big_q;
        if (gap < hill_stability_separation * mutual_hill) {
            char text[200];
            std::snprintf(text, sizeof text, "not Hill-stable with %s (orbits %s; %.2g mutual Hill radii apart, %.2f needed)", p.name.c_str(),
                          gap <= 0.0 ? "cross" : "too close", gap / mutual_hill, hill_stability_separation);
            flags.emplace_back(text);
        }
    }
    return flags;
}

double laplace_log_weight(double chi2, const Eigen::MatrixXd& jacobian, double scale) {
    if (jacobian.size() == 0 || !jacobian.allFinite() || !std::isfinite(chi2) || !(scale > 0.0)) return NAN;
    const Eigen::MatrixXd normal = jacobian.transpose() * jacobian;
    const Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> es(normal, Eigen::EigenvaluesOnly);
    const Eigen::VectorXd ev = es.eigenvalues();
    if (!(ev.minCoeff() > 1e-14 * ev.maxCoeff())) return NAN;  // a direction the data do not constrain: no Gaussian basin
    // log sqrt(det(s N^-1)) = (k log s - sum log ev) / 2
    const double k = static_cast<double>(ev.size());
    return -0.5 * chi2 / scale + 0.5 * (k * std::log(scale) - ev.array().log().sum());
}

std::vector<double> probabilities_from_log_weights(const std::vector<double>& log_weights) {
    double top = -INFINITY;
    for (double w : log_weights)
        if (std::isfinite(w)) top = std::max(top, w);
    std::vector<double> p(log_weights.size(), NAN);
    if (!std::isfinite(top)) return p;
    double sum = 0.0;
    for (double w : log_weights)
        if (std::isfinite(w)) sum += std::exp(w - top);
    for (std::size_t i = 0; i < p.size(); ++i)
        if (std::isfinite(log_weights[i])) p[i] = std::exp(log_weights[i] - top) / sum;
    return p;
}

}  // namespace wayward
