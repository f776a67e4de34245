// Survey records in and out. A record folder is what a team keeps of a real survey, in the units the trade uses:
//   record.toml    the star, the known planets (masses; heliocentric osculating elements on the ecliptic and
//                  equinox of J2000.0 at the record's epoch), the time scale, the search epochs
//   positions.csv  time, target, ra, dec, sigma_ra_arcsec (in RA * cos dec), sigma_dec_arcsec, era
//                  (astrometric ICRS; degrees or sexagesimal; times as Julian dates or ISO dates)
//   observer.csv   time, x_au, y_au, z_au: the observer planet's position relative to the star (ICRS axes)
// `import` reads one into an exercise folder with no answer key (its frame: the ecliptic of J2000.0, times in
// TDB days since the epoch); `new --record` writes an invented exercise in the same form, so the two paths can
// be compared. This is the team's side: nothing here includes the truth generator.
// Units: days, degrees, arcsec, au.
#pragma once

#include <string>

#include <Eigen/Core>

#include "sim/exercise/exercise.hpp"

namespace wayward {

struct RecordPaths {
    std::string dir;
    std::string record() const { return dir + "/record.toml"; }
    std::string positions() const { return dir + "/positions.csv"; }
    std::string observer() const { return dir + "/observer.csv"; }
};

// The rotation from ICRS axes into the frame a brief's observations are fitted in: the observer's orbital plane
// at the epoch (from the brief's elements, which lie on the ecliptic of J2000). Its transpose goes back.
Eigen::Matrix3d icrs_to_fitting_frame(const Brief& brief);

// The three files of a record folder, as text.
struct RecordTexts {
    std::string record_toml, positions_csv, observer_csv;
};

// Reads a record folder into an exercise in memory (not yet written): every observation matched to an observer
// row, rotated from ICRS into the fitting frame, times in TDB days since the record's epoch. Errors name the
// file, line and field.
Exercise read_record(const std::string& record_dir);
// The same from the files' texts (`record_dir` names them in errors).
Exercise parse_record(const RecordTexts& texts, const std::string& record_dir);

// Writes an imported exercise (brief.toml, observations.csv, observer.csv) into `out_dir`, made if missing:
// locked against a concurrent writer, no link followed, the brief written last. --force replaces an exercise.
void write_imported_exercise(const Exercise& ex, const std::string& out_dir, bool force);

// An exercise in the record form: its reference plane written as the ecliptic of J2000.0 and its years as
// Julian epochs of TDB. For invented systems `new --record` uses it; an imported exercise gives back its record
// (to the digits written).
RecordTexts format_record(const Exercise& ex);
// Writes the three files into `dir` (made if missing; each file atomically, no link followed).
void write_record_folder(const RecordTexts& texts, const std::string& dir);

}  // namespace wayward
