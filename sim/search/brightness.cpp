// Brightness and detection efficiency. See brightness.hpp for the methods and sources.
#include "sim/search/brightness.hpp"

#include <algorithm>
#include <cmath>

namespace wayward {

double absolute_magnitude(double diameter_km, double geometric_albedo) {
    return 5.0 * std::log10(1329.0 / (diameter_km * std::sqrt(geometric_albedo)));
}

double phase_angle(double r, double delta, double star_observer) {
    const double c = (r * r + delta * delta - star_observer * star_observer) / (2.0 * r * delta);
    return std::acos(std::clamp(c, -1.0, 1.0));
}

double apparent_magnitude(double h, double g, double r, double delta, double phase) {
    const double t = std::tan(0.5 * phase);
    const double phi1 = std::exp(-3.33 * std::pow(t, 0.63));
    const double phi2 = std::exp(-1.87 * std::pow(t, 1.22));
    return h + 5.0 * std::log10(r * delta) - 2.5 * std::log10((1.0 - g) * phi1 + g * phi2);
}

double limit_at_airmass(double zenith_limit_mag, double extinction, double airmass) {
    return zenith_limit_mag - extinction * (airmass - 1.0);
}

double detection_efficiency(double mag, double limit_mag, double width, double eta_max) {
    const double x = (mag - limit_mag) / width;
    if (x > 700.0) return 0.0;  // exp would overflow; the efficiency is zero to double precision
    return eta_max / (1.0 + std::exp(x));
}

}  // namespace wayward
