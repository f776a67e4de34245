// A probability map from weighted sky directions; see sky_map.hpp.
#include "sim/predict/sky_map.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include <Eigen/Dense>
#include <healpix_cxx/healpix_base.h>
#include <healpix_cxx/moc.h>
#include <healpix_cxx/pointing.h>
#include <healpix_cxx/rangeset.h>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"
#include "sim/physics/elements.hpp"
#include "sim/physics/geometry.hpp"

namespace wayward {

namespace {

constexpr double full_sky_deg2 = 4.0 * pi / (deg * deg);

Healpix_Base2 nested_base(int nside) { return Healpix_Base2(nside, NEST, SET_NSIDE); }

pointing to_pointing(double lon, double lat) { return pointing(pi / 2 - lat, wrap_two_pi(lon)); }

bool power_of_two(int n) { return n > 0 && (n & (n - 1)) == 0; }

// Offset of (lon, lat) from (lon0, lat0) in the tangent plane (λ cos β0, β), radians.
Eigen::Vector2d tangent_offset(double lon, double lat, double lon0, double lat0) {
    return {wrap_pi(lon - lon0) * std::cos(lat0), lat - lat0};
}

struct Kernel {
    double lon0 = 0.0, lat0 = 0.0;             // the tangent point: the samples' weighted mean direction
    Eigen::Vector2d mean = Eigen::Vector2d::Zero();  // the samples' weighted mean offset there
    double shrink = 1.0;                       // a = sqrt(1 - h^2): kernel centres a x + (1 - a) mean
    Eigen::Matrix2d covariance = Eigen::Matrix2d::Zero();
};

// Scott's-rule kernel h^2 S with h^2 = n_eff^(-1/3), its axes held at least half a pixel wide. The kernel centres
// are shrunk towards the mean by a = sqrt(1 - h^2) (Liu & West 2001, in Doucet et al., Sequential Monte Carlo
// Methods in Practice, ch. 10), so the map keeps the samples' mean and covariance instead of widening them by
// 1 + h^2 (7 % in area at 300 samples).
Kernel make_kernel(const std::vector<SkySample>& s, double total, double n_eff, double pixel_rad) {
    Kernel k;
    Eigen::Vector3d mean = Eigen::Vector3d::Zero();
    for (const SkySample& x : s)
        mean += x.weight / total * Eigen::Vector3d(std::cos(x.lat) * std::cos(x.lon), std::cos(x.lat) * std::sin(x.lon), std::sin(x.lat));
    k.lon0 = std::atan2(mean.y(), mean.x());
    k.lat0 = std::atan2(mean.z(), std::hypot(mean.x(), mean.y()));
    Eigen::Matrix2d c = Eigen::Matrix2d::Zero();
    for (const SkySample& x : s) {
        const Eigen::Vector2d d = tangent_offset(x.lon, x.lat, k.lon0, k.lat0);
        k.mean += x.weight / total * d;
        c += x.weight / total * d * d.transpose();
    }
    c -= k.mean * k.mean.transpose();
    const double h2 = std::pow(n_eff, -1.0 / 3.0);
    k.shrink = std::sqrt(1.0 - h2);
    Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> es(h2 * c);
    const Eigen::Vector2d ev = es.eigenvalues().cwiseMax(0.25 * pixel_rad * pixel_rad);
    k.covariance = es.eigenvectors() * ev.asDiagonal() * es.eigenvectors().transpose();
    return k;
}

// Where a sample's kernel is centred (radians).
void kernel_centre(const Kernel& k, const SkySample& x, double& lon, double& lat) {
    const Eigen::Vector2d d = k.shrink * tangent_offset(x.lon, x.lat, k.lon0, k.lat0) + (1.0 - k.shrink) * k.mean;
    lat = std::clamp(k.lat0 + d.y(), -pi / 2, pi / 2);
    lon = wrap_two_pi(k.lon0 + d.x() / std::cos(k.lat0));
}

}  // namespace

std::vector<SkySample> equal_weight_samples(const std::vector<double>& lon, const std::vector<double>& lat) {
    std::vector<SkySample> s;
    for (std::size_t k = 0; k < std::min(lon.size(), lat.size()); ++k) s.push_back({lon[k], lat[k], 1.0});
    return s;
}

double sky_map_pixel_arcmin(int nside) {
    return std::sqrt(full_sky_deg2 / (12.0 * static_cast<double>(nside) * static_cast<double>(nside))) * 60.0;
}

int sky_map_nside(double semi_minor_arcsec) {
    int nside = min_sky_map_nside;
    while (nside < max_sky_map_nside && !(sky_map_pixel_arcmin(nside) * 60.0 <= semi_minor_arcsec / 4.0)) nside *= 2;
    return nside;
}

namespace {

// The total weight and the sum of squared weights, after checking every sample (InputError, field "samples").
std::pair<double, double> checked_weights(const std::vector<SkySample>& samples) {
    if (samples.empty()) throw InputError("", 0, "samples", "a probability map needs at least one sample");
    double total = 0.0, total_sq = 0.0;
    for (std::size_t k = 0; k < samples.size(); ++k) {
        const SkySample& x = samples[k];
        if (!std::isfinite(x.lon) || !std::isfinite(x.lat) || std::abs(x.lat) > pi / 2)
            throw InputError("", 0, "samples", "sample " + std::to_string(k) + " has no finite direction with |β| <= 90 deg");
        if (!std::isfinite(x.weight) || x.weight < 0.0)
            throw InputError("", 0, "samples", "sample " + std::to_string(k) + " has a negative or non-finite weight");
        total += x.weight;
        total_sq += x.weight * x.weight;
    }
    if (!(total > 0.0)) throw InputError("", 0, "samples", "the weights add up to zero");
    return {total, total_sq};
}

// Each group's kernel (make_kernel over its own samples), and which kernel every sample uses. Groups with no
// weight get none (their samples weigh nothing anywhere). With a single group this is make_kernel over all the
// samples, exactly.
std::vector<Kernel> group_kernels(const std::vector<SkySample>& samples, double pixel_rad, std::vector<std::size_t>& kernel_of) {
    std::vector<int> groups;
    for (const SkySample& x : samples)
        if (std::find(groups.begin(), groups.end(), x.group) == groups.end()) groups.push_back(x.group);
    std::vector<Kernel> kernels;
    kernel_of.assign(samples.size(), 0);
    for (int g : groups) {
        std::vector<SkySample> own;
        double total = 0.0, total_sq = 0.0;
        for (const SkySample& x : samples)
            if (x.group == g) {
                own.push_back(x);
                total += x.weight;
                total_sq += x.weight * x.weight;
            }
        if (!(total > 0.0)) continue;
        for (std::size_t k = 0; k < samples.size(); ++k)
            if (samples[k].group == g) kernel_of[k] = kernels.size();
        kernels.push_back(make_kernel(own, total, total * total / total_sq, pixel_rad));
    }
    return kernels;
}

}  // namespace

SampleDensity::SampleDensity(const std::vector<SkySample>& samples) : samples_(samples) {
    const auto [total, total_sq] = checked_weights(samples);
    total_ = total;
    n_eff_ = total * total / total_sq;
    for (const Kernel& k : group_kernels(samples, 0.0, kernel_of_)) {
        GroupKernel g;
        g.lon0 = k.lon0;
        g.lat0 = k.lat0;
        g.shrink = k.shrink;
        g.mean_x = k.mean.x();
        g.mean_y = k.mean.y();
        // The kernel's square root by its eigen-decomposition (a degenerate kernel, all samples on a line, draws
        // fine); its inverse with a floor of a milliarcsecond squared so that the density stays finite.
        Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> es(k.covariance);
        const Eigen::Vector2d ev = es.eigenvalues().cwiseMax(0.0);
        const Eigen::Matrix2d root = es.eigenvectors() * ev.cwiseSqrt().asDiagonal();
        const Eigen::Vector2d floored = ev.cwiseMax((1e-3 * arcsec) * (1e-3 * arcsec));
        const Eigen::Matrix2d inverse = es.eigenvectors() * floored.cwiseInverse().asDiagonal() * es.eigenvectors().transpose();
        for (int i = 0; i < 2; ++i)
            for (int j = 0; j < 2; ++j) g.root[i][j] = root(i, j), g.inverse[i][j] = inverse(i, j);
        g.norm = 1.0 / (2.0 * pi * std::sqrt(floored.x() * floored.y()));
        kernels_.push_back(g);
    }
    cumulative_.resize(samples.size());
    double acc = 0.0;
    for (std::size_t j = 0; j < samples.size(); ++j) cumulative_[j] = acc += samples[j].weight;
}

void SampleDensity::centre(const GroupKernel& k, const SkySample& x, double& cx, double& cy) const {
    const Eigen::Vector2d d = tangent_offset(x.lon, x.lat, k.lon0, k.lat0);
    cx = k.shrink * d.x() + (1.0 - k.shrink) * k.mean_x;
    cy = k.shrink * d.y() + (1.0 - k.shrink) * k.mean_y;
}

std::vector<SkySample> SampleDensity::draw(int count, Rng& rng) const {
    std::vector<SkySample> out;
    out.reserve(static_cast<std::size_t>(std::max(count, 0)));
    for (int n = 0; n < count; ++n) {
        const double u = uniform01(rng) * cumulative_.back();
        const auto it = std::upper_bound(cumulative_.begin(), cumulative_.end(), u);
        const std::size_t j = std::min<std::size_t>(static_cast<std::size_t>(it - cumulative_.begin()), samples_.size() - 1);
        const SkySample& x = samples_[j];
        const GroupKernel& k = kernels_[kernel_of_[j]];
        const double z1 = normal(rng), z2 = normal(rng);
        double cx = 0.0, cy = 0.0;
        centre(k, x, cx, cy);
        cx += k.root[0][0] * z1 + k.root[0][1] * z2;
        cy += k.root[1][0] * z1 + k.root[1][1] * z2;
        out.push_back({wrap_two_pi(k.lon0 + cx / std::cos(k.lat0)), std::clamp(k.lat0 + cy, -pi / 2, pi / 2), 1.0, x.group});
    }
    return out;
}

double SampleDensity::at(double lon, double lat) const {
    // Each group's kernels in its own tangent plane (an island far from the others is measured where it lies).
    std::vector<Eigen::Vector2d> p;
    std::vector<double> sum(kernels_.size(), 0.0);
    for (const GroupKernel& k : kernels_) p.push_back(tangent_offset(lon, lat, k.lon0, k.lat0));
    for (std::size_t j = 0; j < samples_.size(); ++j) {
        const SkySample& x = samples_[j];
        if (x.weight == 0.0) continue;
        const std::size_t g = kernel_of_[j];
        const GroupKernel& k = kernels_[g];
        double cx = 0.0, cy = 0.0;
        centre(k, x, cx, cy);
        const double dx = p[g].x() - cx, dy = p[g].y() - cy;
        const double q = k.inverse[0][0] * dx * dx + 2.0 * k.inverse[0][1] * dx * dy + k.inverse[1][1] * dy * dy;
        sum[g] += x.weight * std::exp(-0.5 * q);
    }
    double density = 0.0;
    for (std::size_t g = 0; g < kernels_.size(); ++g) density += kernels_[g].norm * sum[g];
    return density / total_;
}

double SampleDensity::rank_of(double lon, double lat, int count, Rng& rng) const {
    const double here = at(lon, lat);
    const std::vector<SkySample> d = draw(count, rng);
    if (d.empty()) return NAN;
    std::size_t above = 0;
    for (const SkySample& x : d) above += at(x.lon, x.lat) > here;
    return static_cast<double>(above) / static_cast<double>(d.size());
}

double SampleDensity::mass_within(double lon, double lat, double radius, int count, Rng& rng) const {
    const std::vector<SkySample> d = draw(count, rng);
    if (d.empty()) return NAN;
    std::size_t inside = 0;
    for (const SkySample& x : d) inside += separation(lon, lat, x.lon, x.lat) <= radius;
    return static_cast<double>(inside) / static_cast<double>(d.size());
}

std::vector<SkySample> draw_from_sample_density(const std::vector<SkySample>& samples, int count, Rng& rng) {
    return SampleDensity(samples).draw(count, rng);
}

SkyMap make_sky_map(const std::vector<SkySample>& samples, int nside) {
    if (!power_of_two(nside) || nside > max_sky_map_nside)
        throw InputError("", 0, "nside", "must be a power of two in [1, " + std::to_string(max_sky_map_nside) + "], not " + std::to_string(nside));
    const auto [total, total_sq] = checked_weights(samples);

    const Healpix_Base2 base = nested_base(nside);
    SkyMap map;
    map.nside = nside;
    map.probability.assign(static_cast<std::size_t>(base.Npix()), 0.0);
    map.pixel_area_deg2 = full_sky_deg2 / static_cast<double>(base.Npix());
    map.effective_samples = total * total / total_sq;
    const double pixel_rad = sky_map_pixel_arcmin(nside) / 60.0 * deg;
    std::vector<std::size_t> kernel_of;
    const std::vector<Kernel> kernels = group_kernels(samples, pixel_rad, kernel_of);
    std::vector<Eigen::Matrix2d> h_inv;
    std::vector<double> reaches;
    for (const Kernel& kernel : kernels) {
        h_inv.push_back(kernel.covariance.inverse());
        Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> es(kernel.covariance);
        if (h_inv.size() == 1) {  // the first group's: the best minimum's where a solve mixes several
            map.kernel_major_arcsec = std::sqrt(es.eigenvalues()[1]) / arcsec;
            map.kernel_minor_arcsec = std::sqrt(es.eigenvalues()[0]) / arcsec;
        }
        // Four kernel sigmas hold all but 3e-4 of a two-dimensional Gaussian; the rest is renormalised away below.
        reaches.push_back(std::min(pi, 4.0 * std::sqrt(es.eigenvalues()[1])));
    }

    rangeset<int64> near;
    std::vector<std::pair<int64, double>> touched;
    for (std::size_t j = 0; j < samples.size(); ++j) {
        const SkySample& x = samples[j];
        if (x.weight == 0.0) continue;
        const Kernel& kernel = kernels[kernel_of[j]];
        const double reach = reaches[kernel_of[j]];
        const Eigen::Matrix2d& h = h_inv[kernel_of[j]];
        double lon = 0.0, lat = 0.0;
        kernel_centre(kernel, x, lon, lat);
        base.query_disc_inclusive(to_pointing(lon, lat), reach, near);
        touched.clear();
        double sum = 0.0;
        for (tsize r = 0; r < near.nranges(); ++r)
            for (int64 pix = near.ivbegin(r); pix < near.ivend(r); ++pix) {
                const pointing c = base.pix2ang(pix);
                const Eigen::Vector2d d = tangent_offset(c.phi, pi / 2 - c.theta, lon, lat);
                const double k = std::exp(-0.5 * d.dot(h * d));
                if (k <= 0.0) continue;
                touched.emplace_back(pix, k);
                sum += k;
            }
        const double w = x.weight / total;
        if (sum > 0.0) {
            for (const auto& [pix, k] : touched) map.probability[static_cast<std::size_t>(pix)] += w * k / sum;
        } else {  // no pixel centre within reach (cannot happen with the half-pixel floor): its own pixel takes it
            map.probability[static_cast<std::size_t>(base.ang2pix(to_pointing(lon, lat)))] += w;
        }
    }
    double s = 0.0;
    for (double p : map.probability) s += p;
    for (double& p : map.probability) p /= s;
    return map;
}

void sky_map_pixel_centre(int nside, std::int64_t pixel, double& lon, double& lat) {
    const pointing c = nested_base(nside).pix2ang(pixel);
    lon = c.phi;
    lat = pi / 2 - c.theta;
}

std::vector<RankedPixel> ranked_pixels(const SkyMap& map) {
    std::vector<RankedPixel> r;
    for (std::size_t k = 0; k < map.probability.size(); ++k)
        if (map.probability[k] > 0.0) r.push_back({static_cast<std::int64_t>(k), map.probability[k], 0.0});
    std::sort(r.begin(), r.end(), [](const RankedPixel& a, const RankedPixel& b) {
        return a.probability != b.probability ? a.probability > b.probability : a.pixel < b.pixel;
    });
    double c = 0.0;
    for (RankedPixel& p : r) p.cumulative = (c += p.probability);
    return r;
}

std::vector<SkyRegion> sky_regions(const SkyMap& map, const std::vector<RankedPixel>& ranked, const std::vector<double>& levels) {
    std::vector<SkyRegion> out;
    for (double level : levels) {
        if (!(level > 0.0 && level <= 1.0)) throw InputError("", 0, "levels", "a region's share must be in (0, 1]");
        SkyRegion g;
        g.level = level;
        // The first pixel whose running total reaches the level (the last pixel when rounding leaves it short).
        auto it = std::find_if(ranked.begin(), ranked.end(), [&](const RankedPixel& p) { return p.cumulative >= level; });
        g.pixels = it == ranked.end() ? ranked.size() : static_cast<std::size_t>(it - ranked.begin()) + 1;
        g.area_deg2 = static_cast<double>(g.pixels) * map.pixel_area_deg2;
        out.push_back(g);
    }
    return out;
}

int sky_map_order(int nside) {
    int order = 0;
    while ((1 << order) < nside) ++order;
    return order;
}

std::vector<MultiOrderCell> multi_order_cells(const SkyMap& map) {
    const int order = sky_map_order(map.nside);
    const double pixel_sr = 4.0 * pi / static_cast<double>(map.probability.size());
    std::vector<MultiOrderCell> cells;
    // The empty pixels as runs of NESTED indices, then as the fewest cells of any order.
    Moc<int64> empty;
    const std::int64_t n = static_cast<std::int64_t>(map.probability.size());
    for (std::int64_t k = 0; k < n;) {
        if (map.probability[static_cast<std::size_t>(k)] > 0.0) {
            cells.push_back({4ull * (1ull << (2 * order)) + static_cast<std::uint64_t>(k), order, k,
                             map.probability[static_cast<std::size_t>(k)] / pixel_sr});
            ++k;
            continue;
        }
        std::int64_t end = k;
        while (end < n && !(map.probability[static_cast<std::size_t>(end)] > 0.0)) ++end;
        empty.appendPixelRange(order, k, end);
        k = end;
    }
    for (const int64 u : empty.toUniq()) {
        int o = 0;
        while (4ll * (1ll << (2 * (o + 1))) <= u) ++o;
        cells.push_back({static_cast<std::uint64_t>(u), o, u - 4ll * (1ll << (2 * o)), 0.0});
    }
    std::sort(cells.begin(), cells.end(), [](const MultiOrderCell& a, const MultiOrderCell& b) { return a.uniq < b.uniq; });
    return cells;
}

}  // namespace wayward
