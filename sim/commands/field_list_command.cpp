// `wayward search` on a folder imported from a survey record: with no sealed truth to place among the stars there
// is nothing to rehearse, so it lists the fields a team would point at instead — their centres in ICRS at one
// date, most probable first, with the share of the region each adds — and leaves the nights (darkness, altitude,
// airmass at the team's real site) to the observatory's own scheduling tools. See search_command.hpp.
#include <cmath>
#include <sstream>

#include "sim/base/errors.hpp"
#include "sim/base/format.hpp"
#include "sim/base/random.hpp"
#include "sim/base/units.hpp"
#include "sim/commands/search_command.hpp"
#include "sim/exercise/exercise.hpp"
#include "sim/exercise/observer_path.hpp"
#include "sim/io/fileio.hpp"
#include "sim/night/rehearsal.hpp"
#include "sim/record/record.hpp"
#include "sim/record/sky_frames.hpp"
#include "sim/search/field_plan.hpp"
#include "sim/search/region.hpp"

namespace wayward {

using detail::fmt;

namespace {

struct IcrsPlace {
    double ra_deg = 0.0, dec_deg = 0.0;
};

IcrsPlace icrs_of(const Eigen::Matrix3d& to_icrs, double lon, double lat) {
    const FramedSky s = rotate_sky({lon / deg, lat / deg, std::nullopt, std::nullopt}, to_icrs);
    return {s.lon_deg, s.lat_deg};
}

std::string fields_csv(const FieldPlan& plan, const Eigen::Matrix3d& to_icrs) {
    std::string s = "order,field,ra_deg,dec_deg,ra_hms,dec_dms,ecl_lon_deg,ecl_lat_deg,probability,added,cumulative,elongation_deg\n";
    for (const PlannedField& f : plan.fields) {
        const IcrsPlace p = icrs_of(to_icrs, f.lon, f.lat);
        s += std::to_string(f.order) + "," + std::to_string(f.field) + "," + fmt("%.6f,", p.ra_deg) + fmt("%.6f,", p.dec_deg) +
             sexagesimal_ra(p.ra_deg) + "," + sexagesimal_dec(p.dec_deg) + "," + fmt("%.6f,", f.lon / deg) + fmt("%.6f,", f.lat / deg) +
             fmt("%.6f,", f.probability) + fmt("%.6f,", f.added) + fmt("%.6f,", f.cumulative) + fmt("%.3f\n", f.elongation / deg);
    }
    return s;
}

std::string share_line(const FieldPlan& plan, double share) {
    const int n = plan.fields_for(share);
    return n > 0 ? std::to_string(n) + " field" + (n == 1 ? "" : "s") : "not within the list";
}

std::string fields_summary(const FieldPlan& plan, const SearchRegion& region, const Telescope& tel, const Brief& b,
                           const Eigen::Matrix3d& to_icrs) {
    std::ostringstream o;
    o << "Fields for " << b.scenario_name << " at " << fmt("%.3f", plan.year) << " (" << iso_calendar_tdb(jd_from_julian_epoch(plan.year))
      << " TDB), most probable first\n(no sealed truth here, so no rehearsal: these are the fields a team would point at)\n";
    double cl = 0.0, cb = 0.0;
    region_centre(region, plan.year, cl, cb);
    const IcrsPlace c = icrs_of(to_icrs, cl, cb);
    o << "Predicted centre (ICRS, astrometric): RA " << sexagesimal_ra(c.ra_deg) << ", Dec " << sexagesimal_dec(c.dec_deg) << "\n";
    if (region.from_virtual_bodies)
        o << "Region: the solve's " << region.virtual_bodies << " virtual bodies (effective " << fmt("%.1f", region.effective_samples)
          << "; " << region.why_virtual_bodies << "), 98.9 % within " << fmt("%.2f", region.reach / deg) << " deg\n";
    else
        o << "Region: 1-sigma ellipse " << fmt("%.3f", region.sigma_major / deg) << " x " << fmt("%.3f", region.sigma_minor / deg) << " deg\n";
    o << "Field: " << fmt("%.2f", tel.field_of_view_deg) << " deg " << (tel.shape == FieldShape::square ? "square" : "circle (diameter)")
      << "; " << plan.tiled << " tiled, " << plan.fields.size() << " listed, holding " << fmt("%.1f", 100.0 * plan.reach) << " % of the region\n";
    o << "50 % of the region in " << share_line(plan, 0.5) << ", 90 % in " << share_line(plan, 0.9) << ", 99 % in " << share_line(plan, 0.99)
      << "\n";
    if (plan.kept_from_star > 0)
        o << "Kept away from the star: " << plan.kept_from_star << " field" << (plan.kept_from_star == 1 ? "" : "s")
          << " nearer than the elongation limit (" << fmt("%.0f", b.elongation_limit_deg) << " deg) never listed; "
          << fmt("%.1f", 100.0 * plan.probability_near_star) << " % of the region lies only there\n";
    o << "Nights are not planned here: darkness, altitude and airmass at the team's site are for the observatory's own\n"
         "scheduling tools. Wayward is a trainer: before pointing a telescope, cross-check these fields with the team's own\n"
         "orbit-determination software; a real observatory's own safety rules and scheduling tools take precedence.\n";
    return o.str();
}

}  // namespace

int run_field_list(const SearchArgs& args, const Exercise& ex, const Solution& solution, std::ostream& out) {
    const Brief& b = ex.brief;
    if (args.strategy || !args.plan_file.empty())
        throw InputError("command line", 0, args.strategy ? "--strategy" : "--plan",
                         "a folder imported from a survey record has no truth to rehearse a search against: `search` lists its "
                         "fields instead, with no strategy or plan");
    Telescope tel;
    if (!args.telescope_file.empty()) {
        tel = load_telescope(args.telescope_file);  // its field's shape and size; the site and nights are not used
    } else {
        tel.shape = FieldShape::circle;
        tel.field_of_view_deg = 2.0 * b.field_radius_deg;
    }
    const double year = args.start_year.value_or(solution.prediction.epoch_year);
    if (!std::isfinite(year)) throw InputError("command line", 0, "--start", "must be a finite year");
    const SearchRegion region = region_from_solution(solution, RehearsalOptions{}.region_samples, derive_seed(args.seed, "region"));
    const std::vector<Field> tiling = tile_region(region, tel, RehearsalOptions{}.extent_sigma, RehearsalOptions{}.max_fields);
    const FieldPlan plan = plan_fields(region, tel, tiling, kepler_observer_path(b), b.elongation_limit_deg * deg, year,
                                       days_from_year(b.epoch0_year, year));
    const Eigen::Matrix3d to_icrs = icrs_to_fitting_frame(b).transpose();
    const std::string summary = fields_summary(plan, region, tel, b, to_icrs);

    const std::string dir = search_folder(args.dir);
    const WriterLock lock(dir, "DIR", LockWait::wait);
    remove_stale_temporaries(dir);
    write_file_atomic(dir + "/fields.csv", fields_csv(plan, to_icrs));
    write_file_atomic(dir + "/fields.txt", summary);
    out << summary;
    out << "Wrote " << dir << "/fields.csv, fields.txt\n";
    return 0;
}

}  // namespace wayward
