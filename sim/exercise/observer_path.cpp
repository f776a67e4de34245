// The team's Kepler path of its observer planet; see observer_path.hpp.
#include "sim/exercise/observer_path.hpp"

#include <algorithm>
#include <cmath>

#include "sim/base/units.hpp"
#include "sim/physics/elements.hpp"

namespace wayward {

ObserverPath kepler_observer_path(const Brief& brief) {
    const System sys = known_model_system(brief);
    const std::size_t obs = brief.observer_index();
    const ObserverFrame frame = observer_frame(sys, sys.observer_index());
    const BriefPlanet& p = brief.planets[obs];
    const double mu = gm_from_mass(brief.star_mass) + gm_from_mass(p.mass);
    const Elements el0 = p.elements;
    const double n = mean_motion(el0.semi_major_axis, mu);
    return [frame, el0, mu, n](double t) {
        Elements el = el0;
        el.mean_anomaly = wrap_two_pi(el0.mean_anomaly + n * t);
        return frame.to_frame(elements_to_state(el, mu).position);
    };
}

double elongation_from_star(const ObserverPath& path, double lon, double lat, double t_days) {
    const Vec3 star = -path(t_days);
    return std::acos(std::clamp(star.normalized().dot(unit_vector(lon, lat)), -1.0, 1.0));
}

}  // namespace wayward
