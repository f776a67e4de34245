// Implementations of the `wayward` commands.
#include "sim/commands.hpp"

#include <cmath>
#include <iomanip>
#include <sstream>

#include "sim/errors.hpp"
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
