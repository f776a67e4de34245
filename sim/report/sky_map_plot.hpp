// The sky map's picture (skymap.png): the map's 50 / 90 / 99 % regions drawn as their pixel centres around the
// predicted place, the virtual bodies the map is made of, the linear 1-sigma ellipse, the search field, and the
// pixels inside the elongation limit (never to be pointed at) in a warning colour. Offsets are east and north
// of the predicted place, (lon - lon0) cos(lat0) and lat - lat0, in degrees, in the map's own frame.
#pragma once

#include <string>
#include <vector>

#include <Eigen/Dense>

#include "sim/exercise/exercise.hpp"
#include "sim/predict/predict.hpp"
#include "sim/predict/sky_map.hpp"

namespace wayward {

// `icrs_to_fitting` given: the map is in ICRS (an imported record) and the prediction, in the fitting frame, is
// rotated there. Written atomically; std::runtime_error naming the path on failure.
void save_sky_map_png(const Brief& brief, const Prediction& p, const SkyMap& map, const std::vector<RankedPixel>& ranked,
                      const std::vector<SkyRegion>& regions, const Eigen::Matrix3d* icrs_to_fitting, const std::string& path);

}  // namespace wayward
