// `wayward solve --sky-map`: the solve's samples at the prediction's epoch as a HEALPix probability map
// (DIR/skymap.fits) and its 50/90/99 % regions (DIR/skymap_regions.csv), with one printed line of areas.
#pragma once

#include <ostream>
#include <string>

#include "sim/exercise/exercise.hpp"
#include "sim/predict/predict.hpp"

namespace wayward {

inline constexpr int min_sky_map_samples = 20;
inline constexpr const char* sky_map_fits_name = "skymap.fits";
inline constexpr const char* sky_map_regions_name = "skymap_regions.csv";
inline constexpr const char* sky_map_png_name = "skymap.png";

// Before the solve: InputError (field --sky-map) for a link or a non-file at either output name. (--samples is
// at least 20 by the solve's own validation.)
void check_sky_map_request(const std::string& dir, const std::string& form = "flat");
// After the solve, holding the folder's lock: writes both files and prints the areas and a caution.
// `form`: "flat" (a probability per NESTED pixel) or "multiorder" (NUNIQ cells), checked by check_sky_map_request.
void write_sky_map(const std::string& dir, const Brief& brief, const std::string& scenario_name, const Prediction& p, std::ostream& out,
                   const std::string& form = "flat");

}  // namespace wayward
