// Altitude, airmass, darkness and the pointing rules. See visibility.hpp for the methods and sources.
#include "sim/search/visibility.hpp"

#include <cmath>
#include <limits>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"
#include "sim/physics/elements.hpp"

namespace wayward {

Horizon horizon_from_hour_angle(double hour_angle, double declination, double latitude) {
    Horizon h;
    const double sin_alt = std::sin(latitude) * std::sin(declination) +
                           std::cos(latitude) * std::cos(declination) * std::cos(hour_angle);
    h.altitude = std::asin(std::clamp(sin_alt, -1.0, 1.0));
    // atan2 form of Meeus (13.5): the quadrant follows from the signs of numerator and denominator.
    h.azimuth = wrap_two_pi(std::atan2(std::sin(hour_angle), std::cos(hour_angle) * std::sin(latitude) -
                                                                 std::tan(declination) * std::cos(latitude)));
    return h;
}

double airmass(double altitude) {
    if (altitude <= 0.0) return std::numeric_limits<double>::infinity();
    const double z_deg = 90.0 - altitude / deg;
    return 1.0 / (std::cos(z_deg * deg) + 0.50572 * std::pow(96.07995 - z_deg, -1.6364));
}

Site make_site(const Telescope& tel, double elongation_limit_deg) {
    Site s;
    s.latitude = tel.site_latitude_deg * deg;
    s.axial_tilt = tel.axial_tilt_deg * deg;
    s.rotation_period_days = tel.rotation_period_hours / 24.0;
    s.min_altitude = tel.min_altitude_deg * deg;
    s.dark_depression = tel.dark_depression_deg * deg;
    s.elongation_limit = elongation_limit_deg * deg;
    return s;
}

void equatorial_of(const Site& site, const Vec3& d, double& ra, double& dec) {
    // Rotate the frame about x by the tilt, so that z becomes the planet's spin axis.
    const double c = std::cos(site.axial_tilt), s = std::sin(site.axial_tilt);
    const Vec3 u = d.normalized();
    const double x = u.x(), y = c * u.y() - s * u.z(), z = s * u.y() + c * u.z();
    ra = wrap_two_pi(std::atan2(y, x));
    dec = std::asin(std::clamp(z, -1.0, 1.0));
}

double hour_angle(const Site& site, const Vec3& direction, double t_days) {
    double ra = 0.0, dec = 0.0;
    equatorial_of(site, direction, ra, dec);
    const double sidereal = two_pi * std::fmod(t_days / site.rotation_period_days, 1.0);
    return wrap_two_pi(sidereal - ra);
}

double altitude_of(const Site& site, const Vec3& direction, double t_days) {
    double ra = 0.0, dec = 0.0;
    equatorial_of(site, direction, ra, dec);
    const double sidereal = two_pi * std::fmod(t_days / site.rotation_period_days, 1.0);
    return horizon_from_hour_angle(sidereal - ra, dec, site.latitude).altitude;
}

PointingCheck check_pointing(const Site& site, const ObserverPath& path, const Vec3& direction, double t_days) {
    PointingCheck c;
    const Vec3 star = -path(t_days);
    c.elongation = std::acos(std::clamp(star.normalized().dot(direction.normalized()), -1.0, 1.0));
    c.star_altitude = altitude_of(site, star, t_days);
    c.altitude = altitude_of(site, direction, t_days);
    c.airmass = airmass(c.altitude);
    // The star first: no pointing is ever planned near it, whatever the hour.
    if (c.elongation < site.elongation_limit) c.outcome = Pointing::too_near_star;
    else if (c.star_altitude > -site.dark_depression) c.outcome = Pointing::daylight;
    else if (c.altitude < site.min_altitude) c.outcome = Pointing::too_low;
    return c;
}

std::vector<Night> nights_from(const Site& site, const ObserverPath& path, double start_days, int count, double step_minutes) {
    const double step = step_minutes / 1440.0;
    // Local noon: the star's hour angle passes through zero (from 2 pi - to 0 +).
    // A planet turning once per orbit (or nearly) never brings the star across the meridian: no nights at all.
    const int max_steps = static_cast<int>(std::ceil(100.0 * 1440.0 / step_minutes));  // 100 days
    const auto no_noon = [] {
        throw InputError("", 0, "telescope.rotation_period_hours",
                         "the star does not cross the site's meridian within 100 days: no nights to search");
    };
    double t = start_days;
    double prev = hour_angle(site, -path(t), t);
    for (int k = 0;; ++k) {
        if (k == max_steps) no_noon();
        const double h = hour_angle(site, -path(t + step), t + step);
        t += step;
        if (h < prev && prev - h > pi) break;
        prev = h;
    }
    std::vector<Night> nights;
    for (int n = 0; n < count; ++n) {
        Night night;
        night.index = n + 1;
        night.start_days = t;
        // The next noon.
        double u = t + step;
        prev = hour_angle(site, -path(u), u);
        double best_len = 0.0, run_start = -1.0;
        night.dark_start_days = night.dark_end_days = t;
        for (int k = 0;; ++k) {
            if (k == max_steps) no_noon();
            const Vec3 star = -path(u);
            const bool dark = altitude_of(site, star, u) < -site.dark_depression;
            if (dark && run_start < 0.0) run_start = u;
            if (!dark && run_start >= 0.0) {
                if (u - run_start > best_len) { best_len = u - run_start; night.dark_start_days = run_start; night.dark_end_days = u; }
                run_start = -1.0;
            }
            const double h = hour_angle(site, star, u + step);
            const bool noon = h < prev && prev - h > pi;
            prev = h;
            u += step;
            if (noon) break;
        }
        if (run_start >= 0.0 && u - run_start > best_len) { night.dark_start_days = run_start; night.dark_end_days = u; }
        night.end_days = u;
        nights.push_back(night);
        t = u;
    }
    return nights;
}

double observable_hours(const Site& site, const ObserverPath& path, const Night& night, const Vec3& direction, double step_minutes) {
    const double step = step_minutes / 1440.0;
    double hours = 0.0;
    for (double t = night.dark_start_days + 0.5 * step; t < night.dark_end_days; t += step)
        if (check_pointing(site, path, direction, t).outcome == Pointing::ok) hours += step * 24.0;
    return hours;
}

}  // namespace wayward
