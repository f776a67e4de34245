// A prediction stated by a team rather than made by Wayward's solver (a trainee's guess, or another program's
// answer): a point at an epoch and, optionally, its region as a circle holding 90 %, a 1-sigma ellipse or samples. Read
// from the command line or from a small TOML file (one table, or [[prediction]] tables for several epochs).
// Units: degrees, arcmin, years.
#pragma once

#include <array>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "sim/exercise/exercise.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/predict/predict.hpp"

namespace wayward {

// The stated region as a covariance of (lambda cos beta, beta) in arcsec^2: a circle holding 90 % (sigma =
// R / sqrt(2 ln 10)), or an ellipse of 1-sigma semi-axes a >= b (arcmin) whose major axis has position angle pa
// (degrees from +beta through +lambda). `fail` reports a bad value with its field.
void set_stated_region(Prediction& p, std::optional<double> radius_arcmin, std::optional<std::array<double, 3>> ellipse,
                       const std::function<void(const std::string&, const std::string&)>& fail, const std::string& radius_field,
                       const std::string& ellipse_field);

// One stated prediction from a table: lon_deg, lat_deg, epoch_year, and radius_arcmin or sigma_major_arcmin,
// sigma_minor_arcmin, position_angle_deg (both optional), and optionally samples of its region: sample_lon_deg,
// sample_lat_deg and sample_weight (weights optional: equal), scored through their kernel density as a solve's
// virtual bodies are; or, instead of samples, sky_map: a HEALPix probability map in FITS (stated_sky_map.hpp), its
// path relative to the prediction file, in the exercise's own frame (or in ICRS where `brief` was imported from a
// record). Errors name the file, line and field (the map's own errors name the FITS file and its card or column).
Prediction read_stated_prediction(detail::TableReader& r, const Brief* brief = nullptr);

// A prediction file's text: its top level is one prediction, or it holds [[prediction]] tables (one per epoch).
// `brief`, where given, says the frame a sky map must be in (see above); without it, the invented frame.
std::vector<Prediction> parse_stated_predictions(const std::string& text, const std::string& file, const Brief* brief = nullptr);

}  // namespace wayward
