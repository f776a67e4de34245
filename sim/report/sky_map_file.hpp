// The sky map's files: the HEALPix map as FITS (a binary table with one PROB column, NESTED order, the ordering
// and frame in the header; the layout of the HEALPix FITS convention, Gorski et al. 2005, written by Debian's
// libhealpix-cxx over cfitsio) and its 50/90/99 % regions as a plain CSV a scheduler can read.
#pragma once

#include <string>
#include <vector>

#include <Eigen/Core>

#include "sim/exercise/exercise.hpp"
#include "sim/predict/sky_map.hpp"

namespace wayward {

struct SkyMapHeader {
    std::string scenario_name;
    double epoch_year = 0.0;
    int samples = 0;
    bool icrs = false;  // the map is in ICRS (an imported record), not an invented system's own frame
};

// The FITS form: flat (a probability per NESTED pixel of one nside: what healpy.read_map reads) or multi-order
// (NUNIQ cells with a probability density: the empty sky in few coarse cells, often a hundred times smaller).
enum class SkyMapForm { flat, multi_order };

// Writes the map to `path` atomically: into a fresh private folder beside it (mkdtemp: nothing can be planted in
// it), then renamed over `path`. Throws InputError when `path` is a symbolic link or not a regular file,
// std::runtime_error naming the path when writing fails.
void write_sky_map_fits(const std::string& path, const SkyMap& map, const SkyMapHeader& header, SkyMapForm form = SkyMapForm::flat);

// skymap_regions.csv: every pixel of the widest region (99 % unless given otherwise), most probable first:
// pixel (NESTED), lon_deg, lat_deg (its centre), probability, cumulative, region (the smallest of the levels
// holding it, in %), elongation_deg from the star at the epoch and near_star (1: inside the brief's elongation
// limit, never to be pointed at). A map in ICRS (`icrs_to_fitting` given: the rotation into the brief's fitting
// frame) names its centre columns ra_deg, dec_deg.
std::string sky_map_regions_csv(const Brief& brief, double epoch_year, const SkyMap& map, const std::vector<RankedPixel>& ranked,
                                const std::vector<SkyRegion>& regions, const Eigen::Matrix3d* icrs_to_fitting = nullptr);

}  // namespace wayward
