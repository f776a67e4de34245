#include "sim/commands/record_command.hpp"

#include <map>

#include <Eigen/Dense>

#include "sim/base/format.hpp"
#include "sim/base/units.hpp"
#include "sim/record/record.hpp"
#include "sim/record/sky_frames.hpp"

namespace wayward {

using detail::fmt;

int run_import(const ImportArgs& args, std::ostream& out) {
    const Exercise ex = read_record(args.record_dir);
    write_imported_exercise(ex, args.out_dir, args.force);
    const Brief& b = ex.brief;
    const JulianDate epoch = jd_from_julian_epoch(b.epoch0_year);
    out << "Imported the record \"" << b.scenario_name << "\" from " << args.record_dir << " into " << args.out_dir << "\n";
    out << "Frame: the ecliptic and equinox of J2000.0, from ICRS; times TDB, day 0 = " << iso_calendar_tdb(epoch) << " TDB\n";
    out << "Star: " << b.star_name << ", " << fmt("%.6g", b.star_mass) << (b.star_mass == 1.0 ? " solar mass" : " solar masses") << "; known planets:";
    for (const BriefPlanet& p : b.planets) out << " " << p.name << (p.observer ? " (observer)" : "");
    out << "\n";
    std::map<std::string, int> per_target;
    for (const Observation& o : ex.observations) ++per_target[o.target];
    out << "Positions: " << ex.observations.size() << " (";
    bool first = true;
    for (const auto& [target, n] : per_target) {
        out << (first ? "" : ", ") << target << " " << n;
        first = false;
    }
    out << "), at " << ex.observer_track.size() << " distinct times with the observer's position\n";
    out << "Search epoch(s):";
    for (double y : b.search_epochs_year) out << " " << iso_calendar_tdb(jd_from_julian_epoch(y)) << " TDB";
    out << "\n";
    out << "No answer key: `residuals` and `solve` work on this folder; `search` lists the fields to point at (no rehearsal);\n"
           "`score` needs a sealed truth and refuses.\n";
    return 0;
}

std::string icrs_pointing_text(const Brief& brief, const Prediction& p) {
    if (!brief.imported()) return "";
    const Eigen::Matrix3d to_icrs = icrs_to_fitting_frame(brief).transpose();
    const FramedSky icrs = rotate_sky({p.lon / deg, p.lat / deg, std::nullopt, std::nullopt}, to_icrs);
    const Eigen::Matrix2d j = local_offsets_rotation(p.lon / deg, p.lat / deg, to_icrs);
    Eigen::Matrix2d c;
    c << p.cov_ll, p.cov_lb, p.cov_lb, p.cov_bb;
    const Eigen::Matrix2d ci = j * c * j.transpose();
    double major = 0.0, minor = 0.0, orientation = 0.0;
    ellipse_axes(ci(0, 0), ci(0, 1), ci(1, 1), major, minor, orientation);
    std::string s = "  ICRS (astrometric) at " + iso_calendar_tdb(jd_from_julian_epoch(p.epoch_year)) + " TDB: RA " + sexagesimal_ra(icrs.lon_deg) +
                    " (" + fmt("%.5f", icrs.lon_deg) + " deg), Dec " + sexagesimal_dec(icrs.lat_deg) + " (" + fmt("%+.5f", icrs.lat_deg) + " deg)\n";
    s += "  1-sigma ellipse (linear) in ICRS: " + fmt("%.3f", major / 60) + " x " + fmt("%.3f", minor / 60) + " arcmin, major axis at position angle " +
         fmt("%.1f", position_angle_deg(orientation)) + " deg (from north through east)\n";
    s += "  Wayward is a trainer: before pointing a telescope, cross-check this with the team's own orbit-determination\n"
         "  software; a real observatory's own safety rules and scheduling tools take precedence.\n";
    return s;
}

}  // namespace wayward
