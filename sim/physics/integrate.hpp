// Truth integration and the dense ephemeris it produces.
// Methods (registry below): Gauss-Radau of 15th order (Everhart 1985; Rein & Spiegel 2015, MNRAS 446, 1424;
// gauss_radau.hpp), the truth default; and with Boost.Odeint's step-size control Runge-Kutta-Fehlberg 7(8)
// (Fehlberg 1968), Dormand-Prince 5(4) (Dormand & Prince 1980) and Bulirsch-Stoer (Bulirsch & Stoer 1966).
// Dense output: every accepted step stores position, velocity, acceleration and jerk. A Gauss-Radau run also
// keeps each step's acceleration polynomial, which the ephemeris integrates twice to answer any time inside the
// step (its steps are long, about an eighth of the shortest orbit, and need no cap). The Odeint methods' nodes
// are joined by Hermite interpolation of degree 7 (error O(h^8); their step is capped so that the interpolation
// error stays far below the integration tolerance). Units: au, day.
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "sim/physics/system.hpp"

namespace wayward {

// The time-averaged quadrupole of an inner pair treated as one central body (body 0): Q = <d d^T> of the
// pair's separation d, and the pair's reduced GM (G M m / (M + m)). Used by the fitting model, which
// integrates the outer bodies about the star-observer pair; the monopole alone would leave about a
// milliarcsecond of error.
struct CentralQuadrupole {
    Eigen::Matrix3d q = Eigen::Matrix3d::Zero();  // au^2
    double gm_reduced = 0.0;                      // au^3/d^2
};

// Adds to acc (stride acc_stride per body) the accelerations by the averaged quadrupole of body 0 on every other
// body and their reaction on body 0; pos has stride `stride` per body. Derives from a potential, so a symplectic
// map may put it in its kick.
void add_central_quadrupole(const CentralQuadrupole& cq, const std::vector<double>& gm, const double* pos, std::size_t stride,
                            double* acc, std::size_t acc_stride);

struct IntegratorOptions {
    std::string method = "gauss-radau";
    // Odeint's methods: their error tolerances.
    double rel_tol = 1e-13;
    double abs_tol = 1e-17;
    // Gauss-Radau: the step keeps the last coefficient of the step's acceleration polynomial near this
    // fraction of the largest acceleration (epsilon of Rein & Spiegel 2015, who use 1e-9 for end-to-end
    // machine precision). 3e-5 is measured with sim/bench/compare_scipy.sh: about 8 steps per shortest orbit,
    // end positions after 300 years within 1e-11 au of a long-double reference, and the step polynomial
    // between nodes within 1e-12 au of a direct integration.
    double step_precision = 3e-5;
    // Odeint's methods: largest step as a fraction of the shortest orbital period in the system (bounds the
    // Hermite error: about 4e-14 of the orbit's radius at 1/40). Gauss-Radau: its first step only.
    double max_step_fraction = 1.0 / 40.0;
    std::size_t max_steps = 20'000'000;
    std::optional<CentralQuadrupole> central_quadrupole;
};

struct IntegratorMethod {
    std::string name;
    std::string description;
    int order;
};
// The registry of integration methods selectable by name.
const std::vector<IntegratorMethod>& integrator_methods();

enum class IntegrationOutcome { ok, step_size_underflow, non_finite_state, too_many_steps, unknown_method };
std::string to_string(IntegrationOutcome outcome);

// Dense ephemeris: the state of every body at any time in [t_begin, t_end].
struct Ephemeris {
    std::vector<BodyInfo> bodies;
    std::vector<double> gm;
    std::vector<double> times;   // ascending node times (days)
    std::vector<double> states;  // 6N per node
    std::vector<double> accels;  // 3N per node
    std::vector<double> jerks;   // 3N per node (Newtonian part; the tiny central-quadrupole term is left out)
    // Gauss-Radau runs only (else empty, and the nodes are joined by Hermite interpolation): per interval
    // between nodes, 2 + 30N numbers: the time the step began from, the signed step, then per body the
    // step's start position, velocity, acceleration and b0..b6 (gauss_radau.hpp).
    std::vector<double> step_poly;

    std::size_t size() const { return gm.size(); }
    std::size_t nodes() const { return times.size(); }
    double t_begin() const { return times.front(); }
    double t_end() const { return times.back(); }
    bool covers(double t) const { return !times.empty() && t >= t_begin() && t <= t_end(); }
    // Throws std::out_of_range outside the span.
    StateVector state(std::size_t body, double t) const;
    Vec3 position(std::size_t body, double t) const;
    System system_at(double t) const;
};

struct IntegrationResult {
    Ephemeris ephemeris;
    IntegrationOutcome outcome = IntegrationOutcome::ok;
    std::size_t steps = 0;
    std::size_t rejected_steps = 0;
    std::size_t rhs_calls = 0;
};

// Integrates from s.time to cover [t_begin, t_end] (backwards first when t_begin < s.time).
IntegrationResult integrate(const System& s, double t_begin, double t_end, const IntegratorOptions& options = {});

// Joins nodes recorded backwards from a start time and forwards from it into `eph` (whose gm is set), in
// ascending time: the backward nodes reversed, without their copy of the start, then the forward nodes. `Nodes`
// is any recorder with vectors times, states (6N per node), accels and jerks (3N per node). Both integrators
// (the truth's and the fitting model's map) end with it.
template <class Nodes>
void join_nodes(Ephemeris& eph, const Nodes& back, const Nodes& fwd) {
    const std::size_t n = eph.gm.size();
    const std::size_t nb = back.times.size();
    for (std::size_t k = nb; k-- > (nb > 0 ? 1 : 0);) {
        eph.times.push_back(back.times[k]);
        eph.states.insert(eph.states.end(), back.states.begin() + static_cast<std::ptrdiff_t>(6 * n * k),
                          back.states.begin() + static_cast<std::ptrdiff_t>(6 * n * (k + 1)));
        eph.accels.insert(eph.accels.end(), back.accels.begin() + static_cast<std::ptrdiff_t>(3 * n * k),
                          back.accels.begin() + static_cast<std::ptrdiff_t>(3 * n * (k + 1)));
        eph.jerks.insert(eph.jerks.end(), back.jerks.begin() + static_cast<std::ptrdiff_t>(3 * n * k),
                         back.jerks.begin() + static_cast<std::ptrdiff_t>(3 * n * (k + 1)));
    }
    eph.times.insert(eph.times.end(), fwd.times.begin(), fwd.times.end());
    eph.states.insert(eph.states.end(), fwd.states.begin(), fwd.states.end());
    eph.accels.insert(eph.accels.end(), fwd.accels.begin(), fwd.accels.end());
    eph.jerks.insert(eph.jerks.end(), fwd.jerks.begin(), fwd.jerks.end());
    if constexpr (requires { back.step_poly; }) {
        // Step polynomials, one per interval: the backward ones reversed, then the forward ones.
        const std::size_t block = 2 + 30 * n;
        for (std::size_t k = back.step_poly.size() / block; k-- > 0;)
            eph.step_poly.insert(eph.step_poly.end(), back.step_poly.begin() + static_cast<std::ptrdiff_t>(block * k),
                                 back.step_poly.begin() + static_cast<std::ptrdiff_t>(block * (k + 1)));
        eph.step_poly.insert(eph.step_poly.end(), fwd.step_poly.begin(), fwd.step_poly.end());
    }
}


// Propagate a system to time t (no ephemeris kept). Throws on failure.
System propagate(const System& s, double t, const IntegratorOptions& options = {});

// Shortest two-body period in the system (days), used for step caps.
double shortest_period(const System& s);

}  // namespace wayward
