// The region's distance from the star at the epoch; see near_star.hpp.
#include "sim/predict/near_star.hpp"

#include <algorithm>
#include <cstdio>

#include "sim/base/units.hpp"
#include "sim/exercise/observer_path.hpp"

namespace wayward {

NearStar near_star(const Brief& brief, double epoch_year, double lon, double lat, double radius_arcsec) {
    NearStar n;
    n.limit_deg = brief.elongation_limit_deg;
    const ObserverPath path = kepler_observer_path(brief);
    n.centre_deg = elongation_from_star(path, lon, lat, days_from_year(brief.epoch0_year, epoch_year)) / deg;
    n.edge_deg = std::max(0.0, n.centre_deg - radius_arcsec / 3600.0);
    return n;
}

NearStar near_star(const Brief& brief, const Prediction& p) {
    // 2.146 = sqrt(-2 ln 0.1): the radius holding 90% of a circular two-dimensional Gaussian of that sigma.
    const double radius = std::max(p.radius90_arcsec, 2.146 * p.semi_major_arcsec);
    return near_star(brief, p.epoch_year, p.lon, p.lat, radius);
}

std::string near_star_caution(const NearStar& n, double epoch_year) {
    if (!n.part_inside()) return "";
    char buf[512];
    if (n.centre_inside())
        std::snprintf(buf, sizeof buf,
                      "Caution: at %.2f the predicted place is %.1f deg from the star, inside the elongation limit of %.1f deg: "
                      "it cannot be searched then. Choose another epoch (--epoch); a real observatory's own safety rules and "
                      "scheduling tools take precedence.",
                      epoch_year, n.centre_deg, n.limit_deg);
    else
        std::snprintf(buf, sizeof buf,
                      "Caution: at %.2f part of the region (its nearest edge %.1f deg from the star, the centre %.1f deg) lies "
                      "inside the elongation limit of %.1f deg; no pointing there may be planned. A real observatory's own "
                      "safety rules and scheduling tools take precedence.",
                      epoch_year, n.edge_deg, n.centre_deg, n.limit_deg);
    return buf;
}

}  // namespace wayward
