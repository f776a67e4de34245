// A stated region's rank and covered probability; see region_density.hpp.
#include "sim/predict/region_density.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <string>

#include <Eigen/Dense>
#include <healpix_cxx/healpix_base.h>
#include <healpix_cxx/pointing.h>
#include <healpix_cxx/rangeset.h>
#include <healpix_cxx/vec3.h>

#include "sim/base/units.hpp"
#include "sim/physics/geometry.hpp"

namespace wayward {

namespace {

Healpix_Base2 nested_at(int order) { return Healpix_Base2(order, NEST); }

}  // namespace

double map_cell_area_sr(int order) { return 4.0 * pi / (12.0 * std::ldexp(1.0, 2 * order)); }

namespace {

void check_order(int order) {
    if (order < 0 || order > max_map_cell_order) throw std::invalid_argument("a cell's order " + std::to_string(order) + " is outside [0, 29]");
}

std::int64_t pixels_at(int order) { return 12 * (std::int64_t{1} << (2 * order)); }

void check_probability(double p) {
    if (!(std::isfinite(p) && p >= 0.0)) throw std::invalid_argument("a cell's probability is negative or not finite");
}

}  // namespace

PixelMapRegion::PixelMapRegion(std::vector<MapCell> cells, const Eigen::Matrix3d& fitting_to_map) : to_map_(fitting_to_map) {
    for (const MapCell& c : cells) {
        check_order(c.order);
        if (c.pixel < 0 || c.pixel >= pixels_at(c.order)) throw std::invalid_argument("pixel " + std::to_string(c.pixel) + " is outside its order");
        check_probability(c.probability);
    }
    std::sort(cells.begin(), cells.end(), [](const MapCell& a, const MapCell& b) { return a.order != b.order ? a.order < b.order : a.pixel < b.pixel; });
    for (const MapCell& c : cells) {
        if (c.probability == 0.0) continue;  // an empty cell adds nothing to either figure
        Level& l = levels_[c.order];
        l.pixel.push_back(c.pixel);
        l.probability.push_back(c.probability);
    }
    normalise();
}

PixelMapRegion::PixelMapRegion(int order, std::vector<double> nested_probability, const Eigen::Matrix3d& fitting_to_map) : to_map_(fitting_to_map) {
    check_order(order);
    if (static_cast<std::int64_t>(nested_probability.size()) != pixels_at(order)) throw std::invalid_argument("a flat map needs 12 nside^2 pixels");
    for (double p : nested_probability) check_probability(p);
    levels_[order].probability = std::move(nested_probability);
    normalise();
}

void PixelMapRegion::normalise() {
    double total = 0.0;
    for (const auto& [order, level] : levels_)
        for (double p : level.probability) total += p;
    if (!(total > 0.0) || !std::isfinite(total)) throw std::invalid_argument("the map holds no probability");
    for (auto& [order, level] : levels_)
        for (double& p : level.probability) p /= total;
}

std::size_t PixelMapRegion::cells() const {
    std::size_t n = 0;
    for (const auto& [order, level] : levels_) n += static_cast<std::size_t>(std::count_if(level.probability.begin(), level.probability.end(), [](double p) { return p > 0.0; }));
    return n;
}

double PixelMapRegion::Level::probability_of(std::int64_t pix) const {
    if (pixel.empty()) return probability[static_cast<std::size_t>(pix)];
    const auto it = std::lower_bound(pixel.begin(), pixel.end(), pix);
    return it != pixel.end() && *it == pix ? probability[static_cast<std::size_t>(it - pixel.begin())] : 0.0;
}

double PixelMapRegion::Level::sum_over(std::int64_t begin, std::int64_t end) const {
    double sum = 0.0;
    if (pixel.empty()) {
        for (std::int64_t k = begin; k < end; ++k) sum += probability[static_cast<std::size_t>(k)];
        return sum;
    }
    auto it = std::lower_bound(pixel.begin(), pixel.end(), begin);
    const auto stop = std::lower_bound(it, pixel.end(), end);
    for (; it != stop; ++it) sum += probability[static_cast<std::size_t>(it - pixel.begin())];
    return sum;
}

bool PixelMapRegion::cell_at(double lon, double lat, int& order, double& probability) const {
    const SkyPosition q = to_sky(to_map_ * unit_vector(lon, lat));
    const pointing ptg(pi / 2 - q.lat, q.lon);
    // A valid map's cells do not overlap, so at most one order holds the direction.
    for (const auto& [o, level] : levels_) {
        const double p = level.probability_of(nested_at(o).ang2pix(ptg));
        if (p > 0.0) {
            order = o;
            probability = p;
            return true;
        }
    }
    return false;
}

double PixelMapRegion::density_at(double lon, double lat) const {
    int order = 0;
    double p = 0.0;
    return cell_at(lon, lat, order, p) ? p / map_cell_area_sr(order) : 0.0;
}

double PixelMapRegion::rank_of(double lon, double lat, Rng&) const {
    int here_order = -1;
    double here = 0.0;
    cell_at(lon, lat, here_order, here);
    // The cells strictly denser than the direction's own: ties (every pixel of a flat map with the same value)
    // count as not denser, so the peak pixel itself ranks 0. Cells of the direction's own order compare their
    // probabilities (the same area: exact, no rounding of a division); others their densities.
    double above = 0.0;
    for (const auto& [order, level] : levels_) {
        const bool same = order == here_order;
        const double here_density = here / map_cell_area_sr(std::max(here_order, 0)), area = map_cell_area_sr(order);
        for (double p : level.probability)
            if (same ? p > here : p / area > here_density) above += p;
    }
    return std::min(above, 1.0);
}

double PixelMapRegion::mass_within(double lon, double lat, double radius, Rng&) const {
    const SkyPosition q = to_sky(to_map_ * unit_vector(lon, lat));
    const pointing ptg(pi / 2 - q.lat, q.lon);
    const vec3 centre = ptg.to_vec3();
    const double cos_radius = std::cos(std::min(radius, pi));
    double sum = 0.0;
    rangeset<int64> inside;
    for (const auto& [order, level] : levels_) {
        const Healpix_Base2 base = nested_at(order);
        if (level.pixel.empty()) {
            // A flat map's pixels (at most nside 1024): the disc's pixel ranges, then their sums.
            base.query_disc(ptg, std::min(radius, pi), inside);
            for (tsize r = 0; r < inside.nranges(); ++r) sum += level.sum_over(inside.ivbegin(r), inside.ivend(r));
        } else {
            // A multi-order map's cells, each by its centre: at a fine order (up to 29) the disc's own pixel ranges
            // would be far more than the cells.
            for (std::size_t k = 0; k < level.pixel.size(); ++k)
                if (dotprod(base.pix2vec(level.pixel[k]), centre) >= cos_radius) sum += level.probability[k];
        }
    }
    return std::min(sum, 1.0);
}

}  // namespace wayward
