// Reading a stated HEALPix map; see stated_sky_map.hpp.
#include "sim/score/stated_sky_map.hpp"

#include <algorithm>
#include <array>
#include <cctype>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
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

// cfitsio 4.2.0 (Debian 12) overflows a buffer (a strcpy in ffgtbp, stopped by _FORTIFY_SOURCE as an abort) on a
// table header whose cards hold bytes outside printable ASCII, which the FITS Standard 4.0 (section 4.1.1) forbids
// in headers anyway; fuzzing found it. So before cfitsio sees a file, the headers of its first two HDUs are read
// here, by hand since no library reads FITS headers without that risk: 2880-byte blocks of 80-character cards up to
// END, every byte 32-126, and HDU 1's data size (section 4.4.1.1: |BITPIX| / 8 * GCOUNT * (PCOUNT + NAXIS1 * ... *
// NAXISm)) to find where HDU 2 starts. Nothing else is interpreted. Returns false where the file ends before a
// header starts (no such HDU); `data_bytes` is the HDU's data size, padded to whole blocks.
bool scan_header(std::ifstream& in, const std::string& path, int hdu, std::int64_t& data_bytes) {
    const std::string field = "HDU " + std::to_string(hdu);
    constexpr std::int64_t block_bytes = 2880, huge = std::int64_t{1} << 60;
    std::int64_t bitpix = 0, pcount = 0, gcount = 1, axes_product = 1;
    long long naxis = 0;
    std::array<char, 2880> block{};
    for (int b = 0; b < 1000; ++b) {
        in.read(block.data(), block_bytes);
        if (in.gcount() == 0 && b == 0) return false;
        if (in.gcount() != block_bytes) refuse(path, field, "ends inside its header (a FITS file is made of 2880-byte blocks)");
        for (int c = 0; c < 36; ++c) {
            const char* card = block.data() + 80 * c;
            for (int k = 0; k < 80; ++k)
                if (static_cast<unsigned char>(card[k]) < 32 || static_cast<unsigned char>(card[k]) > 126)
                    refuse(path, field, "header card " + std::to_string(36 * b + c + 1) + " holds a byte outside printable ASCII (FITS Standard 4.0, 4.1.1)");
            const std::string key = upper_trimmed(std::string(card, 8));
            if (key == "END") {
                const std::int64_t bytes = naxis > 0 ? std::abs(bitpix) / 8 * gcount * std::min(huge, pcount + axes_product) : 0;
                data_bytes = bytes >= huge || bytes < 0 ? huge : (bytes + block_bytes - 1) / block_bytes * block_bytes;
                return true;
            }
            if (card[8] != '=') continue;
            const long long v = std::strtoll(std::string(card + 10, 70).c_str(), nullptr, 10);
            if (key == "BITPIX") bitpix = v;
            else if (key == "NAXIS") naxis = v;
            else if (key == "PCOUNT") pcount = std::clamp<long long>(v, 0, huge);
            else if (key == "GCOUNT") gcount = std::clamp<long long>(v, 0, 1 << 20);
            else if (key.rfind("NAXIS", 0) == 0) {
                const std::int64_t n = std::clamp<long long>(v, 0, huge);
                axes_product = n > 0 && axes_product > huge / n ? huge : axes_product * n;
            }
        }
    }
    refuse(path, field, "has no END card in its first 1000 header blocks");
}

// HDU 2's type, by cfitsio itself (libhealpix-cxx's fitshandle does not tell a table from an image); -1 if the
// file has one HDU only. fits_open_diskfile takes the name literally.
int second_hdu_type(const std::string& path) {
    bool second = false;
    {
        std::ifstream in(path, std::ios::binary);
        std::int64_t first_data = 0, second_data = 0;
        if (!scan_header(in, path, 1, first_data)) refuse(path, "HDU 1", "is empty, not a FITS file");
        in.seekg(static_cast<std::streamoff>(std::min<std::int64_t>(first_data, std::int64_t{1} << 60)), std::ios::cur);
        second = in.good() && scan_header(in, path, 2, second_data);
    }
    fitsfile* f = nullptr;
    int status = 0;
    if (fits_open_diskfile(&f, path.c_str(), READONLY, &status) != 0) {
        char text[FLEN_STATUS] = {};
        fits_get_errstatus(status, text);
        refuse(path, "HDU 1", std::string("is not a FITS file cfitsio can read (") + text + ")");
    }
    int type = -1;
    if (second) fits_movabs_hdu(f, 2, &type, &status);  // HDU 2 only: counting every HDU would read every header
    int close_status = 0;
    fits_close_file(f, &close_status);
    return status == 0 && second ? type : -1;
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
    // Before reading: libhealpix-cxx's column reader takes the address of the first element, which an empty
    // column does not have.
    if (n == 0) refuse(path, "PROBDENSITY", "the map holds no probability (no cells)");
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
