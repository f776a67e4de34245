#include "sim/record/sky_frames.hpp"

#include <cctype>
#include <cmath>
#include <cstdio>
#include <regex>
#include <stdexcept>

#include <erfa.h>

#include "sim/base/format.hpp"
#include "sim/base/units.hpp"

namespace wayward {

using detail::fmt;

namespace {
// printf into a string, for the few fields below with more than one number.
template <typename... T>
std::string printf_text(const char* format, T... values) {
    char buf[96];
    std::snprintf(buf, sizeof buf, format, values...);
    return buf;
}

std::string trimmed(const std::string& text) {
    const auto a = text.find_first_not_of(" \t");
    if (a == std::string::npos) return "";
    const auto b = text.find_last_not_of(" \t");
    return text.substr(a, b - a + 1);
}

// The whole text as one finite number, or nullopt.
std::optional<double> whole_number(const std::string& text) {
    if (text.empty()) return std::nullopt;
    char* end = nullptr;
    const double v = std::strtod(text.c_str(), &end);
    if (end == text.c_str() || *end != '\0' || !std::isfinite(v)) return std::nullopt;
    return v;
}

// TT (two parts) -> TDB, the geocentric TDB - TT of ERFA's eraDtdb (Fairhead & Bretagnon series).
JulianDate tdb_from_tt(double tt1, double tt2) {
    const double dtr = eraDtdb(tt1, tt2, 0.0, 0.0, 0.0, 0.0);
    JulianDate out;
    eraTttdb(tt1, tt2, dtr, &out.whole, &out.fraction);
    return out;
}

JulianDate tdb_from_two_part(double d1, double d2, TimeScale scale) {
    if (scale == TimeScale::tdb) return {d1, d2};
    double tt1 = d1, tt2 = d2;
    if (scale == TimeScale::utc) {
        int iy, im, id;
        double fd;
        if (eraJd2cal(d1, d2, &iy, &im, &id, &fd) != 0) throw std::invalid_argument("is not a date ERFA can convert");
        if (iy < 1960) throw std::invalid_argument("UTC is not defined before 1960 (no leap-second table): give such times in TT or TDB");
        double tai1, tai2;
        // Status 1 is a "dubious year": after the last leap second ERFA knows, whose offset it keeps using.
        if (eraUtctai(d1, d2, &tai1, &tai2) < 0) throw std::invalid_argument("is not a UTC date ERFA can convert");
        eraTaitt(tai1, tai2, &tt1, &tt2);
    }
    return tdb_from_tt(tt1, tt2);
}

const std::regex& iso_pattern() {
    static const std::regex r(R"(^(\d{4})-(\d{2})-(\d{2})(?:[T ](\d{2}):(\d{2})(?::(\d{2}(?:\.\d*)?))?)?$)");
    return r;
}
}  // namespace

std::optional<TimeScale> time_scale_from(const std::string& text) {
    std::string t;
    for (char c : text) t += static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
    if (t == "UTC") return TimeScale::utc;
    if (t == "TT") return TimeScale::tt;
    if (t == "TDB") return TimeScale::tdb;
    return std::nullopt;
}

const char* to_string(TimeScale s) {
    switch (s) {
        case TimeScale::utc: return "UTC";
        case TimeScale::tt: return "TT";
        case TimeScale::tdb: return "TDB";
    }
    return "?";
}

JulianDate tdb_from_time_text(const std::string& raw, TimeScale scale) {
    const std::string text = trimmed(raw);
    if (text.empty()) throw std::invalid_argument("is empty");
    if (const auto jd = whole_number(text)) {
        // Julian dates of years 1 to 9999: anything else is not a date a record holds.
        if (!(*jd >= 1721425.5 && *jd < 5373484.5)) throw std::invalid_argument("\"" + text + "\" is not a Julian date of the years 1 to 9999");
        const double whole = std::floor(*jd - 0.5) + 0.5;
        return tdb_from_two_part(whole, *jd - whole, scale);
    }
    std::smatch m;
    if (!std::regex_match(text, m, iso_pattern()))
        throw std::invalid_argument("\"" + text + "\" is neither a Julian date nor an ISO date (YYYY-MM-DD or YYYY-MM-DDTHH:MM:SS.sss)");
    const int iy = std::stoi(m[1]), im = std::stoi(m[2]), id = std::stoi(m[3]);
    const int ih = m[4].matched ? std::stoi(m[4]) : 0, imin = m[5].matched ? std::stoi(m[5]) : 0;
    const double sec = m[6].matched ? std::stod(m[6]) : 0.0;
    if (scale == TimeScale::utc && iy < 1960)
        throw std::invalid_argument("UTC is not defined before 1960 (no leap-second table): give such times in TT or TDB");
    double d1, d2;
    // eraDtf2d checks the fields (and, in UTC, allows second 60 only on a leap-second day).
    const int status = eraDtf2d(scale == TimeScale::utc ? "UTC" : "TT", iy, im, id, ih, imin, sec, &d1, &d2);
    switch (status) {
        case -1: throw std::invalid_argument("\"" + text + "\": the year is out of range");
        case -2: throw std::invalid_argument("\"" + text + "\": the month must be 01 to 12");
        case -3: throw std::invalid_argument("\"" + text + "\": the day is not in that month");
        case -4: throw std::invalid_argument("\"" + text + "\": the hour must be 00 to 23");
        case -5: throw std::invalid_argument("\"" + text + "\": the minute must be 00 to 59");
        case -6: throw std::invalid_argument("\"" + text + "\": the second must be below 60 (61 on a UTC leap-second day)");
        default: break;
    }
    if (status == 2 || status == 3) throw std::invalid_argument("\"" + text + "\": second 60 on a day with no leap second");
    // eraDtf2d's two parts are the day and its fraction (a quasi-JD in UTC).
    return tdb_from_two_part(d1, d2, scale);
}

std::string iso_calendar_tdb(const JulianDate& tdb) {
    int iy, im, id, hmsf[4];
    if (eraD2dtf("TDB", 3, tdb.whole, tdb.fraction, &iy, &im, &id, hmsf) != 0) return fmt("JD %.6f", tdb.value());
    return printf_text("%04d-%02d-%02dT%02d:%02d:%02d.%03d", iy, im, id, hmsf[0], hmsf[1], hmsf[2], hmsf[3]);
}

double julian_epoch(const JulianDate& tdb) { return eraEpj(tdb.whole, tdb.fraction); }

JulianDate jd_from_julian_epoch(double year) {
    double djm0, djm;
    eraEpj2jd(year, &djm0, &djm);
    // Whole days at 0h (x.5), so the fraction is the time of day.
    const double jd = djm0 + djm;
    const double whole = std::floor(jd - 0.5) + 0.5;
    return {whole, (djm0 - whole) + djm};
}

namespace {
const std::regex& sexagesimal_pattern() {
    static const std::regex r(R"(^([+-]?)(\d{1,3})[: ](\d{1,2})[: ](\d{1,2}(?:\.\d*)?)$)");
    return r;
}
}  // namespace

double parse_right_ascension(const std::string& raw) {
    const std::string text = trimmed(raw);
    if (text.empty()) throw std::invalid_argument("is empty");
    if (const auto v = whole_number(text)) {
        if (!(*v >= 0.0 && *v < 360.0)) throw std::invalid_argument(fmt("%.10g", *v) + " deg is outside [0, 360)");
        return *v;
    }
    std::smatch m;
    if (!std::regex_match(text, m, sexagesimal_pattern()) || m[1].length() > 0)
        throw std::invalid_argument("\"" + text + "\" is neither degrees nor hours as HH:MM:SS.sss");
    double rad = 0.0;
    switch (eraTf2a('+', std::stoi(m[2]), std::stoi(m[3]), std::stod(m[4]), &rad)) {
        case 1: throw std::invalid_argument("\"" + text + "\": the hours must be 0 to 23");
        case 2: throw std::invalid_argument("\"" + text + "\": the minutes must be 0 to 59");
        case 3: throw std::invalid_argument("\"" + text + "\": the seconds must be below 60");
        default: break;
    }
    return rad / deg;
}

double parse_declination(const std::string& raw) {
    const std::string text = trimmed(raw);
    if (text.empty()) throw std::invalid_argument("is empty");
    double v = 0.0;
    if (const auto d = whole_number(text)) {
        v = *d;
    } else {
        std::smatch m;
        if (!std::regex_match(text, m, sexagesimal_pattern()))
            throw std::invalid_argument("\"" + text + "\" is neither degrees nor +DD:MM:SS.ss");
        double rad = 0.0;
        switch (eraAf2a(m[1] == "-" ? '-' : '+', std::stoi(m[2]), std::stoi(m[3]), std::stod(m[4]), &rad)) {
            case 2: throw std::invalid_argument("\"" + text + "\": the arcminutes must be 0 to 59");
            case 3: throw std::invalid_argument("\"" + text + "\": the arcseconds must be below 60");
            default: break;
        }
        v = rad / deg;
    }
    if (!(v >= -90.0 && v <= 90.0)) throw std::invalid_argument(fmt("%.10g", v) + " deg is outside [-90, 90]");
    return v;
}

std::string sexagesimal_ra(double ra_deg) {
    char sign;
    int f[4];
    eraA2tf(3, eraAnp(ra_deg * deg), &sign, f);
    return printf_text("%02d:%02d:%02d.%03d", f[0], f[1], f[2], f[3]);
}

std::string sexagesimal_dec(double dec_deg) {
    char sign;
    int f[4];
    eraA2af(2, dec_deg * deg, &sign, f);
    return printf_text("%c%02d:%02d:%02d.%02d", sign, f[0], f[1], f[2], f[3]);
}

const Eigen::Matrix3d& icrs_to_ecliptic_j2000() {
    static const Eigen::Matrix3d m = [] {
        double rm[3][3];
        eraEcm06(jd_j2000, 0.0, rm);
        Eigen::Matrix3d out;
        for (int i = 0; i < 3; ++i)
            for (int j = 0; j < 3; ++j) out(i, j) = rm[i][j];
        return out;
    }();
    return m;
}

namespace {
Vec3 east_at(double lon) { return {-std::sin(lon), std::cos(lon), 0.0}; }
Vec3 north_at(double lon, double lat) { return {-std::sin(lat) * std::cos(lon), -std::sin(lat) * std::sin(lon), std::cos(lat)}; }
}  // namespace

Eigen::Matrix2d local_offsets_rotation(double lon_deg, double lat_deg, const Eigen::Matrix3d& rotation) {
    const double lon = lon_deg * deg, lat = lat_deg * deg;
    const Vec3 east = rotation * east_at(lon), north = rotation * north_at(lon, lat);
    const SkyPosition to = to_sky(rotation * unit_vector(lon, lat));
    const Vec3 east2 = east_at(to.lon), north2 = north_at(to.lon, to.lat);
    Eigen::Matrix2d j;
    j << east2.dot(east), east2.dot(north), north2.dot(east), north2.dot(north);
    return j;
}

FramedSky rotate_sky(const FramedSky& sky, const Eigen::Matrix3d& rotation) {
    const SkyPosition to = to_sky(rotation * unit_vector(sky.lon_deg * deg, sky.lat_deg * deg));
    FramedSky out;
    out.lon_deg = to.lon / deg;
    out.lat_deg = to.lat / deg;
    if (sky.sigma_east_arcsec && sky.sigma_north_arcsec) {
        const Eigen::Matrix2d j = local_offsets_rotation(sky.lon_deg, sky.lat_deg, rotation);
        const Eigen::Matrix2d cov = j * Eigen::Vector2d(*sky.sigma_east_arcsec * *sky.sigma_east_arcsec,
                                                        *sky.sigma_north_arcsec * *sky.sigma_north_arcsec).asDiagonal() * j.transpose();
        out.sigma_east_arcsec = std::sqrt(cov(0, 0));
        out.sigma_north_arcsec = std::sqrt(cov(1, 1));
    }
    return out;
}

}  // namespace wayward
