// Observer frame, light-time iteration and great-circle separations. See geometry.hpp.
#include "sim/physics/geometry.hpp"

#include <cmath>

#include "sim/base/units.hpp"

namespace wayward {

ObserverFrame observer_frame(const System& s, std::size_t observer) {
    const StateVector h = heliocentric(s, observer);
    const Vec3 z = h.position.cross(h.velocity).normalized();
    Vec3 x = Vec3::UnitZ().cross(z);
    if (x.norm() < 1e-12) x = Vec3::UnitX(); else x.normalize();
    const Vec3 y = z.cross(x);
    ObserverFrame f;
    f.rotation.row(0) = x.transpose();
    f.rotation.row(1) = y.transpose();
    f.rotation.row(2) = z.transpose();
    return f;
}

SkyPosition to_sky(const Vec3& v) {
    SkyPosition p;
    p.distance = v.norm();
    p.lon = wrap_two_pi(std::atan2(v.y(), v.x()));
    p.lat = std::atan2(v.z(), std::hypot(v.x(), v.y()));  // = asin(z/r), stable near the poles
    return p;
}

Vec3 unit_vector(double lon, double lat) {
    return {std::cos(lat) * std::cos(lon), std::cos(lat) * std::sin(lon), std::sin(lat)};
}

LightTimeSolution solve_light_time(const Ephemeris& eph, std::size_t target, double t, const Vec3& observer_position) {
    LightTimeSolution l;
    l.relative = eph.position(target, t) - observer_position;
    l.tau_days = l.relative.norm() / c_au_per_day;
    for (l.iterations = 1; l.iterations <= 10; ++l.iterations) {
        const double t_emit = std::max(t - l.tau_days, eph.t_begin());
        l.relative = eph.position(target, t_emit) - observer_position;
        const double next = l.relative.norm() / c_au_per_day;
        const bool done = std::abs(next - l.tau_days) < 1e-13;
        l.tau_days = next;
        if (done) {
            l.converged = true;
            break;
        }
    }
    return l;
}

Apparent apparent(const Ephemeris& eph, const ObserverFrame& frame, std::size_t observer, std::size_t target, double t,
                  LightTime light_time) {
    const Vec3 obs = eph.position(observer, t);
    Apparent a;
    Vec3 rel = eph.position(target, t) - obs;
    if (light_time == LightTime::corrected) {
        const LightTimeSolution l = solve_light_time(eph, target, t, obs);
        rel = l.relative;
        a.light_time_days = l.tau_days;
        a.iterations = l.iterations;
        a.converged = l.converged;
    }
    a.sky = to_sky(frame.to_frame(rel));
    return a;
}

Vec3 equatorial_to_reference(const Vec3& v, double obliquity) {
    const double c = std::cos(obliquity), s = std::sin(obliquity);
    return {v.x(), c * v.y() + s * v.z(), -s * v.y() + c * v.z()};
}

double elongation(const Ephemeris& eph, std::size_t observer, std::size_t target, double t) {
    const Vec3 obs = eph.position(observer, t);
    const Vec3 to_star = eph.position(0, t) - obs;
    const Vec3 to_target = eph.position(target, t) - obs;
    return std::atan2(to_star.cross(to_target).norm(), to_star.dot(to_target));
}

double separation(double lon1, double lat1, double lon2, double lat2) {
    const double dlon = lon2 - lon1;
    const double c1 = std::cos(lat1), s1 = std::sin(lat1), c2 = std::cos(lat2), s2 = std::sin(lat2);
    const double num1 = c2 * std::sin(dlon);
    const double num2 = c1 * s2 - s1 * c2 * std::cos(dlon);
    const double den = s1 * s2 + c1 * c2 * std::cos(dlon);
    return std::atan2(std::hypot(num1, num2), den);
}

}  // namespace wayward
