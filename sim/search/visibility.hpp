// When and how well a field can be observed from the site: the planet's rotation and axial tilt turn a direction
// in the observer's frame into hour angle and declination; standard spherical astronomy gives altitude and
// azimuth (Meeus, Astronomical Algorithms, 2nd ed., ch. 13); the airmass is sec z refined at large zenith
// distances by Kasten & Young (1989, Applied Optics 28, 4735); a night is dark while the star is more than the
// telescope's depression below the horizon (18 deg: astronomical twilight, common practice). A pointing is
// allowed only in darkness, above the minimum altitude and at least the elongation limit from the star.
// The observer's path is supplied by the caller (the team's own Kepler orbit here; the truth in the night
// simulation). Units: radians and days inside; names say otherwise.
#pragma once

#include <functional>
#include <vector>

#include "sim/exercise/exercise.hpp"
#include "sim/exercise/observer_path.hpp"
#include "sim/exercise/telescope.hpp"
#include "sim/physics/geometry.hpp"

namespace wayward {

struct Horizon {
    double altitude = 0.0;  // radians
    double azimuth = 0.0;   // radians, from the south towards the west (Meeus's convention)
};
// sin h = sin phi sin delta + cos phi cos delta cos H; tan A = sin H / (cos H sin phi - tan delta cos phi).
Horizon horizon_from_hour_angle(double hour_angle, double declination, double latitude);

// Relative airmass at a true altitude (radians): Kasten & Young (1989),
// X = 1 / (cos z + 0.50572 (96.07995 deg - z)^-1.6364) with z in degrees; infinite below the horizon.
double airmass(double altitude);

// The site: the planet's equator tilted by the axial tilt about the frame's x axis, turning once per sidereal
// rotation period (sidereal angle 0 at day 0; the site's longitude on the planet is absorbed there).
struct Site {
    double latitude = 0.0;              // radians
    double axial_tilt = 0.0;            // radians
    double rotation_period_days = 1.0;  // sidereal
    double min_altitude = 0.0;          // radians
    double dark_depression = 0.0;       // radians
    double elongation_limit = 0.0;      // radians
};
Site make_site(const Telescope& tel, double elongation_limit_deg);

// Right ascension and declination (radians) of a direction in the observer's frame.
void equatorial_of(const Site& site, const Vec3& direction, double& ra, double& dec);
// Hour angle of a direction at day t.
double hour_angle(const Site& site, const Vec3& direction, double t_days);
// Altitude of a direction at day t.
double altitude_of(const Site& site, const Vec3& direction, double t_days);

enum class Pointing { ok, daylight, too_low, too_near_star };
struct PointingCheck {
    Pointing outcome = Pointing::ok;
    double altitude = 0.0, airmass = 0.0, elongation = 0.0, star_altitude = 0.0;  // radians; airmass plain
};
// Whether a direction (observer frame, unit vector) may be observed at day t.
PointingCheck check_pointing(const Site& site, const ObserverPath& path, const Vec3& direction, double t_days);

struct Night {
    int index = 0;
    double start_days = 0.0, end_days = 0.0;  // local noon to local noon
    double dark_start_days = 0.0, dark_end_days = 0.0;  // the longest dark stretch (equal: no darkness)
    double dark_hours() const { return (dark_end_days - dark_start_days) * 24.0; }
};
// `count` nights from the first local noon at or after start_days; darkness found to `step_minutes`.
std::vector<Night> nights_from(const Site& site, const ObserverPath& path, double start_days, int count,
                               double step_minutes = 2.0);

// Hours in the night's darkness during which the direction is observable (to the step).
double observable_hours(const Site& site, const ObserverPath& path, const Night& night, const Vec3& direction,
                        double step_minutes = 5.0);

}  // namespace wayward
