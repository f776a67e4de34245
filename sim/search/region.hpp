// The search region on the sky and the fields that tile it, from the team's own solution. The probability on
// the sky is the solve's own map: where the solve found the map linear, a Gaussian with the solution's 1-sigma
// covariance of (lambda cos beta, beta) about its predicted place; where it did not, the density of the solve's
// weighted virtual bodies (their kernel estimate, the same one the HEALPix map is made of), which may be a curved
// band or several islands. Either way it is represented by samples, so that nights without a detection can lower
// the weight where the telescope looked (Bayes' rule with an assumed detection probability). The region moves with the predicted track:
// offsets are in the tangent plane (gnomonic projection, common practice) about the predicted centre of the
// night. Team side: nothing here knows the truth. Units: radians and decimal years; names say otherwise.
#pragma once

#include <cstdint>
#include <vector>

#include "sim/exercise/telescope.hpp"
#include "sim/solve/solve.hpp"

namespace wayward {

// Gnomonic projection about (lon0, lat0): offsets (xi east, eta north) in radians on the tangent plane.
void to_tangent(double lon0, double lat0, double lon, double lat, double& xi, double& eta);
void from_tangent(double lon0, double lat0, double xi, double eta, double& lon, double& lat);

struct RegionSample {
    double xi = 0.0, eta = 0.0;  // offset from the predicted centre, radians
    double weight = 1.0;         // prior weight (1), lowered after searches that found nothing there
};

struct SearchRegion {
    double epoch_year = 0.0;
    double lon = 0.0, lat = 0.0;          // predicted place at the epoch
    double distance_au = 0.0;             // predicted distance
    double sigma_major = 0.0, sigma_minor = 0.0, orientation = 0.0;  // 1-sigma ellipse (radians; angle from +xi)
    std::vector<TrackPoint> track;        // predicted track, for the centre at other dates
    std::vector<RegionSample> samples;
    bool from_virtual_bodies = false;     // the samples come from the solve's virtual bodies, not the ellipse
    const char* why_virtual_bodies = "";  // why_samples_describe_region, when from_virtual_bodies
    int virtual_bodies = 0;               // how many, when from_virtual_bodies
    double effective_samples = 0.0;       // of those virtual bodies' weights, when from_virtual_bodies
    double reach = 0.0;                   // radius (radians) holding 98.9 % of the samples, when from_virtual_bodies
    double total_prior_weight() const { return static_cast<double>(samples.size()); }
};

// The region from a solution: `count` samples from stream derive_seed(seed, "search region"), of the Gaussian or of
// the virtual bodies' density (samples_describe_region). A draw more than 80 degrees from the predicted place,
// where the tangent plane no longer serves, is kept at a distance no field reaches.
SearchRegion region_from_solution(const Solution& s, int count, std::uint64_t seed);
// The predicted centre at a year: the predicted place moved along the predicted track since the epoch.
void region_centre(const SearchRegion& r, double year, double& lon, double& lat);

struct Field {
    int id = 0;                 // 1-based
    double xi = 0.0, eta = 0.0;  // centre offset from the moving centre (radians)
    bool fixed = false;          // a plan's field: a fixed place on the sky instead of an offset
    double lon = 0.0, lat = 0.0;  // the fixed place (radians), when fixed
};

// Whether an offset (dxi, deta) from a field's centre lies in the field (square: |dxi|, |deta| <= side/2;
// circle: within the radius).
bool inside_field(const Telescope& tel, double dxi, double deta);
// The field's centre on the sky at a year.
void field_centre(const SearchRegion& r, const Field& f, double year, double& lon, double& lat);

// A plan's fixed field as an offset from the region's centre at a year (others unchanged), so that probabilities
// and Bayes' rule apply to every field alike.
Field as_offset(const SearchRegion& r, const Field& f, double year);

// Fields on a grid about the centre out to `extent_sigma` times the major semi-axis (at least one field; for a
// region of virtual bodies, extent_sigma / 3 times the radius holding 98.9 % of them, which is the 3-sigma radius
// of a circular Gaussian),
// spaced so that neighbours touch (a square's side, or the side of the square inscribed in a circle), at most
// max_fields of them, nearest the centre first.
std::vector<Field> tile_region(const SearchRegion& r, const Telescope& tel, double extent_sigma = 3.0, int max_fields = 600);

// Prior and current probability inside each field (fractions of the total prior weight).
std::vector<double> field_probabilities(const SearchRegion& r, const Telescope& tel, const std::vector<Field>& fields);
// Bayes' rule after a search of field f that found nothing: weights inside it times (1 - p_detect).
void lower_weights(SearchRegion& r, const Telescope& tel, const Field& f, double p_detect);

}  // namespace wayward
