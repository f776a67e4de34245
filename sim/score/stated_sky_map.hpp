// A team's stated region as a HEALPix probability map in FITS (the HEALPix FITS convention of Gorski et al. 2005,
// ApJ 622, 759): a flat map (one value per pixel, RING or NESTED, as healpy.write_map and `wayward solve --sky-map`
// write it) or a multi-order map (UNIQ and PROBDENSITY columns, ORDERING = NUNIQ). Read with Debian's
// libhealpix-cxx over cfitsio, checked, normalised and turned into a PixelMapRegion in the fitting frame.
#pragma once

#include <memory>
#include <string>

#include <Eigen/Core>

#include "sim/predict/region_density.hpp"

namespace wayward {

// The largest nside of a flat map read: the same cap as `solve --sky-map` writes (12.6 million pixels, 100 MB).
// A multi-order map may hold at most as many cells as that, of any order up to 29.
inline constexpr int max_stated_map_nside = max_sky_map_nside;

// Reads `path`. The frame: with `icrs_to_fitting` null the map must be in the invented exercise's own frame
// (COORDSYS = 'OBSPLANE', as `solve --sky-map` marks it); given, the exercise was imported from a record and the
// map must be in ICRS (COORDSYS = 'C'), its directions rotated by that matrix. Throws InputError naming `path`
// and the field (a header card or a column) for anything it cannot use: not FITS, no binary table in HDU 2, an
// ordering or pixel type it does not know, nside not a power of two or above the cap, a column of the wrong length,
// NaN, infinite or negative values, a map holding nothing, overlapping multi-order cells, or the wrong frame.
std::shared_ptr<const PixelMapRegion> read_stated_sky_map(const std::string& path, const Eigen::Matrix3d* icrs_to_fitting);

}  // namespace wayward
