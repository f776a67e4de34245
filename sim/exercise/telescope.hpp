// The site and telescope a team searches with, as data: field of view, limiting magnitude, time per field, the
// site on the observer planet (latitude, the planet's rotation and axial tilt), the limits that keep pointings
// safe and dark (minimum altitude, the star's depression that counts as dark), weather and astrometric error.
// Read from a scenario's or a brief's [telescope] table or from a stand-alone file (`--telescope FILE`), every
// field validated at the boundary (InputError naming file, line and field). Units: degrees, minutes, hours,
// magnitudes and arcsec as the names say. This is the team's side: it holds nothing of the truth.
#pragma once

#include <string>

#include <toml++/toml.h>

#include "sim/io/toml_reader.hpp"

namespace wayward {

enum class FieldShape { square, circle };

struct Telescope {
    FieldShape shape = FieldShape::square;
    double field_of_view_deg = 1.0;         // side of a square field, diameter of a circular one
    double limiting_mag = 16.0;             // at the zenith on a dark night, one exposure (50 % detection)
    double detection_width_mag = 0.25;      // width of the logistic detection efficiency around the limit
    double detection_max = 0.95;            // detection efficiency of bright sources (gaps, cosmetics)
    double exposure_min = 3.0;              // per field
    double overhead_min = 1.0;              // slew, settle and read-out per field
    double site_latitude_deg = 30.0;        // on the observer planet
    double rotation_period_hours = 24.0;    // the observer planet's sidereal rotation period
    double axial_tilt_deg = 0.0;            // 0: the planet's axis is normal to its orbit
    double min_altitude_deg = 30.0;
    double dark_depression_deg = 18.0;      // the star this far below the horizon counts as dark
    double clear_fraction = 0.7;            // of nights
    double weather_correlation = 0.5;       // chance that a night repeats the previous night's weather
    double astrometric_error_arcsec = 0.5;  // per coordinate, one detection
    double extinction_mag_per_airmass = 0.2;
    double chart_limit_mag = 18.0;          // the team's star chart lists stars to about this (default: the limit + 2)

    double minutes_per_field() const { return exposure_min + overhead_min; }
    // Solid angle of one field in square degrees.
    double field_area_square_degrees() const;
};

namespace detail {
// Reads and validates a [telescope] table: every field optional (defaults above), each checked.
Telescope read_telescope(TableReader& r);
toml::table telescope_table(const Telescope& t);
}  // namespace detail

// A stand-alone telescope file: a TOML file with one [telescope] table.
Telescope load_telescope(const std::string& path);
Telescope parse_telescope(const std::string& text, const std::string& file_label);

}  // namespace wayward
