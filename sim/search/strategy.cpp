// Search strategies and the team's plan file. See strategy.hpp.
#include "sim/search/strategy.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <sstream>

#include "sim/base/errors.hpp"
#include "sim/base/units.hpp"
#include "sim/io/fileio.hpp"
#include "sim/physics/elements.hpp"

namespace wayward {

std::vector<std::string> strategy_names() { return {"probability", "sweep", "spiral", "plan"}; }

Strategy strategy_by_name(const std::string& name) {
    if (name == "probability") return {StrategyKind::probability, name, false};
    if (name == "sweep") return {StrategyKind::sweep, name, true};
    if (name == "spiral") return {StrategyKind::spiral, name, false};
    if (name == "plan") return {StrategyKind::plan, name, false};
    throw InputError("command line", 0, "--strategy", "unknown strategy \"" + name + "\" (probability, sweep, spiral or plan)");
}

namespace {
double number_cell(const std::string& cell, const std::string& file, long line, const std::string& field) {
    std::size_t used = 0;
    double v = 0.0;
    try {
        v = std::stod(cell, &used);
    } catch (const std::exception&) {
        throw InputError(file, line, field, "expected a number (got \"" + cell + "\")");
    }
    if (used != cell.size() || !std::isfinite(v)) throw InputError(file, line, field, "expected a number (got \"" + cell + "\")");
    return v;
}
}  // namespace

std::vector<PlanRow> parse_plan_csv(const std::string& text, const std::string& file) {
    std::istringstream in(text);
    std::string line;
    long n = 0;
    std::vector<PlanRow> rows;
    bool header = false;
    while (std::getline(in, line)) {
        ++n;
        if (!line.empty() && line.back() == '\r') line.pop_back();
        if (line.empty() || line[0] == '#') continue;
        if (!header) {
            if (line != "night,lon_deg,lat_deg") throw InputError(file, n, "header", "the first line must be night,lon_deg,lat_deg");
            header = true;
            continue;
        }
        const auto cells = split_csv_line(line, file, n);
        if (cells.size() != 3) throw InputError(file, n, "row", "expected 3 values: night,lon_deg,lat_deg");
        PlanRow r;
        r.line = n;
        const double night = number_cell(cells[0], file, n, "night");
        if (night != std::floor(night) || night < 1.0 || night > 10000.0) throw InputError(file, n, "night", "must be a whole number in [1, 10000]");
        r.night = static_cast<int>(night);
        const double lon = number_cell(cells[1], file, n, "lon_deg");
        if (!(lon >= 0.0 && lon < 360.0)) throw InputError(file, n, "lon_deg", "must be in [0, 360) degrees");
        const double lat = number_cell(cells[2], file, n, "lat_deg");
        if (!(lat >= -90.0 && lat <= 90.0)) throw InputError(file, n, "lat_deg", "must be in [-90, 90] degrees");
        r.lon = lon * deg;
        r.lat = lat * deg;
        rows.push_back(r);
    }
    if (!header) throw InputError(file, 1, "header", "empty plan: the first line must be night,lon_deg,lat_deg");
    if (rows.empty()) throw InputError(file, n, "row", "the plan has no fields");
    return rows;
}

double opposition_rate(double r_au, double observer_au, double star_mass) {
    const double k = gauss_k * std::sqrt(star_mass);
    return std::abs(k / std::sqrt(observer_au) - k / std::sqrt(r_au)) / std::abs(r_au - observer_au);
}

double revisit_gap_minutes(double rate, double astrometric_error_arcsec, double k) {
    const double needed = k * std::sqrt(2.0) * astrometric_error_arcsec * arcsec;
    const double minutes = rate > 0.0 ? needed / rate * 1440.0 : 240.0;
    return std::clamp(minutes, 30.0, 240.0);
}

std::vector<std::size_t> night_order(const Strategy& s, const SearchRegion& r, const std::vector<Field>& fields,
                                     const std::vector<double>& probability, const std::vector<bool>& covered) {
    std::vector<std::size_t> idx(fields.size());
    std::iota(idx.begin(), idx.end(), std::size_t{0});
    switch (s.kind) {
        case StrategyKind::plan:
            return idx;  // file order
        case StrategyKind::probability:
            std::stable_sort(idx.begin(), idx.end(), [&](std::size_t a, std::size_t b) { return probability[a] > probability[b]; });
            return idx;
        case StrategyKind::sweep: {
            // Along the track direction (the track's motion near the epoch), rows across it, alternating.
            double dir = 0.0;
            if (r.track.size() >= 2) {
                const TrackPoint& a = r.track.front();
                const TrackPoint& b = r.track.back();
                dir = std::atan2(b.lat - a.lat, std::remainder(b.lon - a.lon, two_pi) * std::cos(r.lat));
            }
            const double c = std::cos(dir), sn = std::sin(dir);
            double step = 1.0;
            for (const Field& f : fields)
                if (f.xi != 0.0 || f.eta != 0.0) step = std::min(step, std::hypot(f.xi, f.eta));
            auto row = [&](std::size_t i) { return std::lround((-sn * fields[i].xi + c * fields[i].eta) / step); };
            auto along = [&](std::size_t i) { return c * fields[i].xi + sn * fields[i].eta; };
            std::stable_sort(idx.begin(), idx.end(), [&](std::size_t a, std::size_t b) {
                if (covered[a] != covered[b]) return !covered[a];
                const long ra = row(a), rb = row(b);
                if (ra != rb) return ra < rb;
                return (ra % 2 == 0) ? along(a) < along(b) : along(a) > along(b);
            });
            return idx;
        }
        case StrategyKind::spiral: {
            double step = 1.0;
            for (const Field& f : fields)
                if (f.xi != 0.0 || f.eta != 0.0) step = std::min(step, std::hypot(f.xi, f.eta));
            auto ring = [&](std::size_t i) { return std::lround(std::max(std::abs(fields[i].xi), std::abs(fields[i].eta)) / step); };
            auto angle = [&](std::size_t i) { return wrap_two_pi(std::atan2(fields[i].eta, fields[i].xi)); };
            std::stable_sort(idx.begin(), idx.end(), [&](std::size_t a, std::size_t b) {
                if (covered[a] != covered[b]) return !covered[a];
                const long ra = ring(a), rb = ring(b);
                if (ra != rb) return ra < rb;
                return angle(a) < angle(b);
            });
            return idx;
        }
    }
    return idx;
}

}  // namespace wayward
