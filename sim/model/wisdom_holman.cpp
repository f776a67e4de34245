// The Wisdom-Holman map with the Wisdom-Holman-Touma corrector. See wisdom_holman.hpp.
//
// Hamiltonian split (Wisdom & Holman 1991, in Jacobi coordinates, bodies ordered outwards from the central
// body): H = sum_j [p_j^2 / 2m'_j - G m_j eta_{j-1} / r'_j] + H_int, eta_j = m_0 + ... + m_j. The Kepler part
// moves each Jacobi vector on a two-body orbit of GM = G eta_j; H_int is the full potential (every pair, and the
// central body's averaged quadrupole) plus sum_j G m_j eta_{j-1} / r'_j. The kick is then the Jacobi transform
// of the inertial accelerations of H's potential, plus G eta_j r'_j / r'^3_j for j >= 2; the pair (0, 1) is
// left out of both, as its force is exactly the first Kepler term.
// The map is drift(h/2) kick(h) drift(h/2). Its error is O(eps h^2) (eps: planet-to-star mass ratio), but all
// of that error up to O(eps h^4) (corrector order 3) or O(eps h^6) (order 5) is a near-identity change of
// variables: integrating y = C^-1(x) and reporting C(y) leaves O(eps h^{n+1} + eps^2 h^2) (Wisdom, Holman &
// Touma 1996; their C is a product of stages Z(a, b) = D(a) K(-b) D(-2a) K(b) D(a)).
// The same code, run on Dual<N> (dual.hpp), is the map's tangent map: the derivatives of every node with respect
// to the initial state and the masses, exact for the discrete map (the step and the Jacobi order are held fixed).
// The Kepler drift iterates on values only and then takes one Newton step in Dual arithmetic at the converged
// root, which carries the implicit-function derivative ds/dp = -(dF/dp) / (dF/ds) of the universal anomaly.
// Hand-written rather than taken from a library: no Debian package provides a Wisdom-Holman map.
#include "sim/model/wisdom_holman.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <numeric>
#include <stdexcept>
#include <type_traits>

#include "sim/model/dual.hpp"
#include "sim/model/kepler_drift.hpp"

namespace wayward {

std::string to_string(WisdomHolmanOutcome outcome) {
    switch (outcome) {
        case WisdomHolmanOutcome::ok: return "ok";
        case WisdomHolmanOutcome::kepler_not_converged: return "Kepler drift did not converge (close encounter?)";
        case WisdomHolmanOutcome::non_finite_state: return "state became non-finite";
        case WisdomHolmanOutcome::too_many_steps: return "too many steps";
    }
    return "?";
}

bool kepler_drift(double mu, double dt, Vec3& position, Vec3& velocity) {
    double x[3] = {position.x(), position.y(), position.z()}, v[3] = {velocity.x(), velocity.y(), velocity.z()};
    if (!kepler::kepler_drift_xv(mu, dt, x, v)) return false;
    position = Vec3(x[0], x[1], x[2]);
    velocity = Vec3(v[0], v[1], v[2]);
    return true;
}

namespace {

using namespace kepler;  // the drift's pieces (kepler_drift.hpp)
using std::sqrt;         // the double overload beside Dual's (dual.hpp), for the code written for both

// The bodies in Jacobi order (central body first, then outwards by initial distance) and their GM sums.
template <class T>
struct Chain {
    std::size_t n = 0;
    std::vector<std::size_t> original;  // original index of each Jacobi slot
    std::vector<T> gm;                  // GM per slot
    std::vector<T> eta;                 // gm[0] + ... + gm[j]
    std::vector<T> gm_original;         // GM in the original order
    std::vector<T> inv_eta;             // 1 / eta[j]
    std::vector<T> share;               // gm[j] / eta[j]
    const CentralQuadrupole* quad = nullptr;
    // The double map's quadrupole terms, computed once: Q row-major, its trace, 1.5 GM_reduced, and the share
    // gm[j] / gm[0] of each body's quadrupole acceleration that acts back on the central body.
    double q[9] = {}, q_trace = 0.0, q_scale = 0.0;
    std::vector<double> q_reaction;

