// The hidden body's probability map on the sky: weighted sky directions (a prediction's covariance samples)
// turned into a HEALPix map (Gorski et al. 2005, ApJ 622, 759), one probability per pixel in NESTED order, and
// its highest-probability regions (the smallest set of pixels holding a given share).
//
// Method: a Gaussian kernel density estimate. Each sample is spread over the pixels near it with the kernel
// covariance H = n_eff^(-1/3) S (Scott's rule for two dimensions; Scott 1992, Multivariate Density Estimation,
// ch. 6), S the weighted covariance of the sample's group (SkySample::group; one group unless a solve mixes
// several minima) in the tangent plane at the group's mean direction, H's axes held at least
// half a pixel wide; the kernels' centres are shrunk towards the mean (Liu & West 2001) so the map keeps the
// samples' covariance, and each sample's kernel is normalised over the pixels it reaches so it contributes exactly
// its weight. The tangent plane suits regions up to some tens of degrees away from the poles of the frame. Pixelisation is
// Debian's HEALPix C++ library (libhealpix-cxx); nothing here is hand-written pixel geometry.
// Angles in radians, areas in square degrees.
#pragma once

#include <cstdint>
#include <vector>

#include "sim/base/random.hpp"

namespace wayward {

struct SkySample {
    double lon = 0.0, lat = 0.0;  // radians, in the exercise's frame (λ, β)
    double weight = 1.0;          // any non-negative scale; normalised here
    // Samples of one group share one kernel (their own tangent point, covariance and Scott's-rule width): each
    // distinct minimum of a solve is a group, so islands far apart are each smoothed at their own scale.
    int group = 0;
};

// The sample directions of a prediction, equally weighted.
std::vector<SkySample> equal_weight_samples(const std::vector<double>& lon, const std::vector<double>& lat);

// The resolution rule: the smallest power of two whose pixels (side = the square root of a pixel's area) are at
// most a quarter of the 1-sigma ellipse's semi-minor axis, between min_sky_map_nside and max_sky_map_nside. The
// cap keeps a whole-sky map near 100 MB (nside 1024: 12.6 million pixels of 3.4 arcmin).
inline constexpr int min_sky_map_nside = 16;
inline constexpr int max_sky_map_nside = 1024;
int sky_map_nside(double semi_minor_arcsec);
// Side of a pixel at that nside, arcmin.
double sky_map_pixel_arcmin(int nside);

struct SkyMap {
    int nside = 0;
    std::vector<double> probability;   // NESTED order, 12 nside^2 pixels, sums to 1
    double pixel_area_deg2 = 0.0;
    double kernel_major_arcsec = 0.0, kernel_minor_arcsec = 0.0;  // 1-sigma axes of the smoothing kernel
    double effective_samples = 0.0;    // (sum w)^2 / sum w^2
};

// Throws InputError (field "samples") for no samples, a non-finite direction or weight, a negative weight or a
// zero total weight, and for an nside that is not a power of two in [1, max_sky_map_nside].
SkyMap make_sky_map(const std::vector<SkySample>& samples, int nside);

// The density the map is made of (the kernel estimate above, without the pixel floor), to draw from and to
// evaluate. The same errors as make_sky_map for bad samples.
class SampleDensity {
public:
    explicit SampleDensity(const std::vector<SkySample>& samples);
    // Each draw picks a sample with probability proportional to its weight, centres that sample's kernel as the
    // map does and adds the kernel's Gaussian, so the draws keep the samples' mean and covariance (the smoothed
    // bootstrap of Liu & West 2001). The draws come from `rng` in order; a negative count draws nothing.
    std::vector<SkySample> draw(int count, Rng& rng) const;
    // The density at a direction, per square radian of the tangent plane.
    double at(double lon, double lat) const;
    // The rank of a direction in the map: the probability held by the smallest highest-density region that
    // includes it (0 at the peak, near 1 far out), estimated from `count` draws as the share whose density exceeds
    // the direction's (a standard error of at most 0.5 / sqrt(count)).
    double rank_of(double lon, double lat, int count, Rng& rng) const;
    // The probability within `radius` (radians) of a direction, from `count` draws.
    double mass_within(double lon, double lat, double radius, int count, Rng& rng) const;
    double effective_samples() const { return n_eff_; }

private:
    struct GroupKernel {                        // one group's kernel (SkySample::group)
        double lon0 = 0.0, lat0 = 0.0, shrink = 1.0;  // its tangent point and the centres' shrink
        double mean_x = 0.0, mean_y = 0.0;
        double root[2][2] = {{0, 0}, {0, 0}};     // the kernel covariance's square root
        double inverse[2][2] = {{0, 0}, {0, 0}};  // and its inverse
        double norm = 0.0;                        // 1 / (2 pi sqrt(det))
    };
    std::vector<SkySample> samples_;
    std::vector<GroupKernel> kernels_;
    std::vector<std::size_t> kernel_of_;  // per sample, into kernels_
    double total_ = 0.0, n_eff_ = 0.0;
    std::vector<double> cumulative_;
    // A sample's kernel centre, as offsets in its group's tangent plane.
    void centre(const GroupKernel& k, const SkySample& x, double& cx, double& cy) const;
};

// SampleDensity(samples).draw(count, rng).
std::vector<SkySample> draw_from_sample_density(const std::vector<SkySample>& samples, int count, Rng& rng);

// Centre of a NESTED pixel (radians).
void sky_map_pixel_centre(int nside, std::int64_t pixel, double& lon, double& lat);

struct SkyRegion {
    double level = 0.0;       // share of the probability, e.g. 0.9
    std::size_t pixels = 0;   // the smallest number of the most probable pixels holding at least `level`
    double area_deg2 = 0.0;
};

// The pixels by probability, highest first (ties by index), with the running total; only pixels with p > 0.
struct RankedPixel {
    std::int64_t pixel = 0;
    double probability = 0.0, cumulative = 0.0;
};
std::vector<RankedPixel> ranked_pixels(const SkyMap& map);
// The regions for each level (each in (0, 1]), from the ranking above.
std::vector<SkyRegion> sky_regions(const SkyMap& map, const std::vector<RankedPixel>& ranked, const std::vector<double>& levels);

// The map's HEALPix order (nside = 2^order).
int sky_map_order(int nside);

// The map in multi-order form: every pixel holding probability at the map's own order, the empty sky covered by
// the fewest coarser cells (libhealpix-cxx's Moc). uniq = 4 * 4^order + NESTED index; the density is the
// probability per steradian, so a cell's probability is density * its area. Sorted by uniq.
struct MultiOrderCell {
    std::uint64_t uniq = 0;
    int order = 0;
    std::int64_t pixel = 0;
    double density_per_sr = 0.0;
};
std::vector<MultiOrderCell> multi_order_cells(const SkyMap& map);

}  // namespace wayward
