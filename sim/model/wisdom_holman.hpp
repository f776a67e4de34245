// A fixed-step symplectic map for the fitting model: the mixed-variable map of Wisdom & Holman (1991, AJ 102,
// 1528) in Jacobi coordinates, drift-kick-drift, with the symplectic corrector of Wisdom, Holman & Touma (1996,
// "Symplectic correctors", Fields Inst. Commun. 10, 217). The Kepler drift solves the universal Kepler equation
// with Stumpff functions (Danby 1988, "Fundamentals of Celestial Mechanics", 2nd ed., ch. 6.9); the kick holds
// every mutual attraction that is not part of a Jacobi Kepler term, plus the averaged quadrupole of the central
// body (CentralQuadrupole), which derives from a potential and so keeps the map symplectic.
// Output is the same dense Ephemeris the adaptive integrators give: nodes on the fixed grid, each node the
// corrected (real) state, interpolated between nodes by integrate.hpp's degree-7 Hermite.
// Units: au, day, au^3/d^2.
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "sim/physics/integrate.hpp"

namespace wayward {

struct WisdomHolmanOptions {
    // Fixed step as a fraction of the shortest two-body period in the system, or, when step_days > 0, that
    // step in days. 1/96: the error left after the corrector is O(eps^2 h^2) (eps ~ 1e-3, planet to star),
    // and at 1/96 the fitting model stays within 0.2 of 1% of the smallest sigma of every bundled scenario
    // (measured against the adaptive model: worst 2.0 mas in the default scenario over 300 years, where 1% of
    // sigma is 10 mas; 4.4 mas at 1/64, 17.6 mas at 1/32).
    double step_fraction = 1.0 / 96.0;
    double step_days = 0.0;
    // An ephemeris node every `node_every` steps (and at both ends): each node costs a corrector. Six steps of
    // 1/96 put nodes 1/16 of a period apart, where the degree-7 Hermite error is ~1e-10 of the orbit (it grows
    // as the eighth power of the spacing: 4e-14 at 1/40).
    int node_every = 6;
    // 0 (none), 3 or 5: the order of the Wisdom-Holman-Touma corrector (3: two stages, 5: four stages). At
    // 1/96 the O(eps h^4) term the order-3 corrector leaves is already below the O(eps^2 h^2) one.
    int corrector_order = 3;
    std::size_t max_steps = 200'000;
    std::optional<CentralQuadrupole> central_quadrupole;
};

enum class WisdomHolmanOutcome { ok, kepler_not_converged, non_finite_state, too_many_steps };
std::string to_string(WisdomHolmanOutcome outcome);

struct WisdomHolmanResult {
    Ephemeris ephemeris;
    WisdomHolmanOutcome outcome = WisdomHolmanOutcome::ok;
    std::size_t steps = 0;
    double step_days = 0.0;
    // With a tangent seed: the derivatives of position, velocity and acceleration with respect to each parameter
    // at every ephemeris node, in the nodes' order: tangent_rows_per_body N x P per node (row 9 i + c of body
    // i: c = 0..2 position, 3..5 velocity, 6..8 acceleration; column: the parameter).
    std::size_t tangent_parameters = 0;
    std::vector<double> tangents;
};

// The derivatives of the initial state and of the GMs with respect to P parameters: state 6N x P and gm N x P,
// row-major (row: state component or body; column: parameter).
struct TangentSeed {
    std::size_t parameters = 0;
    std::vector<double> state, gm;
};
inline constexpr std::size_t max_tangent_parameters = 48;
inline constexpr std::size_t tangent_rows_per_body = 9;

// Integrates from s.time to cover [t_begin, t_end] (backwards first when t_begin < s.time). The grid is
// s.time + k h; the last node may lie up to one step beyond the span.
WisdomHolmanResult integrate_wisdom_holman(const System& s, double t_begin, double t_end, const WisdomHolmanOptions& options = {});
// The same run with the map's tangent map: the nodes' derivatives with respect to the seed's parameters (at most
// max_tangent_parameters), exact for the discrete map with its step and Jacobi order held fixed. The
// ephemeris may differ from the plain run's in the last bits (one more Newton step in each Kepler drift).
WisdomHolmanResult integrate_wisdom_holman(const System& s, double t_begin, double t_end, const WisdomHolmanOptions& options,
                                           const TangentSeed& seed);

// Two-body drift of a relative orbit by dt (universal variables, any conic). Returns false if the universal
// Kepler equation did not converge (the state is then unchanged).
bool kepler_drift(double mu, double dt, Vec3& position, Vec3& velocity);

}  // namespace wayward