    // Fills inv_eta, share and the quadrupole terms from gm, eta and quad.
    void precompute() {
        inv_eta.clear();
        share.clear();
        for (std::size_t j = 0; j < n; ++j) {
            inv_eta.push_back(1.0 / eta[j]);
            share.push_back(gm[j] / eta[j]);
        }
        if (!quad) return;
        for (int a = 0; a < 3; ++a)
            for (int b = 0; b < 3; ++b) q[3 * a + b] = quad->q(a, b);
        q_trace = quad->q.trace();
        q_scale = 1.5 * quad->gm_reduced;
        q_reaction.clear();
        for (std::size_t j = 0; j < n; ++j) q_reaction.push_back(value(gm[j]) / value(gm[0]));
    }
};

// Positions and velocities of every slot, 3 per body; slot 0 holds the barycentre. The double map's kick leaves
// each Jacobi vector's length |x_j| and its inverse (r_known), which the next drift starts from (a kick does not
// move the positions): one square root and one division per body and step fewer.
template <class T>
struct JacobiState {
    std::vector<T> x, v;
    std::vector<double> r, inv_r;
    bool r_known = false;
};

// Inertial (slot order) -> Jacobi, for positions, velocities or accelerations alike (the same linear map).
template <class T>
void to_jacobi(const Chain<T>& c, const T* in, T* out) {
    T sum[3] = {c.gm[0] * in[0], c.gm[0] * in[1], c.gm[0] * in[2]};
    for (std::size_t j = 1; j < c.n; ++j) {
        for (int k = 0; k < 3; ++k) {
            out[3 * j + k] = in[3 * j + k] - sum[k] * c.inv_eta[j - 1];
            sum[k] += c.gm[j] * in[3 * j + k];
        }
    }
    for (int k = 0; k < 3; ++k) out[k] = sum[k] * c.inv_eta[c.n - 1];
}

template <class T>
void from_jacobi(const Chain<T>& c, const T* in, T* out) {
    T centre[3] = {in[0], in[1], in[2]};  // barycentre of slots 0..j, going down from j = n-1
    for (std::size_t j = c.n; j-- > 1;) {
        for (int k = 0; k < 3; ++k) {
            centre[k] -= c.share[j] * in[3 * j + k];
            out[3 * j + k] = in[3 * j + k] + centre[k];
        }
    }
    for (int k = 0; k < 3; ++k) out[k] = centre[k];
}

// add_central_quadrupole (integrate.hpp) on any scalar type, positions with stride 3: the same formula, for the
// tangent map (the double map's kick has it in central_attractions, sharing each distance with the monopole).
template <class T>
void add_quadrupole(const CentralQuadrupole& cq, const std::vector<T>& gm, const T* pos, T* acc) {
    const double trace = cq.q.trace();
    for (std::size_t i = 1; i < gm.size(); ++i) {
        const T rho[3] = {pos[3 * i] - pos[0], pos[3 * i + 1] - pos[1], pos[3 * i + 2] - pos[2]};
        const T r2 = rho[0] * rho[0] + rho[1] * rho[1] + rho[2] * rho[2];
        const T r = sqrt(r2), r5 = r2 * r2 * r;
        T qr[3];
        for (int a = 0; a < 3; ++a) qr[a] = cq.q(a, 0) * rho[0] + cq.q(a, 1) * rho[1] + cq.q(a, 2) * rho[2];
        const T rq = (rho[0] * qr[0] + rho[1] * qr[1] + rho[2] * qr[2]) * 5.0 / (r5 * r2);
        for (int a = 0; a < 3; ++a) {
            const T acc_a = 1.5 * cq.gm_reduced * ((2.0 * qr[a] + trace * rho[a]) / r5 - rq * rho[a]);
            acc[3 * i + static_cast<std::size_t>(a)] += acc_a;
            acc[static_cast<std::size_t>(a)] -= gm[i] / gm[0] * acc_a;
        }
    }
}

template <class T>
struct Scratch {
    std::vector<T> pos, acc, accj;
};

// The double map's attractions between the central body and every other body j: the monopole for j >= 2 (the
// pair (0, 1) is the first Kepler term) and the quadrupole (add_central_quadrupole's formula) for j >= 1, from one
// distance and one division per body.
void central_attractions(const Chain<double>& c, const double* pos, double* acc) {
    for (std::size_t j = 1; j < c.n; ++j) {
        const double dx = pos[3 * j] - pos[0], dy = pos[3 * j + 1] - pos[1], dz = pos[3 * j + 2] - pos[2];
        const double r2 = dx * dx + dy * dy + dz * dz, r = std::sqrt(r2);
        const double inv_r = 1.0 / r, inv_r2 = inv_r * inv_r, inv3 = inv_r2 * inv_r;
        double* a0 = acc;
        double* aj = acc + 3 * j;
        if (j >= 2) {
            const double f0 = c.gm[j] * inv3, fj = c.gm[0] * inv3;
            a0[0] += f0 * dx;
            a0[1] += f0 * dy;
            a0[2] += f0 * dz;
            aj[0] -= fj * dx;
            aj[1] -= fj * dy;
            aj[2] -= fj * dz;
        }
        if (c.quad) {
            const double* q = c.q;
            const double qr[3] = {q[0] * dx + q[1] * dy + q[2] * dz, q[3] * dx + q[4] * dy + q[5] * dz, q[6] * dx + q[7] * dy + q[8] * dz};
            const double inv5 = inv3 * inv_r2;
            const double rq = 5.0 * (dx * qr[0] + dy * qr[1] + dz * qr[2]) * inv5 * inv_r2;
            const double rho[3] = {dx, dy, dz};
            for (int a = 0; a < 3; ++a) {
                const double qa = c.q_scale * ((2.0 * qr[a] + c.q_trace * rho[a]) * inv5 - rq * rho[a]);
                aj[a] += qa;
                a0[a] -= c.q_reaction[j] * qa;
            }
        }
    }
}

// v_j += dt * (Jacobi acceleration of H_int), j >= 1. The scratch is sized once (no allocation per kick).
template <class T>
void kick(const Chain<T>& c, JacobiState<T>& s, double dt, Scratch<T>& w) {
    const std::size_t n = c.n;
    w.pos.resize(3 * n);
    w.acc.assign(3 * n, T(0.0));
    w.accj.resize(3 * n);
    from_jacobi(c, s.x.data(), w.pos.data());
    constexpr bool plain = std::is_same_v<T, double>;
    if constexpr (plain) central_attractions(c, w.pos.data(), w.acc.data());
    for (std::size_t i = plain ? 1 : 0; i < n; ++i) {
        for (std::size_t j = std::max<std::size_t>(i + 1, i == 0 ? 2 : 0); j < n; ++j) {
            const T dx = w.pos[3 * j] - w.pos[3 * i], dy = w.pos[3 * j + 1] - w.pos[3 * i + 1],
                    dz = w.pos[3 * j + 2] - w.pos[3 * i + 2];
            const T r2 = dx * dx + dy * dy + dz * dz;
            const T inv3 = 1.0 / (r2 * sqrt(r2));
            const T fi = c.gm[j] * inv3, fj = c.gm[i] * inv3;
            w.acc[3 * i] += fi * dx;
            w.acc[3 * i + 1] += fi * dy;
            w.acc[3 * i + 2] += fi * dz;
            w.acc[3 * j] -= fj * dx;
            w.acc[3 * j + 1] -= fj * dy;
            w.acc[3 * j + 2] -= fj * dz;
        }
    }
    if constexpr (!plain) {
        if (c.quad) add_quadrupole(*c.quad, c.gm, w.pos.data(), w.acc.data());
    }
    to_jacobi(c, w.acc.data(), w.accj.data());
    if constexpr (plain) {
        s.r.resize(n);
        s.inv_r.resize(n);
        for (std::size_t j = 1; j < n; ++j) {
            const double* x = &s.x[3 * j];
            s.r[j] = std::sqrt(x[0] * x[0] + x[1] * x[1] + x[2] * x[2]);  // as drift_bodies computes it
            s.inv_r[j] = 1.0 / s.r[j];
        }
        s.r_known = true;
    }
    for (std::size_t j = 1; j < n; ++j) {
        T* a = &w.accj[3 * j];
        if (j >= 2) {
            const T* x = &s.x[3 * j];
            if constexpr (plain) {
                const double f = c.eta[j] * (s.inv_r[j] * s.inv_r[j] * s.inv_r[j]);
                for (int k = 0; k < 3; ++k) a[k] += f * x[k];
            } else {
                const T r2 = x[0] * x[0] + x[1] * x[1] + x[2] * x[2];
                const T f = c.eta[j] / (r2 * sqrt(r2));
                for (int k = 0; k < 3; ++k) a[k] += f * x[k];
            }
        }
        for (int k = 0; k < 3; ++k) s.v[3 * j + k] += dt * a[k];
    }
}

// The double map's drift of Jacobi vectors 1..n-1, one stage at a time over all of them: their Kepler solves are
// independent, and each stage run over every body lets the processor overlap the bodies' long chains of
// dependent operations (square root, divisions, the Stumpff series) instead of waiting on one body at a time.
// Each body's numbers are exactly kepler_drift_xv's (the same functions in the same order); a body whose first
// Halley step does not converge is left to kepler_drift_xv, which repeats that step and goes on.
bool drift_bodies(const Chain<double>& c, JacobiState<double>& st, double dt) {
    constexpr std::size_t batch = 32;
    const std::size_t m = c.n - 1;
    if (m > batch || !std::isfinite(dt)) {
        st.r_known = false;
        for (std::size_t j = 1; j < c.n; ++j)
            if (!kepler_drift_xv(c.eta[j], dt, &st.x[3 * j], &st.v[3 * j])) return false;
        return true;
    }
    double r0[batch], inv_r0[batch], eta0[batch], beta[batch], s[batch], ds[batch], g[batch][4];
    const bool known = st.r_known;
    st.r_known = false;
    for (std::size_t i = 0; i < m; ++i) {
        const double* x = &st.x[3 * (i + 1)];
        const double* v = &st.v[3 * (i + 1)];
        const double mu = c.eta[i + 1];
        if (known) {
            r0[i] = st.r[i + 1];
            inv_r0[i] = st.inv_r[i + 1];
        } else {
            r0[i] = std::sqrt(x[0] * x[0] + x[1] * x[1] + x[2] * x[2]);
            inv_r0[i] = 1.0 / r0[i];
        }
        eta0[i] = x[0] * v[0] + x[1] * v[1] + x[2] * v[2];
        beta[i] = 2.0 * (mu * inv_r0[i]) - (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]);
    }
    for (std::size_t i = 0; i < m; ++i) {
        if (!(r0[i] > 0.0)) return false;
        s[i] = kepler_guess(c.eta[i + 1], dt, r0[i], inv_r0[i], eta0[i], beta[i]);
    }
    for (std::size_t i = 0; i < m; ++i) ds[i] = kepler_iterate(c.eta[i + 1], dt, r0[i], eta0[i], beta[i], 0, s[i], g[i]);
    for (std::size_t i = 0; i < m; ++i) {
        double* x = &st.x[3 * (i + 1)];
        double* v = &st.v[3 * (i + 1)];
        const double mu = c.eta[i + 1];
        if (std::isfinite(ds[i]) && kepler_converged(ds[i], s[i])) {
            shift_g(beta[i], ds[i], g[i]);
            if (!kepler_finish(mu, dt, r0[i], inv_r0[i], eta0[i], g[i], x, v)) return false;
        } else if (!kepler_drift_xv(mu, dt, x, v)) {
            return false;
        }
    }
    return true;
}

// Every Jacobi vector on its Kepler orbit for dt; the barycentre in a straight line.
template <class T>
bool drift(const Chain<T>& c, JacobiState<T>& s, double dt) {
    for (int k = 0; k < 3; ++k) s.x[k] += dt * s.v[k];
    if constexpr (std::is_same_v<T, double>) {
        return drift_bodies(c, s, dt);
    } else {
        for (std::size_t j = 1; j < c.n; ++j)
            if (!kepler_drift_tangent(c.eta[j], dt, &s.x[3 * j], &s.v[3 * j])) return false;
        return true;
    }
}

// The corrector's stages (a, b), in units of the step, applied in order (Wisdom, Holman & Touma 1996; a_k =
// k sqrt(7/40), b from their order conditions: order 3: b = -sqrt(10/7)/48; order 5: b1 = -sqrt(10/7)/144,
// b2 = 5 sqrt(10/7)/144), signed for the stage order and the D(a) K(-b) D(-2a) K(b) D(a) form used here (the
// convergence test fails with either sign flipped: the map is then of order 2). The inverse has b negated.
struct Stage {
    double a, b;
};
std::vector<Stage> corrector_stages(int order) {
    const double a1 = std::sqrt(7.0 / 40.0), a2 = 2.0 * a1, r = std::sqrt(10.0 / 7.0);
    if (order == 3) return {{a1, -r / 48.0}, {-a1, r / 48.0}};
    if (order == 5) {
        const double b51 = -r / 144.0, b52 = 5.0 * r / 144.0;
        return {{-a2, b51}, {-a1, b52}, {a1, -b52}, {a2, -b51}};
    }
    return {};
}

// C (sign = +1: mapped -> real) or C^-1 (sign = -1) as one list of drifts and kicks (amounts in units of the
// step): the stages' neighbouring drifts are added, drifts that cancel are dropped and the kicks they separated
// merged (kicks commute), which saves two drifts and a kick per pair of stages.
struct Op {
    bool is_kick;
    double amount;
};
std::vector<Op> corrector_ops(const std::vector<Stage>& stages, double sign) {
    std::vector<Op> out;
    auto push = [&](Op op) {
        if (!out.empty() && out.back().is_kick == op.is_kick) {
            out.back().amount += op.amount;
            if (!op.is_kick && out.back().amount == 0.0) out.pop_back();
        } else {
            out.push_back(op);
        }
    };
    for (const Stage& st : stages) {
        const double b = sign * st.b;
        // Z(a, b) = D(a) K(-b) D(-2a) K(b) D(a)
        for (Op op : {Op{false, st.a}, Op{true, -b}, Op{false, -2.0 * st.a}, Op{true, b}, Op{false, st.a}}) push(op);
    }
    return out;
}

// The ops, after a drift of `lead` days (merged into the first op when that is a drift: one drift fewer).
template <class T>
bool apply_ops(const Chain<T>& c, JacobiState<T>& s, double h, const std::vector<Op>& ops, Scratch<T>& w, double lead = 0.0) {
    std::size_t first = 0;
    if (lead != 0.0) {
        double d = lead;
        if (!ops.empty() && !ops[0].is_kick) {
            d += ops[0].amount * h;
            first = 1;
        }
        if (!drift(c, s, d)) return false;
    }
    for (std::size_t i = first; i < ops.size(); ++i) {
        const Op& op = ops[i];
        if (op.is_kick) kick(c, s, op.amount * h, w);
        else if (!drift(c, s, op.amount * h)) return false;
    }
    return true;
}

bool finite(const std::vector<double>& v) {
    return std::all_of(v.begin(), v.end(), [](double x) { return std::isfinite(x); });
}

// Nodes of one direction: times, barycentric states (original order), accelerations and jerks; with the tangent
// map, the derivatives of each node's position, velocity and acceleration too (WisdomHolmanResult::tangents).
struct Track {
    std::vector<double> times, states, accels, jerks, tangents;
};

template <class T>
class Runner {
public:
    Runner(const Chain<T>& c, const std::vector<Stage>& stages, double h, std::size_t parameters)
        : c_(c), to_real_(corrector_ops(stages, 1.0)), to_mapped_(corrector_ops(stages, -1.0)), h_(h), parameters_(parameters) {
        for (const T& g : c.gm_original) gm_values_.push_back(value(g));
    }

