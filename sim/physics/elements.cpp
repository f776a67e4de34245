// Kepler's equation and elements <-> state conversions. See elements.hpp for the methods used.
#include "sim/physics/elements.hpp"

#include <cmath>
#include <limits>
#include <stdexcept>

#include "sim/base/units.hpp"

namespace wayward {

double wrap_two_pi(double angle) {
    double r = std::fmod(angle, two_pi);
    if (r < 0.0) r += two_pi;
    if (r >= two_pi) r = 0.0;
    return r;
}

double wrap_pi(double angle) {
    double r = wrap_two_pi(angle);
    return r > pi ? r - two_pi : r;
}

double solve_kepler(double mean_anomaly, double e) {
    if (!(e >= 0.0 && e < 1.0)) throw std::invalid_argument("solve_kepler: eccentricity must be in [0, 1)");
    if (!std::isfinite(mean_anomaly)) throw std::invalid_argument("solve_kepler: mean anomaly is not finite");
    // Work with M in (-pi, pi] and add the whole turns back at the end.
    const double m = wrap_pi(mean_anomaly);
    const double turns = mean_anomaly - m;
    if (e == 0.0) return mean_anomaly;
    double E = m + 0.85 * e * (std::sin(m) >= 0.0 ? 1.0 : -1.0);  // Danby (1987) starter
    // Danby & Burkardt (1983) quartic correction; converges in 2-4 iterations for all e < 1.
    for (int iter = 0; iter < 20; ++iter) {
        const double se = e * std::sin(E), ce = e * std::cos(E);
        const double f = E - se - m, f1 = 1.0 - ce, f2 = se, f3 = ce;
        const double d1 = -f / f1;
        const double d2 = -f / (f1 + 0.5 * d1 * f2);
        const double d3 = -f / (f1 + 0.5 * d2 * f2 + d2 * d2 * f3 / 6.0);
        E += d3;
        if (std::abs(d3) < 4.0 * std::numeric_limits<double>::epsilon() * (1.0 + std::abs(E))) return E + turns;
    }
    // Fallback: f(E) = E - e sin E - m is monotone on [-pi, pi]; bisection cannot fail.
    double lo = -pi, hi = pi;
    for (int iter = 0; iter < 200 && hi - lo > 1e-16; ++iter) {
        const double mid = 0.5 * (lo + hi);
        if (mid - e * std::sin(mid) - m < 0.0) lo = mid; else hi = mid;
    }
    return 0.5 * (lo + hi) + turns;
}

double solve_kepler_hyperbolic(double mean_anomaly, double e) {
    if (!(e > 1.0)) throw std::invalid_argument("solve_kepler_hyperbolic: eccentricity must exceed 1");
    if (!std::isfinite(mean_anomaly)) throw std::invalid_argument("solve_kepler_hyperbolic: mean anomaly is not finite");
    const double m = mean_anomaly;
    // Starter: asinh(M/e) is exact for large |H| to leading order and safe near 0.
    double H = std::asinh(m / e);
    for (int iter = 0; iter < 100; ++iter) {
        const double f = e * std::sinh(H) - H - m;
        const double f1 = e * std::cosh(H) - 1.0;
        const double dH = -f / f1;
        H += dH;
        if (std::abs(dH) < 4.0 * std::numeric_limits<double>::epsilon() * (1.0 + std::abs(H))) break;
    }
    return H;
}

double true_from_eccentric(double E, double e) {
    return 2.0 * std::atan2(std::sqrt(1.0 + e) * std::sin(0.5 * E), std::sqrt(1.0 - e) * std::cos(0.5 * E));
}

double mean_motion(double a, double mu) { return std::sqrt(mu / std::pow(std::abs(a), 3)); }
double orbital_period(double a, double mu) { return two_pi / mean_motion(a, mu); }

namespace {
// Rotation from the perifocal frame (x to periapsis, z along the angular momentum) to the reference frame.
Eigen::Matrix3d perifocal_to_reference(double node, double inc, double argp) {
    const double cO = std::cos(node), sO = std::sin(node);
    const double ci = std::cos(inc), si = std::sin(inc);
    const double cw = std::cos(argp), sw = std::sin(argp);
    Eigen::Matrix3d r;
    r << cO * cw - sO * sw * ci, -cO * sw - sO * cw * ci, sO * si,
         sO * cw + cO * sw * ci, -sO * sw + cO * cw * ci, -cO * si,
         sw * si, cw * si, ci;
    return r;
}
}  // namespace

StateVector elements_to_state(const Elements& el, double mu) {
    const double a = el.semi_major_axis, e = el.eccentricity;
    Vec3 r_pf, v_pf;
    if (e < 1.0) {
        if (!(a > 0.0)) throw std::invalid_argument("elements_to_state: a bound orbit needs a > 0");
        const double E = solve_kepler(el.mean_anomaly, e);
        const double cE = std::cos(E), sE = std::sin(E);
        const double b = a * std::sqrt((1.0 - e) * (1.0 + e));
        const double n = mean_motion(a, mu);
        const double rdot_factor = n / (1.0 - e * cE);
        r_pf = Vec3(a * (cE - e), b * sE, 0.0);
        v_pf = Vec3(-a * sE * rdot_factor, b * cE * rdot_factor, 0.0);
    } else if (e > 1.0) {
        if (!(a < 0.0)) throw std::invalid_argument("elements_to_state: a hyperbolic orbit needs a < 0");
        const double H = solve_kepler_hyperbolic(el.mean_anomaly, e);
        const double cH = std::cosh(H), sH = std::sinh(H);
        const double aa = -a;
        const double b = aa * std::sqrt((e - 1.0) * (e + 1.0));
        const double n = mean_motion(a, mu);
        const double f = n / (e * cH - 1.0);
        r_pf = Vec3(aa * (e - cH), b * sH, 0.0);
        v_pf = Vec3(-aa * sH * f, b * cH * f, 0.0);
    } else {
        throw std::invalid_argument("elements_to_state: parabolic orbits (e = 1) are not supported");
    }
    const Eigen::Matrix3d rot = perifocal_to_reference(el.ascending_node, el.inclination, el.arg_periapsis);
    return {rot * r_pf, rot * v_pf};
}

Elements state_to_elements(const StateVector& s, double mu) {
    const Vec3& r = s.position;
    const Vec3& v = s.velocity;
    const double rn = r.norm();
    const double v2 = v.squaredNorm();
    const Vec3 h = r.cross(v);
    const double hn = h.norm();
    if (!(rn > 0.0) || !(hn > 0.0)) throw std::invalid_argument("state_to_elements: degenerate (radial or zero) state");
    const Vec3 e_vec = ((v2 - mu / rn) * r - r.dot(v) * v) / mu;
    const double e = e_vec.norm();
    const double energy = 0.5 * v2 - mu / rn;

    Elements el;
    el.eccentricity = e;
    el.semi_major_axis = -mu / (2.0 * energy);
    el.inclination = std::atan2(std::hypot(h.x(), h.y()), h.z());

    // Node vector n = z x h. "Equatorial" when it is tiny relative to |h|.
    const Vec3 nvec(-h.y(), h.x(), 0.0);
    const double nn = nvec.norm();
    const double tiny = 1e-13;
    const bool equatorial = nn < tiny * hn;
    const bool circular = e < tiny;

    // In-plane basis: p along the node (or x axis for equatorial orbits), q = h_hat x p.
    const Vec3 h_hat = h / hn;
    Vec3 p_hat = equatorial ? Vec3(1.0, 0.0, 0.0) : Vec3(nvec / nn);
    if (equatorial) {
        // Project x onto the orbit plane (for retrograde equatorial orbits h_hat = -z; x stays in plane).
        p_hat = (p_hat - p_hat.dot(h_hat) * h_hat).normalized();
    }
    const Vec3 q_hat = h_hat.cross(p_hat);
    el.ascending_node = equatorial ? 0.0 : wrap_two_pi(std::atan2(nvec.y(), nvec.x()));

    // Argument of latitude (angle from p to r) and argument of periapsis (angle from p to e_vec).
    const double u = std::atan2(r.dot(q_hat), r.dot(p_hat));
    double argp = circular ? 0.0 : std::atan2(e_vec.dot(q_hat), e_vec.dot(p_hat));
    el.arg_periapsis = wrap_two_pi(argp);
    const double nu = u - argp;  // true anomaly

    if (e < 1.0) {
        const double E = 2.0 * std::atan2(std::sqrt(1.0 - e) * std::sin(0.5 * nu), std::sqrt(1.0 + e) * std::cos(0.5 * nu));
        el.mean_anomaly = wrap_two_pi(E - e * std::sin(E));
    } else if (e > 1.0) {
        const double H = 2.0 * std::atanh(std::sqrt((e - 1.0) / (e + 1.0)) * std::tan(0.5 * nu));
        el.mean_anomaly = e * std::sinh(H) - H;
    } else {
        el.mean_anomaly = 0.0;
    }
    return el;
}

}  // namespace wayward
