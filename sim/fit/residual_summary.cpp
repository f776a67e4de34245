// RMS of the known fit's O−C by planet and era; see residual_summary.hpp.
#include "sim/fit/residual_summary.hpp"

#include <algorithm>
#include <cmath>

namespace wayward {

std::vector<ResidualSummaryRow> residual_summary(const KnownFit& fit) {
    const ModelSetup& s = fit.setup;
    std::vector<ResidualSummaryRow> rows;
    for (std::size_t p = 0; p < s.planets.size(); ++p)
        for (std::size_t e = 0; e < s.eras.size(); ++e) {
            ResidualSummaryRow r;
            r.planet = p;
            r.era = e;
            r.planet_name = s.known.bodies[s.planets[p]].name;
            r.era_name = s.eras[e];
            r.sigma_estimated = !s.era_records_sigma[e];
            double sl = 0, sb = 0;
            for (std::size_t k = 0; k < s.obs.size(); ++k) {
                const FitObservation& f = s.obs[k];
                if (f.planet != p || f.era != e) continue;
                if (f.rejected) {
                    ++r.set_aside;
                    continue;
                }
                sl += fit.residuals[k][0] * fit.residuals[k][0];
                sb += fit.residuals[k][1] * fit.residuals[k][1];
                r.sigma = f.sigma_lon_arcsec;
                ++r.kept;
            }
            if (r.kept == 0 && r.set_aside == 0) continue;
            const double n = static_cast<double>(std::max<std::size_t>(r.kept, 1));
            r.rms_lon = std::sqrt(sl / n);
            r.rms_lat = std::sqrt(sb / n);
            rows.push_back(r);
        }
    return rows;
}

}  // namespace wayward
