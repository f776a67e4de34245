#include "sim/score/stated_prediction.hpp"

#include <cmath>
#include <filesystem>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"
#include "sim/record/record.hpp"
#include "sim/score/stated_sky_map.hpp"
#include "sim/solve/solve.hpp"

namespace wayward {

void set_stated_region(Prediction& p, std::optional<double> radius_arcmin, std::optional<std::array<double, 3>> ellipse,
                       const std::function<void(const std::string&, const std::string&)>& fail, const std::string& radius_field,
                       const std::string& ellipse_field) {
    if (radius_arcmin && ellipse) fail(ellipse_field, "give a radius or an ellipse, not both");
    if (radius_arcmin) {
        if (!(*radius_arcmin > 0.0 && *radius_arcmin < 180.0 * 60.0)) fail(radius_field, "must be a radius in (0, 10800) arcmin");
        const double sigma = *radius_arcmin * 60.0 / std::sqrt(2.0 * std::log(10.0));
        p.cov_ll = p.cov_bb = sigma * sigma;
        p.cov_lb = 0.0;
    } else if (ellipse) {
        const auto [a, b, pa] = *ellipse;
        if (!(a > 0.0 && a < 10800.0 && b > 0.0 && b <= a)) fail(ellipse_field, "needs semi-axes 0 < B <= A < 10800 arcmin");
        if (!(pa >= 0.0 && pa < 180.0)) fail(ellipse_field, "needs a position angle in [0, 180) degrees");
        const double s = std::sin(pa * deg), c = std::cos(pa * deg);  // the major axis in (lambda cos beta, beta)
        const double a2 = a * a * 3600.0, b2 = b * b * 3600.0;
        p.cov_ll = a2 * s * s + b2 * c * c;
        p.cov_bb = a2 * c * c + b2 * s * s;
        p.cov_lb = (a2 - b2) * s * c;
    } else {
        return;
    }
    ellipse_axes(p.cov_ll, p.cov_lb, p.cov_bb, p.semi_major_arcsec, p.semi_minor_arcsec, p.orientation_deg);
}

Prediction read_stated_prediction(detail::TableReader& r, const Brief* brief) {
    Prediction p;
    p.lon = wrap_two_pi(r.required_number("lon_deg") * deg);
    p.lat = r.required_number("lat_deg") * deg;
    if (!(p.lat >= -pi / 2 && p.lat <= pi / 2)) r.fail("lat_deg", "must be in [-90, 90]");
    p.epoch_year = r.required_number("epoch_year");
    std::optional<double> radius;
    std::optional<std::array<double, 3>> ellipse;
    if (r.has("radius_arcmin")) radius = r.required_number("radius_arcmin");
    if (r.has("sigma_major_arcmin") || r.has("sigma_minor_arcmin") || r.has("position_angle_deg"))
        ellipse = std::array<double, 3>{r.required_number("sigma_major_arcmin"), r.required_number("sigma_minor_arcmin"),
                                        r.required_number("position_angle_deg")};
    set_stated_region(p, radius, ellipse, [&r](const std::string& field, const std::string& why) { r.fail(field, why); }, "radius_arcmin",
                      ellipse && !radius ? "sigma_major_arcmin" : "position_angle_deg");
    read_virtual_bodies(r, p, true);
    if (const std::optional<std::string> map = r.string("sky_map")) {
        if (!p.sample_lon.empty()) r.fail("sky_map", "give the region as samples or as a sky map, not both");
        if (map->empty()) r.fail("sky_map", "names no file");
        // Relative to the prediction file, so a folder of prediction and map can be moved together.
        const std::filesystem::path named(*map);
        const std::filesystem::path file = named.is_absolute() ? named : std::filesystem::path(r.file()).parent_path() / named;
        const Eigen::Matrix3d to_fitting = brief && brief->imported() ? icrs_to_fitting_frame(*brief) : Eigen::Matrix3d::Identity();
        p.stated_map = read_stated_sky_map(file.lexically_normal().string(), brief && brief->imported() ? &to_fitting : nullptr);
        p.stated_map_file = file.lexically_normal().string();
    }
    return p;
}

std::vector<Prediction> parse_stated_predictions(const std::string& text, const std::string& file, const Brief* brief) {
    const toml::table t = detail::parse_toml(text, file);
    detail::TableReader root(t, file, "");
    std::vector<Prediction> out;
    if (root.has("prediction")) {
        const auto tables = root.tables("prediction");
        for (std::size_t k = 0; k < tables.size(); ++k) {
            detail::TableReader r(*tables[k], file, "prediction[" + std::to_string(k + 1) + "]");
            out.push_back(read_stated_prediction(r, brief));
            r.finish();
        }
        if (out.empty()) root.fail("prediction", "holds no prediction");
    } else {
        out.push_back(read_stated_prediction(root, brief));
    }
    root.finish();
    return out;
}

}  // namespace wayward