    // Records the real state at time t of mapped state `s`, which is a drift of `lead` days short of t.
    WisdomHolmanOutcome record(const JacobiState<T>& s, double t, double lead, Track& out) {
        real_ = s;  // reuses real_'s storage
        if (!apply_ops(c_, real_, h_, to_real_, w_, lead)) return WisdomHolmanOutcome::kepler_not_converged;
        return node(t, out) ? WisdomHolmanOutcome::ok : WisdomHolmanOutcome::non_finite_state;
    }

    // The node at t from the real state in real_.
    bool node(double t, Track& out) {
        const std::size_t n = c_.n;
        pos_.resize(3 * n);
        vel_.resize(3 * n);
        from_jacobi(c_, real_.x.data(), pos_.data());
        from_jacobi(c_, real_.v.data(), vel_.data());
        state_.resize(6 * n);
        for (std::size_t j = 0; j < n; ++j)
            for (std::size_t k = 0; k < 3; ++k) {
                state_[6 * c_.original[j] + k] = value(pos_[3 * j + k]);
                state_[6 * c_.original[j] + 3 + k] = value(vel_[3 * j + k]);
            }
        if (!finite(state_)) return false;
        if constexpr (!std::is_same_v<T, double>) {
            // The tangents of position, velocity and acceleration (the last for a quintic interpolation).
            acc_t_.assign(3 * n, T(0.0));
            for (std::size_t i = 0; i < n; ++i)
                for (std::size_t j = i + 1; j < n; ++j) {
                    const T dx = pos_[3 * j] - pos_[3 * i], dy = pos_[3 * j + 1] - pos_[3 * i + 1], dz = pos_[3 * j + 2] - pos_[3 * i + 2];
                    const T r2 = dx * dx + dy * dy + dz * dz;
                    const T inv3 = 1.0 / (r2 * sqrt(r2));
                    const T fi = c_.gm[j] * inv3, fj = c_.gm[i] * inv3;
                    const T d[3] = {dx, dy, dz};
                    for (int k = 0; k < 3; ++k) {
                        acc_t_[3 * i + static_cast<std::size_t>(k)] += fi * d[k];
                        acc_t_[3 * j + static_cast<std::size_t>(k)] -= fj * d[k];
                    }
                }
            if (c_.quad) add_quadrupole(*c_.quad, c_.gm, pos_.data(), acc_t_.data());
            const std::size_t p = parameters_, base = out.tangents.size();
            out.tangents.resize(base + tangent_rows_per_body * n * p);
            for (std::size_t j = 0; j < n; ++j) {
                double* row = &out.tangents[base + tangent_rows_per_body * c_.original[j] * p];
                for (std::size_t k = 0; k < 3; ++k)
                    for (std::size_t q = 0; q < p; ++q) {
                        row[k * p + q] = pos_[3 * j + k].d[q];
                        row[(3 + k) * p + q] = vel_[3 * j + k].d[q];
                        row[(6 + k) * p + q] = acc_t_[3 * j + k].d[q];
                    }
            }
            if (!std::all_of(out.tangents.begin() + static_cast<std::ptrdiff_t>(base), out.tangents.end(), [](double x) { return std::isfinite(x); }))
                return false;  // this node's only: checking them all each time would grow with the square of the nodes
        }
        acc_.resize(3 * n);
        jerk_.resize(3 * n);
        nbody_accelerations_and_jerks(n, gm_values_.data(), state_.data(), acc_.data(), jerk_.data());
        if (c_.quad) add_central_quadrupole(*c_.quad, gm_values_, state_.data(), 6, acc_.data(), 3);
        out.times.push_back(t);
        out.states.insert(out.states.end(), state_.begin(), state_.end());
        out.accels.insert(out.accels.end(), acc_.begin(), acc_.end());
        out.jerks.insert(out.jerks.end(), jerk_.begin(), jerk_.end());
        return true;
    }

