// Apparent directions seen from the observer planet: target minus observer with the light-time correction
// (the target's position at the emission time t - tau, tau iterated to convergence), expressed as
// longitude/latitude in the observer's reference plane (its orbital plane at epoch 0). Also the elongation
// from the star and great-circle separations (Vincenty's formula, stable at all separations).
// Units: radians, au, days.
#pragma once

#include <Eigen/Dense>

#include "sim/physics/integrate.hpp"

namespace wayward {

// Rotation from the integration (reference) frame into the observer's frame: z along the observer's
// heliocentric orbital angular momentum at epoch 0, x along the ascending node of that plane on the
// reference plane (the reference x axis when the planes coincide).
struct ObserverFrame {
    Eigen::Matrix3d rotation{Eigen::Matrix3d::Identity()};
    Vec3 to_frame(const Vec3& v) const { return rotation * v; }
};
ObserverFrame observer_frame(const System& s, std::size_t observer);

struct SkyPosition {
    double lon = 0.0;       // radians, [0, 2 pi)
    double lat = 0.0;       // radians
    double distance = 0.0;  // au
};
SkyPosition to_sky(const Vec3& v);
Vec3 unit_vector(double lon, double lat);

// Equatorial -> ecliptic-style reference frame: a rotation by the obliquity about the x axis.
Vec3 equatorial_to_reference(const Vec3& v, double obliquity);

enum class LightTime { corrected, neglected };

struct Apparent {
    SkyPosition sky;
    double light_time_days = 0.0;
    int iterations = 0;
    bool converged = true;
};

// The one light-time solver: the vector from `observer_position` (at the reception time t) to `target` at the
// emission time t - tau, with tau = |vector| / c iterated until it changes by less than 1e-13 d (about 10 ns;
// three or four iterations for bodies within a few hundred au), at most 10 times. Emission times before the
// ephemeris begins are clamped to its start.
struct LightTimeSolution {
    Vec3 relative;
    double tau_days = 0.0;
    int iterations = 0;
    bool converged = false;
};
LightTimeSolution solve_light_time(const Ephemeris& eph, std::size_t target, double t, const Vec3& observer_position);

// Direction of `target` seen from `observer` at time t (both from the ephemeris).
Apparent apparent(const Ephemeris& eph, const ObserverFrame& frame, std::size_t observer, std::size_t target, double t,
                  LightTime light_time = LightTime::corrected);

// Elongation of the target from the star (angle star-observer-target), radians.
double elongation(const Ephemeris& eph, std::size_t observer, std::size_t target, double t);

// Great-circle angle between two directions (Vincenty's formula for the sphere), radians.
double separation(double lon1, double lat1, double lon2, double lat2);

}  // namespace wayward
