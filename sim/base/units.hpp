// Units, constants and time for Wayward.
// Base units: astronomical unit (au), day (d), solar mass. Angles in radians unless a name says _deg / _arcsec.
// Constants: Gaussian gravitational constant (IAU 1938/1976), au (IAU 2012 Resolution B2), c (SI exact).
#pragma once

#include <numbers>

namespace wayward {

inline constexpr double pi = std::numbers::pi;
inline constexpr double two_pi = 2.0 * std::numbers::pi;
inline constexpr double deg = pi / 180.0;           // one degree in radians
inline constexpr double arcsec = deg / 3600.0;      // one arcsecond in radians
inline constexpr double arcmin = deg / 60.0;        // one arcminute in radians

// Gaussian gravitational constant k; GM of a body of mass m (solar masses) is k^2 m in au^3/d^2.
inline constexpr double gauss_k = 0.01720209895;
inline constexpr double gauss_k2 = gauss_k * gauss_k;

inline constexpr double au_m = 149597870700.0;          // metres per au (exact)
inline constexpr double c_m_per_s = 299792458.0;        // exact
inline constexpr double seconds_per_day = 86400.0;
inline constexpr double c_au_per_day = c_m_per_s * seconds_per_day / au_m;  // 173.1446326742...
inline constexpr double julian_year_days = 365.25;
inline constexpr double jd_j2000 = 2451545.0;

// Mean obliquity of the ecliptic at J2000.0, IAU 2006: 84381.406 arcsec. Used only to turn
// equatorial state vectors into the reference plane when a scenario asks for that default.
inline constexpr double obliquity_j2000 = 84381.406 * arcsec;

constexpr double gm_from_mass(double mass_solar) { return gauss_k2 * mass_solar; }
constexpr double mass_from_gm(double gm) { return gm / gauss_k2; }

// Time is days after the scenario's epoch 0; shown as decimal years from the scenario's starting year.
constexpr double decimal_year(double epoch0_year, double days) { return epoch0_year + days / julian_year_days; }
constexpr double days_from_year(double epoch0_year, double year) { return (year - epoch0_year) * julian_year_days; }

}  // namespace wayward
