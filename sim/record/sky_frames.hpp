// Time scales and the ICRS for records brought from outside: calendar and Julian dates in UTC, TT or TDB read
// into TDB Julian dates, right ascension and declination (degrees or sexagesimal) into the reference frame a
// record is fitted in, the ecliptic and equinox of J2000.0 (IAU 2006), and back. The arithmetic is ERFA's
// (Debian's liberfa-dev); only the text parsing is ours.
// Units: days (Julian dates), degrees and arcsec at the interface, radians inside.
#pragma once

#include <optional>
#include <string>

#include <Eigen/Core>

#include "sim/physics/geometry.hpp"

namespace wayward {

enum class TimeScale { utc, tt, tdb };
// "UTC", "TT" or "TDB" (any case); nullopt otherwise.
std::optional<TimeScale> time_scale_from(const std::string& text);
const char* to_string(TimeScale s);

// A Julian date in two parts (whole + fraction), so that differences keep their microseconds.
struct JulianDate {
    double whole = 0.0;
    double fraction = 0.0;
    double value() const { return whole + fraction; }
};
inline double days_between(const JulianDate& later, const JulianDate& earlier) {
    return (later.whole - earlier.whole) + (later.fraction - earlier.fraction);
}

// A time as text in `scale`: a Julian date ("2451545.0") or an ISO 8601 calendar date "YYYY-MM-DD", optionally
// with "THH:MM", "THH:MM:SS" or "THH:MM:SS.sss" (a space may stand for the T). Returns the TDB Julian date.
// UTC needs the leap-second table, which starts in 1960: earlier UTC times are refused. TDB - TT is taken at
// the geocentre (ERFA eraDtdb with no site), within 2 microseconds of any site's value.
// Throws std::invalid_argument with a one-line reason (callers add file, line and field).
JulianDate tdb_from_time_text(const std::string& text, TimeScale scale);
// ISO calendar text of a TDB Julian date ("2031-06-01T00:00:00.000").
std::string iso_calendar_tdb(const JulianDate& tdb);
// A TDB Julian date as a Julian epoch (2000.0 + (JD - 2451545) / 365.25), the years the program counts in.
double julian_epoch(const JulianDate& tdb);
JulianDate jd_from_julian_epoch(double year);

// Right ascension: degrees in [0, 360), or sexagesimal hours "HH:MM:SS.sss" (or "HH MM SS.sss").
// Declination: degrees in [-90, 90], or sexagesimal "+DD:MM:SS.ss". Results in degrees.
// Throw std::invalid_argument with a one-line reason.
double parse_right_ascension(const std::string& text);
double parse_declination(const std::string& text);
std::string sexagesimal_ra(double ra_deg);    // "HHhMMmSS.SSs"
std::string sexagesimal_dec(double dec_deg);  // "+DDdMM'SS.S\""

// ICRS axes -> the ecliptic and equinox of J2000.0 (ERFA eraEcm06 at J2000.0 TT; includes the frame bias).
const Eigen::Matrix3d& icrs_to_ecliptic_j2000();

// A direction with its two standard deviations along the local east and north of its frame.
struct FramedSky {
    double lon_deg = 0.0, lat_deg = 0.0;
    std::optional<double> sigma_east_arcsec, sigma_north_arcsec;
};
// The direction, and its error ellipse, in another frame: `rotation` takes vectors from the first frame's axes
// to the second's. The two sigmas are the square roots of the rotated covariance's diagonal: exact when they
// are equal (the common case); otherwise the correlation the rotation brings (by the angle between the two
// frames' north directions there) is dropped, since an observation carries no correlation term.
FramedSky rotate_sky(const FramedSky& sky, const Eigen::Matrix3d& rotation);
// The 2 x 2 matrix taking small offsets (east, north) at (lon, lat) of the first frame into offsets (east, north)
// of the second: a rotation by the angle between the two frames' north directions there. A covariance C of
// the first frame's offsets is J C J^T in the second.
Eigen::Matrix2d local_offsets_rotation(double lon_deg, double lat_deg, const Eigen::Matrix3d& rotation);

}  // namespace wayward