    // From real state x0 at t0, `steps` steps of h (signed), a node every `every` steps and at the end.
    WisdomHolmanOutcome run(JacobiState<T> s, double t0, std::size_t steps, int every, Track& out) {
        const std::size_t nodes = steps / static_cast<std::size_t>(every) + 2, n = c_.n;
        out.times.reserve(nodes);
        out.states.reserve(6 * n * nodes);
        out.accels.reserve(3 * n * nodes);
        out.jerks.reserve(3 * n * nodes);
        if (parameters_ > 0) out.tangents.reserve(tangent_rows_per_body * n * parameters_ * nodes);
        if (!apply_ops(c_, s, h_, to_mapped_, w_)) return WisdomHolmanOutcome::kepler_not_converged;
        if (const WisdomHolmanOutcome o = record(s, t0, 0.0, out); o != WisdomHolmanOutcome::ok) return o;
        const double half = 0.5 * h_;
        double pending = half;  // drift owed before the next kick
        for (std::size_t k = 1; k <= steps; ++k) {
            // Drift-kick-drift, the two half drifts of consecutive steps as one drift. A node takes the mapped
            // state half a drift short of its time, and its corrector's first drift takes that half drift too.
            if (!drift(c_, s, pending)) return WisdomHolmanOutcome::kepler_not_converged;
            kick(c_, s, h_, w_);
            pending = h_;
            if (k % static_cast<std::size_t>(every) == 0 || k == steps)
                if (const WisdomHolmanOutcome o = record(s, t0 + static_cast<double>(k) * h_, half, out); o != WisdomHolmanOutcome::ok) return o;
        }
        return WisdomHolmanOutcome::ok;
    }

private:
    const Chain<T>& c_;
    std::vector<Op> to_real_, to_mapped_;
    double h_;
    std::size_t parameters_;
    std::vector<double> gm_values_;
    Scratch<T> w_;
    JacobiState<T> real_;
    std::vector<T> pos_, vel_, acc_t_;
    std::vector<double> state_, acc_, jerk_;
};

// The backward tangents reversed without their copy of the start, then the forward ones: the order join_nodes
// gives the nodes.
void join_tangents(std::vector<double>& out, const Track& back, const Track& fwd, std::size_t per_node) {
    const std::size_t nb = back.times.size();
    for (std::size_t k = nb; k-- > (nb > 0 ? 1 : 0);)
        out.insert(out.end(), back.tangents.begin() + static_cast<std::ptrdiff_t>(per_node * k),
                   back.tangents.begin() + static_cast<std::ptrdiff_t>(per_node * (k + 1)));
    out.insert(out.end(), fwd.tangents.begin(), fwd.tangents.end());
}

// The scalar of slot values: double, or a Dual seeded with the row of derivatives.
template <class T>
T seeded(double v, const double* row, std::size_t parameters) {
    T x(v);
    if constexpr (!std::is_same_v<T, double>) {
        for (std::size_t q = 0; q < parameters; ++q) x.d[q] = row ? row[q] : 0.0;
    }
    return x;
}

template <class T>
WisdomHolmanResult integrate_map(const System& s, double t_begin, double t_end, const WisdomHolmanOptions& options,
                                 const TangentSeed* seed) {
    WisdomHolmanResult result;
    Ephemeris& eph = result.ephemeris;
    eph.bodies = s.bodies;
    eph.gm = s.gm;
    const std::size_t n = s.size();
    if (!finite(s.state) || n < 2) {
        result.outcome = WisdomHolmanOutcome::non_finite_state;
        return result;
    }
    const std::size_t p = seed ? seed->parameters : 0;
    Chain<T> c;
    c.n = n;
    c.quad = options.central_quadrupole ? &*options.central_quadrupole : nullptr;
    c.original.resize(n);
    std::iota(c.original.begin(), c.original.end(), std::size_t{0});
    // Jacobi order: outwards by distance from the central body at the start (ties keep their order).
    std::stable_sort(c.original.begin() + 1, c.original.end(), [&](std::size_t a, std::size_t b) {
        return (s.position(a) - s.position(0)).norm() < (s.position(b) - s.position(0)).norm();
    });
    for (std::size_t i = 0; i < n; ++i) c.gm_original.push_back(seeded<T>(s.gm[i], seed ? &seed->gm[i * p] : nullptr, p));
    for (std::size_t j = 0; j < n; ++j) {
        c.gm.push_back(c.gm_original[c.original[j]]);
        c.eta.push_back(j > 0 ? c.eta[j - 1] + c.gm[j] : c.gm[j]);
    }
    c.precompute();
    JacobiState<T> x0;
    std::vector<T> pos(3 * n), vel(3 * n);
    for (std::size_t j = 0; j < n; ++j)
        for (std::size_t k = 0; k < 3; ++k) {
            const std::size_t ip = 6 * c.original[j] + k, iv = ip + 3;
            pos[3 * j + k] = seeded<T>(s.state[ip], seed ? &seed->state[ip * p] : nullptr, p);
            vel[3 * j + k] = seeded<T>(s.state[iv], seed ? &seed->state[iv * p] : nullptr, p);
        }
    x0.x.resize(3 * n);
    x0.v.resize(3 * n);
    to_jacobi(c, pos.data(), x0.x.data());
    to_jacobi(c, vel.data(), x0.v.data());

    const double h = options.step_days > 0.0 ? options.step_days : shortest_period(s) * options.step_fraction;
    result.step_days = h;
    const std::vector<Stage> stages = corrector_stages(options.corrector_order);
    const int every = std::max(1, options.node_every);
    const double t_lo = std::min(t_begin, s.time), t_hi = std::max(t_end, s.time);
    auto steps_to = [&](double span) {
        std::size_t k = static_cast<std::size_t>(std::max(0.0, std::ceil(span / h)));
        while (static_cast<double>(k) * h < span) ++k;
        return k;
    };
    const std::size_t nb = steps_to(s.time - t_lo), nf = steps_to(t_hi - s.time);
    if (nb + nf > options.max_steps) {
        result.outcome = WisdomHolmanOutcome::too_many_steps;
        return result;
    }
    Track back, fwd;
    WisdomHolmanOutcome out = WisdomHolmanOutcome::ok;
    if (nb > 0) {
        Runner<T> r(c, stages, -h, p);
        out = r.run(x0, s.time, nb, every, back);
    }
    if (out == WisdomHolmanOutcome::ok) {
        Runner<T> r(c, stages, h, p);
        out = r.run(x0, s.time, nf, every, fwd);
    }
    result.outcome = out;
    result.steps = nb + nf;
    join_nodes(eph, back, fwd);
    if (p > 0) {
        result.tangent_parameters = p;
        join_tangents(result.tangents, back, fwd, tangent_rows_per_body * n * p);
    }
    return result;
}

}  // namespace

