// The model as data: a plain, copyable N-body system (GM and barycentric state in contiguous storage),
// the Newtonian right-hand side, and the invariants (energy, angular momentum, barycentre).
// Units: au, day, au^3/d^2. Body 0 is always the star.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "sim/physics/elements.hpp"

namespace wayward {

enum class Role { star, known, hidden };

struct BodyInfo {
    std::string name;
    Role role = Role::known;
    bool observer = false;
};

struct System {
    std::vector<BodyInfo> bodies;   // bodies[0] is the star
    std::vector<double> gm;         // au^3/d^2, one per body
    std::vector<double> state;      // barycentric, 6 per body: x y z vx vy vz (au, au/d)
    double time = 0.0;              // days after epoch 0

    std::size_t size() const { return gm.size(); }
    Vec3 position(std::size_t i) const { return {state[6 * i], state[6 * i + 1], state[6 * i + 2]}; }
    Vec3 velocity(std::size_t i) const { return {state[6 * i + 3], state[6 * i + 4], state[6 * i + 5]}; }
    void set(std::size_t i, const StateVector& s);
    std::size_t observer_index() const;            // throws if none
    std::size_t index_of(const std::string& name) const;  // throws if absent
};

// Newtonian accelerations of n point masses: pos and acc hold 3 per body.
void nbody_accelerations(std::size_t n, const double* gm, const double* pos, double* acc);
// d/dt of a 6-per-body state (the form Odeint integrates).
void nbody_derivative(std::size_t n, const double* gm, const double* state, double* dstate);

// Accelerations and their time derivatives (jerks) in one pass over the pairs, from a 6-per-body state;
// 3 per body each.
void nbody_accelerations_and_jerks(std::size_t n, const double* gm, const double* state, double* acc, double* jerk);

double total_energy(const System& s);          // kinetic + potential, per unit G (au^5/d^4 * Msun/G ...)
Vec3 angular_momentum(const System& s);        // sum of gm_i r_i x v_i
StateVector barycentre(const System& s);       // GM-weighted mean position and velocity

// Heliocentric states (relative to body 0) -> barycentric states, for the star and each planet.
// helio[0] is ignored (the star is at the heliocentric origin).
std::vector<StateVector> helio_to_bary(const std::vector<double>& gm, const std::vector<StateVector>& helio);
// A body given by its heliocentric state at epoch 0, for building a System.
struct HelioBody {
    std::string name;
    Role role = Role::known;
    bool observer = false;
    double mass = 0.0;    // solar masses
    StateVector helio;    // heliocentric state (reference frame)
};
// The barycentric system of a star and bodies given heliocentrically (the one builder: truth and team models).
System system_from_helio(const std::string& star_name, double star_mass, const std::vector<HelioBody>& bodies);

// Barycentric -> heliocentric state of body i.
StateVector heliocentric(const System& s, std::size_t i);

// Remove a body (used to make the known-bodies-only model of a system).
System without_body(const System& s, std::size_t i);

}  // namespace wayward
