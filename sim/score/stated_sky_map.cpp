// Reading a stated HEALPix map; see stated_sky_map.hpp.
#include "sim/score/stated_sky_map.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <filesystem>
#include <stdexcept>
#include <vector>

#include <Eigen/Dense>
#include <fitsio.h>
#include <healpix_cxx/arr.h>
#include <healpix_cxx/error_handling.h>
#include <healpix_cxx/fitshandle.h>
#include <healpix_cxx/healpix_map.h>
#include <healpix_cxx/healpix_map_fitsio.h>

#include "sim/base/errors.hpp"
#include "sim/base/format.hpp"

namespace wayward {

namespace {

[[noreturn]] void refuse(const std::string& path, const std::string& field, const std::string& why) { throw InputError(path, 0, field, why); }

std::string upper_trimmed(std::string s) {
    while (!s.empty() && std::isspace(static_cast<unsigned char>(s.back()))) s.pop_back();
    s.erase(0, std::min(s.size(), s.find_first_not_of(" \t")));
    for (char& c : s) c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
    return s;
}

// cfitsio reads a file name in its extended syntax (an extension in brackets, filters, `+N`, driver prefixes such
// as `mem://` or `http://`; cfitsio User's Guide, "Extended File Name Syntax"), so a name holding those characters
// would open something else than the file named. We only ever read a plain file, so such names are refused.
void refuse_special_name(const std::string& path) {
    if (path.find_first_of("[](){}+|!*?") != std::string::npos || path.find("://") != std::string::npos || path.empty() || path.front() == '-')
        refuse(path, "sky_map", "the map's file name may not hold any of [ ] ( ) { } + | ! * ? or :// (FITS readers give them meanings)");
}

// HDU 2's type, by cfitsio itself (libhealpix-cxx's fitshandle does not tell a table from an image); -1 if the
// file has one HDU only. fits_open_diskfile takes the name literally.
int second_hdu_type(const std::string& path) {
    fitsfile* f = nullptr;
    int status = 0;
    if (fits_open_diskfile(&f, path.c_str(), READONLY, &status) != 0) {
        char text[FLEN_STATUS] = {};
        fits_get_errstatus(status, text);
        refuse(path, "HDU 1", std::string("is not a FITS file cfitsio can read (") + text + ")");
    }
    int hdus = 0, type = -1;
    fits_get_num_hdus(f, &hdus, &status);
    if (status == 0 && hdus >= 2) fits_movabs_hdu(f, 2, &type, &status);
    int close_status = 0;
    fits_close_file(f, &close_status);
    return status == 0 && hdus >= 2 ? type : -1;
}

std::string string_key(const fitshandle& in, const std::string& path, const std::string& key, bool required) {
    if (!in.key_present(key)) {
        if (required) refuse(path, key, "the header has no " + key + " card");
        return "";
    }
    return upper_trimmed(in.get_key<std::string>(key));
}

void check_frame(const fitshandle& in, const std::string& path, bool icrs) {
    const std::string frame = string_key(in, path, "COORDSYS", true);
    if (icrs && frame != "C")
        refuse(path, "COORDSYS", "is '" + frame + "': this exercise was imported from a survey record, so its map must be in ICRS (COORDSYS = 'C')");
    if (!icrs && frame != "OBSPLANE")
        refuse(path, "COORDSYS", "is '" + frame + "': an invented exercise's map must be in its own frame, the observer planet's orbital "
                                 "plane (COORDSYS = 'OBSPLANE', as `wayward solve --sky-map` writes it); ICRS, galactic or ecliptic "
                                 "maps have no place in an invented system");
}

// Every value must be a finite number >= 0; healpy marks a pixel left out with UNSEEN (-1.6375e30), which is
// refused as negative rather than guessed at.
void check_value(const std::string& path, const std::string& column, std::int64_t row, double v) {
    if (!std::isfinite(v)) refuse(path, column, "entry " + std::to_string(row + 1) + " is not a finite number");
    if (v < 0.0) refuse(path, column, "entry " + std::to_string(row + 1) + " is negative (" + detail::fmt("%g", v) + "; give 0 for a pixel holding nothing)");
}

// A flat map: one value per pixel of one nside, RING or NESTED, in column 1 (libhealpix-cxx's reader), kept as
// one NESTED array.
std::shared_ptr<const PixelMapRegion> flat_map(fitshandle& in, const std::string& path, const Eigen::Matrix3d& to_map) {
    if (!in.key_present("NSIDE")) refuse(path, "NSIDE", "the header has no NSIDE card");
    const long long nside = in.get_key<int64>("NSIDE");
    if (nside < 1 || nside > max_stated_map_nside || (nside & (nside - 1)) != 0)
        refuse(path, "NSIDE", "is " + std::to_string(nside) + ": must be a power of two from 1 to " + std::to_string(max_stated_map_nside));
    const std::int64_t npix = 12 * nside * nside;
    if (in.ncols() < 1) refuse(path, "TTYPE1", "the table has no column");
    const std::string column = in.colname(1).empty() ? std::string("TTYPE1") : in.colname(1);
    if (in.nelems(1) != npix)
        refuse(path, column, "holds " + std::to_string(in.nelems(1)) + " values, not 12 NSIDE^2 = " + std::to_string(npix) +
                                 " (a partial map is not read: give every pixel, 0 where the map holds nothing)");
    std::vector<double> nested;
    {
        Healpix_Map<double> map;
        read_Healpix_map_from_fits(in, map, 1);
        bool any = false;
        for (int k = 0; k < map.Npix(); ++k) {
            check_value(path, column, k, map[k]);  // entries numbered as in the file
            any = any || map[k] > 0.0;
        }
        if (!any) refuse(path, column, "the map holds no probability (every pixel is 0)");
        if (map.Scheme() != NEST) map.swap_scheme();  // NESTED, whatever order the file came in
        nested.assign(&map[0], &map[0] + map.Npix());
    }
    return std::make_shared<const PixelMapRegion>(Healpix_Base::nside2order(static_cast<int>(nside)), std::move(nested), to_map);
}

int column_named(const fitshandle& in, const std::string& name) {
    for (int i = 1; i <= in.ncols(); ++i)
        if (upper_trimmed(in.colname(i)) == name) return i;
    return 0;
}

// A multi-order map: UNIQ = 4 * 4^order + NESTED index and PROBDENSITY per steradian.
std::vector<MapCell> multi_order_cells(fitshandle& in, const std::string& path) {
    const int uniq_col = column_named(in, "UNIQ"), density_col = column_named(in, "PROBDENSITY");
    if (uniq_col == 0) refuse(path, "UNIQ", "a multi-order (NUNIQ) map needs a UNIQ column");
    if (density_col == 0) refuse(path, "PROBDENSITY", "a multi-order (NUNIQ) map needs a PROBDENSITY column (probability per steradian)");
    const std::int64_t n = in.nelems(uniq_col);
    const std::int64_t cap = 12LL * max_stated_map_nside * max_stated_map_nside;
    if (n > cap) refuse(path, "UNIQ", "holds " + std::to_string(n) + " cells, more than " + std::to_string(cap));
    if (in.nelems(density_col) != n) refuse(path, "PROBDENSITY", "holds a different number of entries than UNIQ");
    std::vector<int64> uniq;
    std::vector<double> density;
    in.read_entire_column(uniq_col, uniq);
    in.read_entire_column(density_col, density);
    std::vector<MapCell> cells;
    std::vector<std::pair<std::int64_t, std::int64_t>> spans;  // each cell's NESTED range at order 29, to find overlaps
    for (std::int64_t k = 0; k < n; ++k) {
        const int64 u = uniq[static_cast<std::size_t>(k)];
        if (u < 4) refuse(path, "UNIQ", "entry " + std::to_string(k + 1) + " is " + std::to_string(u) + ": a UNIQ index is at least 4");
        int top = 0;
        while (top < 63 && (u >> (top + 1)) != 0) ++top;
        const int order = top / 2 - 1;
        if (order > max_map_cell_order) refuse(path, "UNIQ", "entry " + std::to_string(k + 1) + " has an order above 29");
        const std::int64_t pixel = u - 4 * (std::int64_t{1} << (2 * order));
        const double d = density[static_cast<std::size_t>(k)];
        check_value(path, "PROBDENSITY", k, d);
        const int shift = 2 * (max_map_cell_order - order);
        spans.emplace_back(pixel << shift, (pixel + 1) << shift);
        if (d > 0.0) cells.push_back({order, pixel, d * map_cell_area_sr(order)});
    }
    std::sort(spans.begin(), spans.end());
    if (cells.empty()) refuse(path, "PROBDENSITY", "the map holds no probability (no cells, or every cell 0)");
    for (std::size_t k = 1; k < spans.size(); ++k)
        if (spans[k].first < spans[k - 1].second) refuse(path, "UNIQ", "two cells overlap: a multi-order map's cells must tile the sky without overlap");
    return cells;
}

std::shared_ptr<const PixelMapRegion> read_checked(const std::string& path, const Eigen::Matrix3d* icrs_to_fitting) {
    const int type = second_hdu_type(path);
    if (type != BINARY_TBL)
        refuse(path, "HDU 2", type < 0 ? "the file has no second HDU: a HEALPix map is a binary table extension"
                                       : "is not a binary table: a HEALPix map is a binary table extension, not an image");
    fitshandle in;
    in.open(path);
    in.goto_hdu(2);
    const std::string pixtype = string_key(in, path, "PIXTYPE", true);
    if (pixtype != "HEALPIX") refuse(path, "PIXTYPE", "is '" + pixtype + "', not 'HEALPIX'");
    check_frame(in, path, icrs_to_fitting != nullptr);
    const std::string ordering = string_key(in, path, "ORDERING", true);
    const Eigen::Matrix3d to_map = icrs_to_fitting ? Eigen::Matrix3d(icrs_to_fitting->transpose()) : Eigen::Matrix3d::Identity();
    if (ordering == "NUNIQ") return std::make_shared<const PixelMapRegion>(multi_order_cells(in, path), to_map);
    if (ordering != "RING" && ordering != "NESTED") refuse(path, "ORDERING", "is '" + ordering + "': RING, NESTED or NUNIQ");
    if (string_key(in, path, "INDXSCHM", false) == "EXPLICIT")
        refuse(path, "INDXSCHM", "a partial map with explicit pixel indices is not read: give every pixel (INDXSCHM = 'IMPLICIT') or a NUNIQ map");
    return flat_map(in, path, to_map);
}

}  // namespace

std::shared_ptr<const PixelMapRegion> read_stated_sky_map(const std::string& path, const Eigen::Matrix3d* icrs_to_fitting) {
    refuse_special_name(path);
    std::error_code ec;
    if (!std::filesystem::is_regular_file(path, ec)) refuse(path, "sky_map", "no such file (a sky map is a FITS file; its path is relative to the prediction file)");
    try {
        return read_checked(path, icrs_to_fitting);
    } catch (const PlanckError& e) {  // libhealpix-cxx's and cfitsio's own complaints, e.g. a column of text
        throw InputError(path, 0, "HDU 2", std::string("cannot be read as a HEALPix map: ") + e.what());
    } catch (const std::invalid_argument& e) {
        throw InputError(path, 0, "HDU 2", e.what());
    }
}

}  // namespace wayward
