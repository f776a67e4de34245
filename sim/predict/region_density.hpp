// A stated region's probability on the sky, as score reads it: the truth's rank in it and the probability a
// field (a circle) covered. Two kinds share the one interface: weighted samples through their kernel density
// (SampleDensity in sky_map.hpp, estimated from draws) and a HEALPix probability map (Gorski et al. 2005, ApJ 622,
// 759), flat or multi-order, summed exactly over its pixels with Debian's libhealpix-cxx.
// Angles in radians, in the exercise's fitting frame (λ, β).
#pragma once

#include <cstdint>
#include <map>
#include <vector>

#include <Eigen/Core>

#include "sim/base/random.hpp"
#include "sim/predict/sky_map.hpp"

namespace wayward {

class RegionDensity {
public:
    virtual ~RegionDensity() = default;
    // The truth's rank: the probability held by the smallest highest-density region that includes the direction,
    // i.e. the share of the probability that is strictly denser than it (0 at the peak, 1 where the region has no
    // density at all). An estimate may draw from `rng`; an exact map ignores it.
    virtual double rank_of(double lon, double lat, Rng& rng) const = 0;
    // The probability within `radius` of a direction (a field of that radius pointed there).
    virtual double mass_within(double lon, double lat, double radius, Rng& rng) const = 0;
};

// Weighted samples through their kernel density, ranked from `rank_draws` draws and integrated over a circle from
// `mass_draws` (standard errors at most 0.5 / sqrt(draws)).
class SampledRegion final : public RegionDensity {
public:
    SampledRegion(const std::vector<SkySample>& samples, int rank_draws, int mass_draws)
        : density_(samples), rank_draws_(rank_draws), mass_draws_(mass_draws) {}
    double rank_of(double lon, double lat, Rng& rng) const override { return density_.rank_of(lon, lat, rank_draws_, rng); }
    double mass_within(double lon, double lat, double radius, Rng& rng) const override {
        return density_.mass_within(lon, lat, radius, mass_draws_, rng);
    }

private:
    SampleDensity density_;
    int rank_draws_, mass_draws_;
};

// One HEALPix cell of a map: its order (nside = 2^order), NESTED index and probability.
struct MapCell {
    int order = 0;
    std::int64_t pixel = 0;
    double probability = 0.0;
};

// The largest order a map's cell may have: the NUNIQ scheme's own limit (nside 2^29).
inline constexpr int max_map_cell_order = 29;

// A HEALPix probability map as a region. The probabilities are normalised here. `fitting_to_map` turns a unit
// vector of the fitting frame into the map's frame (identity for an invented exercise's own frame; the transpose of
// icrs_to_fitting_frame for a map in ICRS), so the map is read in its own pixels and only the directions asked
// about are rotated: no resampling. Both constructors throw std::invalid_argument for an order outside [0, 29], a
// pixel outside its order, a negative or non-finite probability or none at all.
class PixelMapRegion final : public RegionDensity {
public:
    // A multi-order map: cells that do not overlap (its NUNIQ cells); cells holding nothing may be left out.
    PixelMapRegion(std::vector<MapCell> cells, const Eigen::Matrix3d& fitting_to_map);
    // A flat map: one probability per NESTED pixel of one order, kept as it is (no index per pixel: a whole-sky
    // map at nside 1024 stays 100 MB).
    PixelMapRegion(int order, std::vector<double> nested_probability, const Eigen::Matrix3d& fitting_to_map);
    // Density compared per steradian, so cells of different orders rank fairly; at one order that is the
    // probability per pixel. A direction in no cell has density 0. One pass over the cells: score asks once.
    double rank_of(double lon, double lat, Rng& rng) const override;
    // The probability of the cells whose centres lie within `radius` (for a flat map libhealpix-cxx's query_disc,
    // which returns exactly the pixels whose centres are inside the disc; for a multi-order map each cell's centre).
    double mass_within(double lon, double lat, double radius, Rng& rng) const override;
    double density_at(double lon, double lat) const;  // per steradian
    std::size_t cells() const;                        // cells holding probability

private:
    struct Level {
        std::vector<std::int64_t> pixel;   // sorted; empty for a flat map's one dense level
        std::vector<double> probability;   // in the same order (a dense level: by NESTED index)
        double probability_of(std::int64_t pix) const;
        double sum_over(std::int64_t begin, std::int64_t end) const;  // of the pixels in [begin, end)
    };
    std::map<int, Level> levels_;          // by order
    Eigen::Matrix3d to_map_;
    void normalise();
    // The cell holding a direction, if any holds probability there: its order and probability.
    bool cell_at(double lon, double lat, int& order, double& probability) const;
};

// A cell's area in steradians at an order.
double map_cell_area_sr(int order);

}  // namespace wayward
