// The detection test and the goodness of fit; see detection.hpp.
#include "sim/solve/detection.hpp"

#include <algorithm>
#include <cmath>

namespace wayward {

KnownWeights known_weights(const ModelSetup& setup) {
    KnownWeights w;
    for (const FitObservation& f : setup.obs) {
        w.sigma_lon.push_back(f.sigma_lon_arcsec);
        w.sigma_lat.push_back(f.sigma_lat_arcsec);
        w.rejected.push_back(f.rejected);
    }
    return w;
}

double chi2_upper_tail(double x, double dof) {
    if (!(x > 0.0)) return 1.0;
    // Wilson & Hilferty (1931): (x/k)^(1/3) is close to normal with mean 1 - 2/(9k) and variance 2/(9k).
    const double v = 2.0 / (9.0 * dof);
    const double z = (std::cbrt(x / dof) - (1.0 - v)) / std::sqrt(v);
    return 0.5 * std::erfc(z / std::sqrt(2.0));
}

double chi2_quantile_upper(double p, double dof) {
    double lo = 0.0, hi = dof + 100.0 * std::sqrt(2.0 * dof) + 100.0;
    for (int k = 0; k < 200; ++k) {
        const double mid = 0.5 * (lo + hi);
        if (chi2_upper_tail(mid, dof) > p) lo = mid; else hi = mid;
    }
    return 0.5 * (lo + hi);
}

DetectionTest detection_test(const KnownFit& known, const KnownWeights& before, const ModelSetup& setup,
                         const Eigen::VectorXd& hidden_residuals, int parameters, int trials, double alpha) {
    DetectionTest d;
    d.parameters = parameters;
    d.trials = std::max(1, trials);
    d.alpha = alpha;
    d.threshold = chi2_quantile_upper(alpha / d.trials, parameters);
    Eigen::VectorXd r0;
    if (!weighted_residuals(setup, known.run, r0)) return d;  // delta 0: not detected
    if (known.jacobian.rows() != r0.size() || hidden_residuals.size() < r0.size()) return d;
    Eigen::MatrixXd J = known.jacobian;
    Eigen::VectorXd rh = hidden_residuals.head(r0.size());
    // Both models on the same observations: those both fits kept, with the weights the solve ended with.
    for (std::size_t k = 0; k < setup.obs.size(); ++k) {
        const auto e = static_cast<Eigen::Index>(2 * k);
        if (setup.obs[k].rejected || before.rejected[k]) {
            r0[e] = r0[e + 1] = rh[e] = rh[e + 1] = 0.0;
            J.row(e).setZero();
            J.row(e + 1).setZero();
            continue;
        }
        J.row(e) *= before.sigma_lon[k] / setup.obs[k].sigma_lon_arcsec;
        J.row(e + 1) *= before.sigma_lat[k] / setup.obs[k].sigma_lat_arcsec;
    }
    const Eigen::VectorXd step = J.colPivHouseholderQr().solve(r0);
    const double chi2_known = (r0 - J * step).squaredNorm();
    d.delta_chi2 = chi2_known - rh.squaredNorm();
    return d;
}

GoodnessOfFit goodness_of_fit(double chi2, std::size_t dof, bool weights_estimated) {
    GoodnessOfFit g;
    g.applies = !weights_estimated && dof > 0;
    g.chi2 = chi2;
    g.dof = dof;
    if (g.applies) g.p_value = chi2_upper_tail(chi2, static_cast<double>(dof));
    return g;
}

ClippingChange clipping_change(const KnownWeights& before, const ModelSetup& setup) {
    ClippingChange c;
    for (std::size_t k = 0; k < setup.obs.size(); ++k) {
        if (setup.obs[k].rejected && !before.rejected[k]) ++c.newly_set_aside;
        if (!setup.obs[k].rejected && before.rejected[k]) ++c.restored;
    }
    return c;
}

}  // namespace wayward
