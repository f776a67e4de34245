// How near the star a prediction's region lies at its epoch, seen from the team's own observer path: the centre's
// elongation and that of the region's nearest edge (the centre less the larger of the 90% sample radius and the
// 90% radius of the linear ellipse's major axis, 2.146 sigma for a two-dimensional Gaussian). A region any part of
// which lies within the brief's elongation limit cannot be searched safely at that epoch, and the solve, the score
// and the viewer say so.
#pragma once

#include <string>

#include "sim/exercise/exercise.hpp"
#include "sim/predict/predict.hpp"

namespace wayward {

struct NearStar {
    double centre_deg = 180.0;   // elongation of the predicted point from the star
    double edge_deg = 180.0;     // of the region's nearest edge (0 when the region reaches the star)
    double limit_deg = 0.0;      // the brief's elongation limit
    bool centre_inside() const { return centre_deg < limit_deg; }
    bool part_inside() const { return edge_deg < limit_deg; }
};

NearStar near_star(const Brief& brief, const Prediction& p);
// A region given by its centre and a radius (a trainee's own field, for instance).
NearStar near_star(const Brief& brief, double epoch_year, double lon, double lat, double radius_arcsec);

// The caution to print (empty when the region is clear of the limit).
std::string near_star_caution(const NearStar& n, double epoch_year);

}  // namespace wayward
