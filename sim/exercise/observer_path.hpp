// The team's own path of its observer planet: Kepler's orbit from the brief's elements of that planet (which the
// team knows far better than any outer planet's), in the observer's frame. The search plans with it, and the
// solve and the score use it to say how far a prediction stands from the star. Units: au, days.
#pragma once

#include <functional>

#include "sim/exercise/exercise.hpp"
#include "sim/physics/geometry.hpp"

namespace wayward {

// The observer planet's heliocentric position (au, observer frame) at a day.
using ObserverPath = std::function<Vec3(double t_days)>;
ObserverPath kepler_observer_path(const Brief& brief);

// Elongation (radians) from the star of a direction (lon, lat in the observer frame) seen from the path at day t.
double elongation_from_star(const ObserverPath& path, double lon, double lat, double t_days);

}  // namespace wayward
