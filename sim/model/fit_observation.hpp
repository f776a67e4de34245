// One observation as the fitting model uses it: time, target, measured direction, the weights in use, its era and
// whether clipping set it aside.
// Units: days, radians; sigma in arcsec.
#pragma once

#include <cstddef>

namespace wayward {

struct FitObservation {
    double time_days = 0.0;
    std::size_t planet = 0;        // index into ModelSetup::planets (observed planets)
    double lon = 0.0, lat = 0.0;   // radians
    double sigma_lon_arcsec = 1.0, sigma_lat_arcsec = 1.0;  // weights in use
    bool sigma_recorded = false;
    std::size_t era = 0;           // index into ModelSetup::eras
    bool rejected = false;         // set aside by outlier clipping
};

}  // namespace wayward
