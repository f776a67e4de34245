// A stated region's rank and covered probability; see region_density.hpp.
#include "sim/predict/region_density.hpp"

#include <algorithm>
#include <cmath>
#include <functional>
#include <stdexcept>
#include <string>

#include <Eigen/Dense>
#include <healpix_cxx/healpix_base.h>
#include <healpix_cxx/pointing.h>
#include <healpix_cxx/rangeset.h>

#include "sim/base/units.hpp"
#include "sim/physics/geometry.hpp"

namespace wayward {

namespace {

Healpix_Base2 nested_at(int order) { return Healpix_Base2(order, NEST); }

}  // namespace

double map_cell_area_sr(int order) { return 4.0 * pi / (12.0 * std::ldexp(1.0, 2 * order)); }

PixelMapRegion::PixelMapRegion(std::vector<MapCell> cells, const Eigen::Matrix3d& fitting_to_map) : to_map_(fitting_to_map) {
    double total = 0.0;
    for (const MapCell& c : cells) {
        if (c.order < 0 || c.order > max_map_cell_order) throw std::invalid_argument("a cell's order " + std::to_string(c.order) + " is outside [0, 29]");
        const std::int64_t npix = 12 * (std::int64_t{1} << (2 * c.order));
        if (c.pixel < 0 || c.pixel >= npix) throw std::invalid_argument("pixel " + std::to_string(c.pixel) + " is outside its order");
        if (!(std::isfinite(c.probability) && c.probability >= 0.0)) throw std::invalid_argument("a cell's probability is negative or not finite");
        total += c.probability;
    }
    if (!(total > 0.0) || !std::isfinite(total)) throw std::invalid_argument("the map holds no probability");
    std::sort(cells.begin(), cells.end(), [](const MapCell& a, const MapCell& b) { return a.order != b.order ? a.order < b.order : a.pixel < b.pixel; });
    std::vector<std::pair<double, double>> by_density;  // (density, probability)
    for (const MapCell& c : cells) {
        if (c.probability == 0.0) continue;  // an empty cell adds nothing to either figure
        Level& l = levels_[c.order];
        l.pixel.push_back(c.pixel);
        l.probability.push_back(c.probability / total);
        by_density.emplace_back(c.probability / total / map_cell_area_sr(c.order), c.probability / total);
        ++cell_count_;
    }
    std::sort(by_density.begin(), by_density.end(), [](const auto& a, const auto& b) { return a.first > b.first; });
    double acc = 0.0;
    for (const auto& [density, probability] : by_density) {
        density_desc_.push_back(density);
        mass_desc_.push_back(acc += probability);
    }
}

double PixelMapRegion::density_at(double lon, double lat) const {
    const SkyPosition q = to_sky(to_map_ * unit_vector(lon, lat));
    const pointing ptg(pi / 2 - q.lat, q.lon);
    // A valid map's cells do not overlap, so at most one order holds the direction.
    for (const auto& [order, level] : levels_) {
        const std::int64_t pix = nested_at(order).ang2pix(ptg);
        const auto it = std::lower_bound(level.pixel.begin(), level.pixel.end(), pix);
        if (it != level.pixel.end() && *it == pix)
            return level.probability[static_cast<std::size_t>(it - level.pixel.begin())] / map_cell_area_sr(order);
    }
    return 0.0;
}

double PixelMapRegion::rank_of(double lon, double lat, Rng&) const {
    const double here = density_at(lon, lat);
    // The cells strictly denser than the direction's own: ties (every pixel of a flat map with the same value)
    // count as not denser, so the peak pixel itself ranks 0.
    const auto it = std::lower_bound(density_desc_.begin(), density_desc_.end(), here, std::greater<double>());
    if (it == density_desc_.begin()) return 0.0;
    return std::min(1.0, mass_desc_[static_cast<std::size_t>(it - density_desc_.begin()) - 1]);
}

double PixelMapRegion::mass_within(double lon, double lat, double radius, Rng&) const {
    const SkyPosition q = to_sky(to_map_ * unit_vector(lon, lat));
    const pointing ptg(pi / 2 - q.lat, q.lon);
    double sum = 0.0;
    rangeset<int64> inside;
    for (const auto& [order, level] : levels_) {
        nested_at(order).query_disc(ptg, std::min(radius, pi), inside);
        for (tsize r = 0; r < inside.nranges(); ++r) {
            auto it = std::lower_bound(level.pixel.begin(), level.pixel.end(), inside.ivbegin(r));
            const auto end = std::lower_bound(it, level.pixel.end(), inside.ivend(r));
            for (; it != end; ++it) sum += level.probability[static_cast<std::size_t>(it - level.pixel.begin())];
        }
    }
    return std::min(sum, 1.0);
}

}  // namespace wayward
