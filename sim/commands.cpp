// Implementations of the `wayward` commands.
#include "sim/commands.hpp"

#include <cmath>
#include <filesystem>
#include <iomanip>
#include <map>
#include <sstream>

#include "sim/errors.hpp"
#include "sim/exercise.hpp"
#include "sim/generate.hpp"
#include "sim/geometry.hpp"
#include "sim/units.hpp"

namespace wayward {

int run_ephemeris(const EphemerisArgs& args, std::ostream& out) {
    const Scenario sc = load_scenario(args.scenario);
    IntegratorOptions opt;
    opt.method = args.method;
    bool known_method = false;
    for (const auto& m : integrator_methods()) known_method |= m.name == args.method;
    if (!known_method) throw InputError("", 0, "--method", "unknown integration method '" + args.method + "'");
    const double span = sc.span_years * julian_year_days;
    for (double t : args.days)
        if (!(t >= 0.0 && t <= span) || !std::isfinite(t))
            throw InputError("", 0, "--at", "time " + std::to_string(t) + " d is outside the scenario's span [0, " +
                                                std::to_string(span) + "] d");
    IntegrationResult run;
    const Truth truth = generate(sc, args.seed, &run, opt);
    const Ephemeris& eph = run.ephemeris;
    const std::size_t obs = truth.system.observer_index();
    const ObserverFrame frame = observer_frame(truth.system, obs);

    out << "time_days,year,body,x_au,y_au,z_au,vx_au_per_day,vy_au_per_day,vz_au_per_day,lon_deg,lat_deg,distance_au\n";
    out << std::setprecision(15);
    for (double t : args.days) {
        for (std::size_t i = 0; i < eph.size(); ++i) {
            const StateVector s = eph.state(i, t);
            out << t << ',' << std::setprecision(10) << decimal_year(sc.epoch0_year, t) << std::setprecision(15) << ','
                << eph.bodies[i].name;
            for (int c = 0; c < 3; ++c) out << ',' << s.position[c];
            for (int c = 0; c < 3; ++c) out << ',' << s.velocity[c];
            if (i == obs) {
                out << ",,,\n";
            } else {
                const Apparent a = apparent(eph, frame, obs, i, t);
                out << ',' << a.sky.lon / deg << ',' << a.sky.lat / deg << ',' << a.sky.distance << '\n';
            }
        }
    }
    return 0;
}

}  // namespace wayward

namespace wayward {

int run_new(const NewArgs& args, std::ostream& out) {
    const Scenario sc = load_scenario(args.scenario);
    if (!sc.plan.present) throw InputError(sc.file, 0, "observing", "the scenario has no [observing] plan, so there is nothing to observe");
    if (args.out_dir.empty()) throw InputError("", 0, "--out", "is required");
    const ExercisePaths paths = exercise_paths(args.out_dir, args.key_dir);
    if (std::filesystem::exists(paths.brief()) && !args.force)
        throw InputError(paths.dir, 0, "--out", "an exercise already exists here; use --force to overwrite it");
    IntegrationResult run;
    const Truth truth = generate(sc, args.seed, &run);
    const ObservationSet obs = observe(sc, truth, run.ephemeris, args.seed);
    const Brief brief = make_brief(sc, truth, args.seed);
    write_exercise(paths, sc, truth, obs, brief, args.force);

    out << std::defaultfloat << std::setprecision(6);
    out << "Exercise written to " << paths.dir << " (answer key sealed in " << paths.key_dir << ")\n";
    out << "Scenario: " << sc.name << ", seed " << args.seed << (truth.draws > 1 ? ", accepted on draw " + std::to_string(truth.draws) : "") << "\n";
    out << "Span: " << sc.epoch0_year << " to " << sc.epoch0_year + sc.span_years << " (" << sc.span_years << " years)\n";
    out << "Star: " << truth.system.bodies[0].name << ", " << truth.star_mass << " solar masses\n";
    out << "Known planets:\n";
    for (const BriefPlanet& p : brief.planets)
        out << "  " << std::left << std::setw(12) << p.name << " a = " << std::setprecision(4) << p.elements.semi_major_axis
            << " au, mass " << std::setprecision(3) << p.mass << (p.observer ? "  (observer)" : p.observed ? "  (observed)" : "") << "\n";
    out << std::setprecision(6);
    out << "A hidden body is in the system; its orbit and mass are in the sealed answer key.\n";
    std::map<std::string, std::size_t> per_era;
    for (const Observation& o : obs.records) ++per_era[o.era];
    out << "Eras:\n";
    for (const Era& e : sc.plan.eras)
        out << "  " << std::setw(18) << e.label << " " << std::setprecision(1) << std::fixed << e.start_year << "-" << e.end_year
            << std::defaultfloat << std::setprecision(6) << ": " << per_era[e.label]
            << " observations" << (e.records_sigma ? "" : " (sigma not recorded)") << "\n";
    if (per_era.count("early sighting")) out << "  " << std::setw(18) << "early sighting" << " " << per_era["early sighting"] << " observations\n";
    out << "Observations: " << obs.records.size() << " in total\n";
    out << "Search epoch(s):";
    for (double y : sc.plan.search_epochs_year) out << " " << y;
    out << "; field radius " << sc.plan.field_radius_deg << " deg\n";
    return 0;
}

}  // namespace wayward
