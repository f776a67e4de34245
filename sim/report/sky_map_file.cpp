// The sky map's FITS and CSV files; see sky_map_file.hpp.
#include "sim/report/sky_map_file.hpp"

#include <algorithm>
#include <cerrno>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <stdexcept>
#include <vector>

#include <fcntl.h>
#include <unistd.h>

#include <Eigen/Dense>
#include <healpix_cxx/arr.h>
#include <healpix_cxx/error_handling.h>
#include <healpix_cxx/fitshandle.h>
#include <healpix_cxx/healpix_map.h>
#include <healpix_cxx/healpix_map_fitsio.h>

#include "sim/base/errors.hpp"
#include "sim/base/format.hpp"
#include "sim/base/units.hpp"
#include "sim/exercise/observer_path.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/io/fileio.hpp"

namespace wayward {

using detail::fmt;
namespace fs = std::filesystem;

namespace {

// The header cards both forms share: the frame, the provenance, the smoothing, the cautions.
void common_keys(fitshandle& out, const SkyMap& map, const SkyMapHeader& h) {
    // An invented system gets a frame of our own: no standard COORDSYS letter (G, E, C) fits it, and a wrong
    // letter would send a scheduler to the wrong sky. An imported record's map is in ICRS ('C').
    if (h.icrs) out.set_key<std::string>("COORDSYS", "C", "ICRS (astrometric right ascension and declination)");
    else out.set_key<std::string>("COORDSYS", "OBSPLANE", "lambda/beta in the observer planet's orbit plane");
    out.set_key<std::string>("CREATOR", "wayward", "a rehearsal tool for invented planetary systems");
    out.set_key<std::string>("SCENARIO", h.scenario_name, h.icrs ? "imported survey record" : "invented system");
    out.set_key<double>("EPOCHYR", h.epoch_year, "year of the prediction this map belongs to");
    out.set_key<int>("NSAMPLES", h.samples, "covariance samples of the solve behind the map");
    out.set_key<double>("KERNMAJ", map.kernel_major_arcsec / 60.0, "arcmin, 1-sigma major axis of the smoothing kernel");
    out.set_key<double>("KERNMIN", map.kernel_minor_arcsec / 60.0, "arcmin, 1-sigma minor axis of the smoothing kernel");
    // FITS comment cards hold 72 characters; each line here fits one.
    const std::vector<const char*> frame_lines =
        h.icrs ? std::vector<const char*>{"FRAME: ICRS, astrometric right ascension (phi) and declination",
                                          "(theta = 90 deg - dec) at the epoch, from a record imported into",
                                          "Wayward (fitted on the ecliptic of J2000.0, rotated by ERFA)."}
               : std::vector<const char*>{"FRAME: NOT ICRS, not galactic, not the Sun's ecliptic. An invented",
                                          "system's frame: the observer planet's orbital plane at epoch 0,",
                                          "longitude lambda (phi = lambda) and latitude beta (theta = 90 deg",
                                          "- beta), as the rest of Wayward uses."};
    for (const char* line : frame_lines) out.add_comment(line);
    for (const char* line : {"Pixel centres are not telescope pointings: a real observatory's own",
                             "safety rules and scheduling tools take precedence, and real",
                             "predictions need cross-checking with the team's own software."})
        out.add_comment(line);
}

// The flat form: one PROB column, a probability per NESTED pixel (libhealpix-cxx's map writer).
void write_flat_fits(const std::string& file, const SkyMap& map, const SkyMapHeader& h) {
    Healpix_Map<double> hm(map.nside, NEST, SET_NSIDE);
    for (std::size_t k = 0; k < map.probability.size(); ++k) hm[static_cast<int>(k)] = map.probability[k];
    fitshandle out;
    out.create(file);
    arr<std::string> names(1);
    names[0] = "PROB";
    prepare_Healpix_fitsmap(out, hm, PLANCK_FLOAT64, names);
    out.write_column(1, hm.Map());
    out.set_key<std::string>("TTYPE1", "PROB", "probability per pixel; the map sums to 1");
    out.set_key<std::string>("TUNIT1", "pix-1", "");
    common_keys(out, map, h);
    out.close();
}

// The multi-order form: UNIQ and PROBDENSITY columns (ORDERING = NUNIQ). Pixels holding probability stay at the
// map's order; the empty sky is covered by the fewest coarser cells (libhealpix-cxx's Moc::toUniq).
void write_multi_order_fits(const std::string& file, const SkyMap& map, const SkyMapHeader& h) {
    const std::vector<MultiOrderCell> cells = multi_order_cells(map);
    std::vector<int64> uniq;
    std::vector<double> density;
    for (const MultiOrderCell& c : cells) {
        uniq.push_back(static_cast<int64>(c.uniq));
        density.push_back(c.density_per_sr);
    }
    fitshandle out;
    out.create(file);
    out.insert_bintab({fitscolumn("UNIQ", "", 1, PLANCK_INT64), fitscolumn("PROBDENSITY", "sr-1", 1, PLANCK_FLOAT64)}, "xtension");
    out.write_column(1, uniq);
    out.write_column(2, density);
    out.set_key<std::string>("PIXTYPE", "HEALPIX", "HEALPIX pixelisation");
    out.set_key<std::string>("ORDERING", "NUNIQ", "pixel index: UNIQ = 4 * 4^order + NESTED index");
    out.set_key<std::string>("INDXSCHM", "EXPLICIT", "indexing: explicit");
    out.set_key<int>("MOCORDER", sky_map_order(map.nside), "finest order (the flat map's nside = 2^order)");
    out.set_key<std::string>("TTYPE2", "PROBDENSITY", "probability per steradian; sums to 1 over the sky");
    common_keys(out, map, h);
    out.close();
}

}  // namespace

void write_sky_map_fits(const std::string& path, const SkyMap& map, const SkyMapHeader& header, SkyMapForm form) {
    refuse_link_at(path);
    const fs::path target(path);
    const fs::path dir = target.has_parent_path() ? target.parent_path() : fs::path(".");
    // cfitsio creates its file by name (fopen), which would follow a link planted at that name; a fresh folder
    // of our own (mode 0700 from mkdtemp) holds the file until the rename, so no such link can exist there.
    std::string tmp_name = ".";
    tmp_name += target.filename().string();
    tmp_name += temporary_marker;
    tmp_name += "XXXXXX";
    std::string tmp_dir = (dir / tmp_name).string();
    if (::mkdtemp(tmp_dir.data()) == nullptr) throw std::runtime_error("cannot write " + path + ": " + std::strerror(errno));
    const std::string tmp = tmp_dir + "/map.fits";
    auto clean = [&] {
        ::unlink(tmp.c_str());
        ::rmdir(tmp_dir.c_str());
    };
    try {
        if (form == SkyMapForm::multi_order) write_multi_order_fits(tmp, map, header);
        else write_flat_fits(tmp, map, header);
        const int fd = ::open(tmp.c_str(), O_RDONLY | O_NOFOLLOW | O_CLOEXEC);
        if (fd < 0 || ::fsync(fd) != 0) throw std::runtime_error(std::strerror(errno));
        ::close(fd);
        refuse_link_at(path);  // once more, just before the rename (rename itself never follows a link)
        if (::rename(tmp.c_str(), path.c_str()) != 0) throw std::runtime_error(std::strerror(errno));
    } catch (const PlanckError& e) {
        clean();
        throw std::runtime_error("cannot write " + path + ": " + e.what());
    } catch (const InputError&) {
        clean();
        throw;
    } catch (const std::runtime_error& e) {
        clean();
        throw std::runtime_error("cannot write " + path + ": " + e.what());
    }
    ::rmdir(tmp_dir.c_str());
}

std::string sky_map_regions_csv(const Brief& brief, double epoch_year, const SkyMap& map, const std::vector<RankedPixel>& ranked,
                                const std::vector<SkyRegion>& regions, const Eigen::Matrix3d* icrs_to_fitting) {
    std::size_t rows = 0;
    for (const SkyRegion& g : regions) rows = std::max(rows, g.pixels);
    const ObserverPath path = kepler_observer_path(brief);
    const double t = days_from_year(brief.epoch0_year, epoch_year);
    std::string s = icrs_to_fitting ? "pixel,ra_deg,dec_deg,probability,cumulative,region,elongation_deg,near_star\n"
                                    : "pixel,lon_deg,lat_deg,probability,cumulative,region,elongation_deg,near_star\n";
    for (std::size_t k = 0; k < rows && k < ranked.size(); ++k) {
        const RankedPixel& p = ranked[k];
        double lon = 0, lat = 0;
        sky_map_pixel_centre(map.nside, p.pixel, lon, lat);
        double region = 100.0;
        for (const SkyRegion& g : regions)
            if (k < g.pixels) region = std::min(region, g.level * 100.0);
        double elongation = 0.0;
        if (icrs_to_fitting) {
            const SkyPosition f = to_sky(*icrs_to_fitting * unit_vector(lon, lat));
            elongation = elongation_from_star(path, f.lon, f.lat, t) / deg;
        } else {
            elongation = elongation_from_star(path, lon, lat, t) / deg;
        }
        s += std::to_string(p.pixel) + "," + fmt("%.6f,", lon / deg) + fmt("%.6f,", lat / deg) + fmt("%.9e,", p.probability) +
             fmt("%.9f,", p.cumulative) + fmt("%g,", region) + fmt("%.3f,", elongation) +
             (elongation < brief.elongation_limit_deg ? "1\n" : "0\n");
    }
    return s;
}

}  // namespace wayward
