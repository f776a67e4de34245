// The sky map files of a solve; see sky_map_command.hpp.
#include "sim/commands/sky_map_command.hpp"

#include <cmath>
#include <filesystem>

#include "sim/base/errors.hpp"
#include "sim/base/format.hpp"
#include "sim/io/fileio.hpp"
#include "sim/predict/sky_map.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/record/record.hpp"
#include "sim/report/sky_map_file.hpp"
#include "sim/report/sky_map_plot.hpp"

namespace wayward {

using detail::fmt;

void check_sky_map_request(const std::string& dir, const std::string& form) {
    if (form != "flat" && form != "multiorder") throw InputError("", 0, "--sky-map-form", "\"" + form + "\" is not a form: flat or multiorder");
    refuse_link_at(dir + "/" + sky_map_fits_name, "--sky-map");
    refuse_link_at(dir + "/" + sky_map_regions_name, "--sky-map");
    refuse_link_at(dir + "/" + sky_map_png_name, "--sky-map");
}

void write_sky_map(const std::string& dir, const Brief& brief, const std::string& scenario_name, const Prediction& p, std::ostream& out,
                   const std::string& form) {
    check_sky_map_request(dir, form);
    if (p.sample_lon.size() < static_cast<std::size_t>(min_sky_map_samples))
        throw std::runtime_error("sky map: only " + std::to_string(p.sample_lon.size()) + " of the covariance samples could be integrated");
    // The resolution follows the sampled ellipse, the one the map is made of.
    const int nside = sky_map_nside(p.sampled_semi_minor_arcsec);
    // An imported record's map is made in ICRS: the samples are rotated there first.
    const Eigen::Matrix3d to_fitting = brief.imported() ? icrs_to_fitting_frame(brief) : Eigen::Matrix3d::Identity();
    std::vector<double> lon = p.sample_lon, lat = p.sample_lat;
    if (brief.imported())
        for (std::size_t i = 0; i < lon.size(); ++i) {
            const SkyPosition q = to_sky(to_fitting.transpose() * unit_vector(lon[i], lat[i]));
            lon[i] = q.lon;
            lat[i] = q.lat;
        }
    std::vector<SkySample> samples = equal_weight_samples(lon, lat);
    if (p.sample_weight.size() == samples.size())
        for (std::size_t i = 0; i < samples.size(); ++i) samples[i].weight = p.sample_weight[i];  // importance weights
    for (std::size_t i = 0; i < samples.size(); ++i) samples[i].group = group_of_sample(p, i);  // each minimum its own kernel
    const SkyMap map = make_sky_map(samples, nside);
    const std::vector<RankedPixel> ranked = ranked_pixels(map);
    const std::vector<SkyRegion> regions = sky_regions(map, ranked, {0.5, 0.9, 0.99});
    const std::string csv_path = dir + "/" + sky_map_regions_name;
    const std::string fits_path = dir + "/" + sky_map_fits_name;
    const SkyMapForm fits_form = form == "multiorder" ? SkyMapForm::multi_order : SkyMapForm::flat;
    write_sky_map_fits(fits_path, map, {scenario_name, p.epoch_year, static_cast<int>(p.sample_lon.size()), brief.imported()}, fits_form);
    std::error_code ec;
    const double fits_mb = static_cast<double>(std::filesystem::file_size(fits_path, ec)) / 1e6;
    write_file_atomic(csv_path, sky_map_regions_csv(brief, p.epoch_year, map, ranked, regions, brief.imported() ? &to_fitting : nullptr));
    const std::string png_path = dir + "/" + sky_map_png_name;
    save_sky_map_png(brief, p, map, ranked, regions, brief.imported() ? &to_fitting : nullptr, png_path);
    out << "Sky map at " << fmt("%.2f", p.epoch_year) << " (nside " << nside << ", " << fmt("%.2f", sky_map_pixel_arcmin(nside))
        << " arcmin pixels, " << p.sample_lon.size() << " samples): 50/90/99 % regions " << fmt("%.4g", regions[0].area_deg2) << " / "
        << fmt("%.4g", regions[1].area_deg2) << " / " << fmt("%.4g", regions[2].area_deg2) << " square degrees; wrote " << fits_path << " ("
        << (fits_form == SkyMapForm::multi_order ? "multi-order, " : "flat, ") << fmt("%.3g", fits_mb) << " MB), " << csv_path << ", " << png_path << "\n";
    if (fits_form == SkyMapForm::flat && fits_mb > 20.0)
        out << "  (--sky-map-form multiorder writes the same map as multi-order HEALPix cells: the empty sky in coarse cells, far smaller)\n";
    out << (brief.imported() ? "  (in ICRS, astrometric; pixels" : "  (in the observer planet's orbital plane, not ICRS; pixels")
        << " inside the elongation limit are marked near_star. A real "
           "observatory's own safety rules and scheduling tools take precedence.)\n";
}

}  // namespace wayward