WisdomHolmanResult integrate_wisdom_holman(const System& s, double t_begin, double t_end, const WisdomHolmanOptions& options) {
    return integrate_map<double>(s, t_begin, t_end, options, nullptr);
}

WisdomHolmanResult integrate_wisdom_holman(const System& s, double t_begin, double t_end, const WisdomHolmanOptions& options,
                                           const TangentSeed& seed) {
    const std::size_t n = s.size(), p = seed.parameters;
    if (p == 0 || p > max_tangent_parameters || seed.state.size() != 6 * n * p || seed.gm.size() != n * p)
        throw std::invalid_argument("integrate_wisdom_holman: the tangent seed does not match the system");
    // The smallest derivative width that holds the parameters: the cost of a Dual operation grows with it.
    if (p <= 8) return integrate_map<Dual<8>>(s, t_begin, t_end, options, &seed);
    if (p <= 16) return integrate_map<Dual<16>>(s, t_begin, t_end, options, &seed);
    if (p <= 24) return integrate_map<Dual<24>>(s, t_begin, t_end, options, &seed);
    if (p <= 32) return integrate_map<Dual<32>>(s, t_begin, t_end, options, &seed);
    return integrate_map<Dual<48>>(s, t_begin, t_end, options, &seed);
}

}  // namespace wayward
