// Osculating orbital elements, Kepler's equation, and the conversion between elements and state vectors.
// Kepler's equation: Newton-Raphson with Danby's (1987) starter E0 = M + 0.85 e sgn(sin M), higher-order
// corrections (Danby & Burkardt 1983), and a bisection fallback so it cannot fail to converge for e < 1.
// Units: au, day, radians; mu = G(M + m) in au^3/d^2.
#pragma once

#include <Eigen/Dense>

namespace wayward {

using Vec3 = Eigen::Vector3d;

struct StateVector {
    Vec3 position{Vec3::Zero()};  // au
    Vec3 velocity{Vec3::Zero()};  // au/d
};

// Classical osculating elements. For a hyperbolic orbit a < 0 and e > 1; mean_anomaly is then the
// hyperbolic mean anomaly. Angles in radians.
struct Elements {
    double semi_major_axis = 1.0;
    double eccentricity = 0.0;
    double inclination = 0.0;
    double ascending_node = 0.0;       // Omega
    double arg_periapsis = 0.0;        // omega
    double mean_anomaly = 0.0;         // M
};

// Eccentric anomaly E with M = E - e sin E, for 0 <= e < 1, any M (result in the branch of M's turn).
double solve_kepler(double mean_anomaly, double eccentricity);
// Hyperbolic anomaly H with M = e sinh H - H, for e > 1.
double solve_kepler_hyperbolic(double mean_anomaly, double eccentricity);

double true_from_eccentric(double eccentric_anomaly, double eccentricity);
double mean_motion(double semi_major_axis, double mu);      // rad/d, |a| used
double orbital_period(double semi_major_axis, double mu);   // d, elliptic only

StateVector elements_to_state(const Elements& el, double mu);
// Robust for circular (e ~ 0: arg_periapsis = 0, anomaly measured from the node) and equatorial
// (i ~ 0: ascending_node = 0, angles measured from the x axis) orbits: never NaN for a bound or unbound orbit.
Elements state_to_elements(const StateVector& s, double mu);

// Wrap an angle to [0, 2 pi).
double wrap_two_pi(double angle);
// Wrap an angle to (-pi, pi].
double wrap_pi(double angle);

}  // namespace wayward
