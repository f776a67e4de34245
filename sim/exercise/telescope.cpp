// The [telescope] table: reading with validation, and writing it back for the brief. See telescope.hpp.
#include "sim/exercise/telescope.hpp"

#include <cmath>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"

namespace wayward {

double Telescope::field_area_square_degrees() const {
    if (shape == FieldShape::square) return field_of_view_deg * field_of_view_deg;
    return pi * 0.25 * field_of_view_deg * field_of_view_deg;
}

namespace detail {

namespace {
// A number within [lo, hi] (open ends where asked); the message names the allowed range.
double ranged(TableReader& r, const std::string& key, double fallback, double lo, double hi, bool lo_open, bool hi_open,
              const std::string& what) {
    const double v = r.number_or(key, fallback);
    const bool ok = (lo_open ? v > lo : v >= lo) && (hi_open ? v < hi : v <= hi);
    if (!ok) r.fail(key, what);
    return v;
}
}  // namespace

Telescope read_telescope(TableReader& r) {
    Telescope t;
    const std::string shape = r.string("field_shape").value_or("square");
    if (shape == "square") t.shape = FieldShape::square;
    else if (shape == "circle") t.shape = FieldShape::circle;
    else r.fail("field_shape", "must be \"square\" or \"circle\" (got \"" + shape + "\")");
    t.field_of_view_deg = ranged(r, "field_of_view_deg", t.field_of_view_deg, 0.0, 10.0, true, false,
                                 "must be positive and at most 10 degrees");
    t.limiting_mag = ranged(r, "limiting_mag", t.limiting_mag, 0.0, 30.0, false, false, "must be in [0, 30]");
    t.detection_width_mag = ranged(r, "detection_width_mag", t.detection_width_mag, 0.0, 2.0, true, false,
                                   "must be positive and at most 2 magnitudes");
    t.detection_max = ranged(r, "detection_max", t.detection_max, 0.0, 1.0, true, false, "must be in (0, 1]");
    t.exposure_min = ranged(r, "exposure_min", t.exposure_min, 0.0, 600.0, true, false, "must be positive and at most 600 minutes");
    t.overhead_min = ranged(r, "overhead_min", t.overhead_min, 0.0, 600.0, false, false, "must be in [0, 600] minutes");
    t.site_latitude_deg = ranged(r, "site_latitude_deg", t.site_latitude_deg, -90.0, 90.0, false, false, "must be in [-90, 90] degrees");
    t.rotation_period_hours = ranged(r, "rotation_period_hours", t.rotation_period_hours, 1.0, 10000.0, false, false,
                                     "must be in [1, 10000] hours");
    t.axial_tilt_deg = ranged(r, "axial_tilt_deg", t.axial_tilt_deg, 0.0, 180.0, false, false, "must be in [0, 180] degrees");
    t.min_altitude_deg = ranged(r, "min_altitude_deg", t.min_altitude_deg, 0.0, 90.0, false, true, "must be in [0, 90) degrees");
    t.dark_depression_deg = ranged(r, "dark_depression_deg", t.dark_depression_deg, 0.0, 90.0, false, true,
                                   "must be in [0, 90) degrees");
    t.clear_fraction = ranged(r, "clear_fraction", t.clear_fraction, 0.0, 1.0, false, false, "must be in [0, 1]");
    t.weather_correlation = ranged(r, "weather_correlation", t.weather_correlation, 0.0, 1.0, false, true, "must be in [0, 1)");
    t.astrometric_error_arcsec = ranged(r, "astrometric_error_arcsec", t.astrometric_error_arcsec, 0.0, 60.0, true, false,
                                        "must be positive and at most 60 arcsec");
    t.extinction_mag_per_airmass = ranged(r, "extinction_mag_per_airmass", t.extinction_mag_per_airmass, 0.0, 2.0, false, false,
                                          "must be in [0, 2] magnitudes per airmass");
    t.chart_limit_mag = ranged(r, "chart_limit_mag", t.limiting_mag + 2.0, 0.0, 30.0, false, false, "must be in [0, 30]");
    r.finish();
    return t;
}

toml::table telescope_table(const Telescope& t) {
    toml::table x;
    x.insert("field_shape", t.shape == FieldShape::square ? "square" : "circle");
    x.insert("field_of_view_deg", t.field_of_view_deg);
    x.insert("limiting_mag", t.limiting_mag);
    x.insert("detection_width_mag", t.detection_width_mag);
    x.insert("detection_max", t.detection_max);
    x.insert("exposure_min", t.exposure_min);
    x.insert("overhead_min", t.overhead_min);
    x.insert("site_latitude_deg", t.site_latitude_deg);
    x.insert("rotation_period_hours", t.rotation_period_hours);
    x.insert("axial_tilt_deg", t.axial_tilt_deg);
    x.insert("min_altitude_deg", t.min_altitude_deg);
    x.insert("dark_depression_deg", t.dark_depression_deg);
    x.insert("clear_fraction", t.clear_fraction);
    x.insert("weather_correlation", t.weather_correlation);
    x.insert("astrometric_error_arcsec", t.astrometric_error_arcsec);
    x.insert("extinction_mag_per_airmass", t.extinction_mag_per_airmass);
    x.insert("chart_limit_mag", t.chart_limit_mag);
    return x;
}

}  // namespace detail

Telescope parse_telescope(const std::string& text, const std::string& file) {
    const toml::table root_t = detail::parse_toml(text, file);
    detail::TableReader root(root_t, file, "");
    const toml::table* t = root.table("telescope");
    if (!t) throw InputError(file, 1, "telescope", "the [telescope] table is missing");
    detail::TableReader r(*t, file, "telescope");
    const Telescope tel = detail::read_telescope(r);
    root.finish();
    return tel;
}

Telescope load_telescope(const std::string& path) { return parse_telescope(detail::read_text_file(path), path); }

}  // namespace wayward
