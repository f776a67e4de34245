// N-body system, right-hand side and invariants. Direct pairwise summation (exact Newtonian forces).
#include "sim/physics/system.hpp"

#include <cmath>

#include "sim/base/units.hpp"
#include <stdexcept>

namespace wayward {

void System::set(std::size_t i, const StateVector& s) {
    for (int k = 0; k < 3; ++k) {
        state[6 * i + static_cast<std::size_t>(k)] = s.position[k];
        state[6 * i + 3 + static_cast<std::size_t>(k)] = s.velocity[k];
    }
}

std::size_t System::observer_index() const {
    for (std::size_t i = 0; i < bodies.size(); ++i)
        if (bodies[i].observer) return i;
    throw std::runtime_error("the system has no observer planet");
}

std::size_t System::index_of(const std::string& name) const {
    for (std::size_t i = 0; i < bodies.size(); ++i)
        if (bodies[i].name == name) return i;
    throw std::runtime_error("no body named '" + name + "' in the system");
}

void nbody_accelerations(std::size_t n, const double* gm, const double* pos, double* acc) {
    for (std::size_t i = 0; i < 3 * n; ++i) acc[i] = 0.0;
    for (std::size_t i = 0; i < n; ++i) {
        const double xi = pos[3 * i], yi = pos[3 * i + 1], zi = pos[3 * i + 2];
        for (std::size_t j = i + 1; j < n; ++j) {
            const double dx = pos[3 * j] - xi, dy = pos[3 * j + 1] - yi, dz = pos[3 * j + 2] - zi;
            const double r2 = dx * dx + dy * dy + dz * dz;
            const double inv_r3 = 1.0 / (r2 * std::sqrt(r2));
            const double fi = gm[j] * inv_r3, fj = gm[i] * inv_r3;
            acc[3 * i] += fi * dx; acc[3 * i + 1] += fi * dy; acc[3 * i + 2] += fi * dz;
            acc[3 * j] -= fj * dx; acc[3 * j + 1] -= fj * dy; acc[3 * j + 2] -= fj * dz;
        }
    }
}

void nbody_derivative(std::size_t n, const double* gm, const double* state, double* dstate) {
    for (std::size_t i = 0; i < n; ++i) {
        dstate[6 * i] = state[6 * i + 3];
        dstate[6 * i + 1] = state[6 * i + 4];
        dstate[6 * i + 2] = state[6 * i + 5];
        dstate[6 * i + 3] = dstate[6 * i + 4] = dstate[6 * i + 5] = 0.0;
    }
    for (std::size_t i = 0; i < n; ++i) {
        const double xi = state[6 * i], yi = state[6 * i + 1], zi = state[6 * i + 2];
        for (std::size_t j = i + 1; j < n; ++j) {
            const double dx = state[6 * j] - xi, dy = state[6 * j + 1] - yi, dz = state[6 * j + 2] - zi;
            const double r2 = dx * dx + dy * dy + dz * dz;
            const double inv_r3 = 1.0 / (r2 * std::sqrt(r2));
            const double fi = gm[j] * inv_r3, fj = gm[i] * inv_r3;
            dstate[6 * i + 3] += fi * dx; dstate[6 * i + 4] += fi * dy; dstate[6 * i + 5] += fi * dz;
            dstate[6 * j + 3] -= fj * dx; dstate[6 * j + 4] -= fj * dy; dstate[6 * j + 5] -= fj * dz;
        }
    }
}

void nbody_accelerations_and_jerks(std::size_t n, const double* gm, const double* x, double* acc, double* jerk) {
    // jerk: d/dt [G m r / r^3] = G m [v / r^3 - 3 (r.v) r / r^5], with r, v the separation and relative velocity.
    for (std::size_t i = 0; i < 3 * n; ++i) acc[i] = jerk[i] = 0.0;
    for (std::size_t i = 0; i < n; ++i) {
        for (std::size_t j = i + 1; j < n; ++j) {
            double r[3], v[3];
            for (std::size_t c = 0; c < 3; ++c) {
                r[c] = x[6 * j + c] - x[6 * i + c];
                v[c] = x[6 * j + 3 + c] - x[6 * i + 3 + c];
            }
            const double r2 = r[0] * r[0] + r[1] * r[1] + r[2] * r[2];
            const double inv_r3 = 1.0 / (r2 * std::sqrt(r2));
            const double rv = 3.0 * (r[0] * v[0] + r[1] * v[1] + r[2] * v[2]) / r2;
            for (std::size_t c = 0; c < 3; ++c) {
                const double a = r[c] * inv_r3, jt = (v[c] - rv * r[c]) * inv_r3;
                acc[3 * i + c] += gm[j] * a;
                acc[3 * j + c] -= gm[i] * a;
                jerk[3 * i + c] += gm[j] * jt;
                jerk[3 * j + c] -= gm[i] * jt;
            }
        }
    }
}

double total_energy(const System& s) {
    // Energy times G: sum gm_i v_i^2 / 2 - sum_{i<j} gm_i gm_j / r_ij (units au^5/d^4, exact up to a factor G).
    double kinetic = 0.0, potential = 0.0;
    const std::size_t n = s.size();
    for (std::size_t i = 0; i < n; ++i) {
        kinetic += 0.5 * s.gm[i] * s.velocity(i).squaredNorm();
        for (std::size_t j = i + 1; j < n; ++j) potential -= s.gm[i] * s.gm[j] / (s.position(i) - s.position(j)).norm();
    }
    return kinetic + potential;
}

Vec3 angular_momentum(const System& s) {
    Vec3 l = Vec3::Zero();
    for (std::size_t i = 0; i < s.size(); ++i) l += s.gm[i] * s.position(i).cross(s.velocity(i));
    return l;
}

StateVector barycentre(const System& s) {
    StateVector b;
    double total = 0.0;
    for (std::size_t i = 0; i < s.size(); ++i) {
        b.position += s.gm[i] * s.position(i);
        b.velocity += s.gm[i] * s.velocity(i);
        total += s.gm[i];
    }
    b.position /= total;
    b.velocity /= total;
    return b;
}

std::vector<StateVector> helio_to_bary(const std::vector<double>& gm, const std::vector<StateVector>& helio) {
    if (gm.size() != helio.size()) throw std::invalid_argument("helio_to_bary: size mismatch");
    double total = 0.0;
    StateVector weighted;
    for (std::size_t i = 0; i < gm.size(); ++i) {
        total += gm[i];
        if (i == 0) continue;
        weighted.position += gm[i] * helio[i].position;
        weighted.velocity += gm[i] * helio[i].velocity;
    }
    const StateVector star{-weighted.position / total, -weighted.velocity / total};
    std::vector<StateVector> out(gm.size());
    out[0] = star;
    for (std::size_t i = 1; i < gm.size(); ++i)
        out[i] = {helio[i].position + star.position, helio[i].velocity + star.velocity};
    return out;
}

StateVector heliocentric(const System& s, std::size_t i) {
    return {s.position(i) - s.position(0), s.velocity(i) - s.velocity(0)};
}

System without_body(const System& s, std::size_t i) {
    System out;
    out.time = s.time;
    for (std::size_t k = 0; k < s.size(); ++k) {
        if (k == i) continue;
        out.bodies.push_back(s.bodies[k]);
        out.gm.push_back(s.gm[k]);
        for (std::size_t c = 0; c < 6; ++c) out.state.push_back(s.state[6 * k + c]);
    }
    return out;
}

System system_from_helio(const std::string& star_name, double star_mass, const std::vector<HelioBody>& bodies) {
    System s;
    s.bodies.push_back({star_name, Role::star, false});
    s.gm.push_back(gm_from_mass(star_mass));
    std::vector<StateVector> helio{StateVector{}};
    for (const HelioBody& b : bodies) {
        s.bodies.push_back({b.name, b.role, b.observer});
        s.gm.push_back(gm_from_mass(b.mass));
        helio.push_back(b.helio);
    }
    const auto bary = helio_to_bary(s.gm, helio);
    s.state.assign(6 * s.gm.size(), 0.0);
    for (std::size_t i = 0; i < bary.size(); ++i) s.set(i, bary[i]);
    return s;
}

}  // namespace wayward
