// Odeint drivers for the truth integration and the degree-7 Hermite dense ephemeris. See integrate.hpp.
#include "sim/physics/integrate.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include <boost/numeric/odeint.hpp>

#include "sim/base/units.hpp"
#include "sim/physics/gauss_radau.hpp"

namespace wayward {

namespace odeint = boost::numeric::odeint;
using StateType = std::vector<double>;

const std::vector<IntegratorMethod>& integrator_methods() {
    static const std::vector<IntegratorMethod> methods = {
        {"gauss-radau", "Gauss-Radau 15th order (Everhart 1985), adaptive; the default truth integrator", 15},
        {"rkf78", "Runge-Kutta-Fehlberg 7(8), adaptive", 8},
        {"dopri5", "Dormand-Prince 5(4), adaptive; cheaper per step, more steps at tight tolerance", 5},
        {"bulirsch-stoer", "Bulirsch-Stoer extrapolation, adaptive order; few, long, costly steps", 0},
    };
    return methods;
}

std::string to_string(IntegrationOutcome outcome) {
    switch (outcome) {
        case IntegrationOutcome::ok: return "ok";
        case IntegrationOutcome::step_size_underflow: return "step size underflow (close encounter?)";
        case IntegrationOutcome::non_finite_state: return "state became non-finite";
        case IntegrationOutcome::too_many_steps: return "too many steps";
        case IntegrationOutcome::unknown_method: return "unknown integration method";
    }
    return "?";
}

double shortest_period(const System& s) {
    double best = 1e300;
    for (std::size_t i = 1; i < s.size(); ++i) {
        const StateVector h = heliocentric(s, i);
        const double mu = s.gm[0] + s.gm[i];
        const double energy = 0.5 * h.velocity.squaredNorm() - mu / h.position.norm();
        if (energy < 0.0) {
            const double a = -mu / (2.0 * energy);
            best = std::min(best, orbital_period(a, mu));
        } else {
            // Unbound: use the crossing time of the current distance as a time scale.
            best = std::min(best, h.position.norm() / std::max(h.velocity.norm(), 1e-12));
        }
    }
    return best;
}

// Acceleration of every other body by the averaged quadrupole of body 0 (see CentralQuadrupole), and the
// reaction on body 0: a = (3 G mu / 2) [2 Q rho / rho^5 - 5 (rho.Q.rho) rho / rho^7 + tr(Q) rho / rho^5],
// rho from body 0 to the body (the gradient of the quadrupole term of the multipole expansion).
void add_central_quadrupole(const CentralQuadrupole& cq, const std::vector<double>& gm, const double* pos, std::size_t stride,
                    double* acc, std::size_t acc_stride) {
    const std::size_t n = gm.size();
    const double trace = cq.q.trace();
    const double total = gm[0];
    for (std::size_t i = 1; i < n; ++i) {
        const Vec3 rho(pos[stride * i] - pos[0], pos[stride * i + 1] - pos[1], pos[stride * i + 2] - pos[2]);
        const double r2 = rho.squaredNorm(), r = std::sqrt(r2), r5 = r2 * r2 * r;
        const Vec3 qr = cq.q * rho;
        const Vec3 a = 1.5 * cq.gm_reduced * ((2.0 * qr + trace * rho) / r5 - 5.0 * rho.dot(qr) * rho / (r5 * r2));
        for (int c = 0; c < 3; ++c) {
            acc[acc_stride * i + static_cast<std::size_t>(c)] += a[c];
            acc[static_cast<std::size_t>(c)] -= gm[i] / total * a[c];
        }
    }
}

namespace {

struct Rhs {
    const std::vector<double>* gm;
    std::size_t* calls;
    const CentralQuadrupole* quad = nullptr;
    void operator()(const StateType& x, StateType& dxdt, double /*t*/) const {
        ++*calls;
        nbody_derivative(gm->size(), gm->data(), x.data(), dxdt.data());
        if (quad) add_central_quadrupole(*quad, *gm, x.data(), 6, dxdt.data() + 3, 6);
    }
};

struct Recorder {
    std::size_t n;
    const std::vector<double>* gm;
    const CentralQuadrupole* quad = nullptr;
    std::vector<double> times = {}, states = {}, accels = {}, jerks = {};
    std::vector<double> step_poly = {};  // Gauss-Radau only: per step, see Ephemeris::step_poly
    std::vector<double> pos = {}, acc = {}, jerk = {};  // scratch, reused for every node
    void record(double t, const StateType& x) {
        times.push_back(t);
        states.insert(states.end(), x.begin(), x.end());
        pos.resize(3 * n);
        acc.resize(3 * n);
        jerk.resize(3 * n);
        for (std::size_t i = 0; i < n; ++i)
            for (std::size_t k = 0; k < 3; ++k) pos[3 * i + k] = x[6 * i + k];
        nbody_accelerations_and_jerks(n, gm->data(), x.data(), acc.data(), jerk.data());
        if (quad) add_central_quadrupole(*quad, *gm, pos.data(), 3, acc.data(), 3);
        accels.insert(accels.end(), acc.begin(), acc.end());
        jerks.insert(jerks.end(), jerk.begin(), jerk.end());
    }
};

bool finite_state(const StateType& x) {
    return std::all_of(x.begin(), x.end(), [](double v) { return std::isfinite(v); });
}

// One direction of integration from (t0, x) to t1, recording every accepted step.
template <class Controlled>
IntegrationOutcome drive(Controlled& stepper, const Rhs& rhs, StateType x, double t0, double t1, double max_step,
                         std::size_t max_steps, Recorder& rec, IntegrationResult& result) {
    const double dir = t1 >= t0 ? 1.0 : -1.0;
    double t = t0;
    double dt = dir * std::min(max_step, std::abs(t1 - t0));
    rec.record(t, x);
    if (t1 == t0) return IntegrationOutcome::ok;
    const double tiny = 1e-12 * std::max(1.0, std::abs(t1 - t0));
    while (dir * (t1 - t) > 0.0) {
        if (result.steps + result.rejected_steps >= max_steps) return IntegrationOutcome::too_many_steps;
        double remaining = t1 - t;
        if (std::abs(dt) > std::abs(remaining)) dt = remaining;
        if (std::abs(dt) > max_step) dt = dir * max_step;
        // Use the step that t + dt can represent, so that the sum of many steps carries no drift in time.
        dt = (t + dt) - t;
        const odeint::controlled_step_result r = stepper.try_step(rhs, x, t, dt);
        if (r == odeint::success) {
            ++result.steps;
            if (!finite_state(x)) return IntegrationOutcome::non_finite_state;
            // Land exactly on the end point when the remaining interval is negligible.
            if (std::abs(t1 - t) < tiny) t = t1;
            rec.record(t, x);
        } else {
            ++result.rejected_steps;
            if (std::abs(dt) < tiny) return IntegrationOutcome::step_size_underflow;
        }
    }
    return IntegrationOutcome::ok;
}

// One direction of Gauss-Radau integration from (t0, x) to t1, recording every accepted step and its polynomial.
// The step starts at `first_step` and then follows the stepper's own control (no cap: the dense output is the
// step's own polynomial).
IntegrationOutcome drive_radau(const Rhs& rhs, const StateType& x, double t0, double t1, double first_step,
                               const IntegratorOptions& o, Recorder& rec, IntegrationResult& result) {
    const std::size_t n = rhs.gm->size();
    GaussRadau15 stepper(
        n,
        [&](const double* pos, double* acc) {
            ++*rhs.calls;
            nbody_accelerations(n, rhs.gm->data(), pos, acc);
            if (rhs.quad) add_central_quadrupole(*rhs.quad, *rhs.gm, pos, 3, acc, 3);
        },
        o.step_precision);
    stepper.start(x);
    const double dir = t1 >= t0 ? 1.0 : -1.0;
    double t = t0;
    double dt = dir * std::min(first_step, std::abs(t1 - t0));
    rec.record(t, x);
    if (t1 == t0) return IntegrationOutcome::ok;
    const double tiny = 1e-12 * std::max(1.0, std::abs(t1 - t0));
    StateType now(6 * n);
    std::vector<double> poly;
    // Room for the steps a run usually takes (about four times the first step's length), so that the node arrays
    // are not copied as they grow; capped, as address space counts against a memory limit even untouched.
    const auto expected = static_cast<std::size_t>(std::min(2e4, std::abs(t1 - t0) / std::max(4.0 * first_step, 1e-300))) + 2;
    rec.times.reserve(expected);
    rec.states.reserve(6 * n * expected);
    rec.accels.reserve(3 * n * expected);
    rec.jerks.reserve(3 * n * expected);
    rec.step_poly.reserve((2 + 30 * n) * expected);
    while (dir * (t1 - t) > 0.0) {
        if (result.steps + result.rejected_steps >= o.max_steps) return IntegrationOutcome::too_many_steps;
        const double remaining = t1 - t;
        if (std::abs(dt) > std::abs(remaining)) dt = remaining;
        dt = (t + dt) - t;  // as in drive(): no drift in time over many steps
        if (stepper.try_step(dt)) {
            ++result.steps;
            stepper.state(now);
            if (!finite_state(now)) return IntegrationOutcome::non_finite_state;
            const double t_start = t;
            t += dt;
            if (std::abs(t1 - t) < tiny) t = t1;
            stepper.step_polynomial(poly);
            rec.step_poly.push_back(t_start);
            rec.step_poly.push_back(t - t_start);
            rec.step_poly.insert(rec.step_poly.end(), poly.begin(), poly.end());
            rec.record(t, now);
        } else {
            ++result.rejected_steps;
            if (std::abs(dt) < tiny) return IntegrationOutcome::step_size_underflow;
        }
        dt = stepper.next_step();
        if (!std::isfinite(dt)) return IntegrationOutcome::non_finite_state;
    }
    return IntegrationOutcome::ok;
}

IntegrationOutcome drive_method(const std::string& method, const Rhs& rhs, const StateType& x, double t0, double t1,
                                double max_step, const IntegratorOptions& o, Recorder& rec, IntegrationResult& result) {
    if (method == "gauss-radau") return drive_radau(rhs, x, t0, t1, max_step, o, rec, result);
    if (method == "rkf78") {
        auto st = odeint::make_controlled(o.abs_tol, o.rel_tol, odeint::runge_kutta_fehlberg78<StateType>());
        return drive(st, rhs, x, t0, t1, max_step, o.max_steps, rec, result);
    }
    if (method == "dopri5") {
        auto st = odeint::make_controlled(o.abs_tol, o.rel_tol, odeint::runge_kutta_dopri5<StateType>());
        return drive(st, rhs, x, t0, t1, max_step, o.max_steps, rec, result);
    }
    if (method == "bulirsch-stoer") {
        odeint::bulirsch_stoer<StateType> st(o.abs_tol, o.rel_tol);
        return drive(st, rhs, x, t0, t1, max_step, o.max_steps, rec, result);
    }
    return IntegrationOutcome::unknown_method;
}

}  // namespace

IntegrationResult integrate(const System& s, double t_begin, double t_end, const IntegratorOptions& options) {
    if (!(t_end >= t_begin)) throw std::invalid_argument("integrate: the span ends before it begins");
    IntegrationResult result;
    Ephemeris& eph = result.ephemeris;
    eph.bodies = s.bodies;
    eph.gm = s.gm;
    const std::size_t n = s.size();
    const double max_step = shortest_period(s) * options.max_step_fraction;
    const CentralQuadrupole* quad = options.central_quadrupole ? &*options.central_quadrupole : nullptr;
    Rhs rhs{&eph.gm, &result.rhs_calls, quad};
    const StateType x0 = s.state;
    if (!finite_state(x0)) {
        result.outcome = IntegrationOutcome::non_finite_state;
        return result;
    }

    Recorder back{n, &eph.gm, quad};
    Recorder fwd{n, &eph.gm, quad};
    const double t_lo = std::min(t_begin, s.time), t_hi = std::max(t_end, s.time);
    IntegrationOutcome out = IntegrationOutcome::ok;
    if (t_lo < s.time) out = drive_method(options.method, rhs, x0, s.time, t_lo, max_step, options, back, result);
    if (out == IntegrationOutcome::ok)
        out = drive_method(options.method, rhs, x0, s.time, t_hi, max_step, options, fwd, result);
    result.outcome = out;

    join_nodes(eph, back, fwd);
    return result;
}

System propagate(const System& s, double t, const IntegratorOptions& options) {
    IntegrationResult r = integrate(s, std::min(s.time, t), std::max(s.time, t), options);
    if (r.outcome != IntegrationOutcome::ok) throw std::runtime_error("integration failed: " + to_string(r.outcome));
    return r.ephemeris.system_at(t);
}

namespace {
// Hermite basis of degree 7 on s in [0, 1] matching position, velocity, acceleration and jerk at both ends
// (coefficients solved exactly). Weights apply to p0, h v0, h^2 a0, h^3 j0, p1, h v1, h^2 a1, h^3 j1.
struct Hermite7 {
    double w[8];   // position weights
    double dw[8];  // their derivatives d/ds
    explicit Hermite7(double s) {
        static constexpr double c[8][8] = {
            {1, 0, 0, 0, -35, 84, -70, 20},
            {0, 1, 0, 0, -20, 45, -36, 10},
            {0, 0, 0.5, 0, -5, 10, -7.5, 2},
            {0, 0, 0, 1.0 / 6.0, -2.0 / 3.0, 1, -2.0 / 3.0, 1.0 / 6.0},
            {0, 0, 0, 0, 35, -84, 70, -20},
            {0, 0, 0, 0, -15, 39, -34, 10},
            {0, 0, 0, 0, 2.5, -7, 6.5, -2},
            {0, 0, 0, 0, -1.0 / 6.0, 0.5, -0.5, 1.0 / 6.0},
        };
        for (int i = 0; i < 8; ++i) {
            double v = 0.0, dv = 0.0;
            for (int k = 7; k >= 0; --k) v = v * s + c[i][k];
            for (int k = 7; k >= 1; --k) dv = dv * s + k * c[i][k];
            w[i] = v;
            dw[i] = dv;
        }
    }
};
}  // namespace

StateVector Ephemeris::state(std::size_t body, double t) const {
    if (!covers(t)) throw std::out_of_range("ephemeris: time " + std::to_string(t) + " d is outside the integrated span");
    if (body >= size()) throw std::out_of_range("ephemeris: no such body");
    const std::size_t n = size();
    if (times.size() == 1) {
        const double* x = &states[6 * body];
        return {Vec3(x[0], x[1], x[2]), Vec3(x[3], x[4], x[5])};
    }
    auto it = std::upper_bound(times.begin(), times.end(), t);
    std::size_t k1 = static_cast<std::size_t>(it - times.begin());
    if (k1 >= times.size()) k1 = times.size() - 1;
    if (k1 == 0) k1 = 1;
    const std::size_t k0 = k1 - 1;
    if (!step_poly.empty()) {
        // The Gauss-Radau step's own polynomial, anchored where that step began (the later node for steps
        // taken backwards in time).
        const double* p = &step_poly[k0 * (2 + 30 * n)];
        const double s = (t - p[0]) / p[1];
        StateVector out;
        double pos[3], vel[3];
        gauss_radau_evaluate(p + 2 + 30 * body, p[1], s, pos, vel);
        out.position = Vec3(pos[0], pos[1], pos[2]);
        out.velocity = Vec3(vel[0], vel[1], vel[2]);
        return out;
    }
    const double h = times[k1] - times[k0];
    const double s = (t - times[k0]) / h;
    const Hermite7 b(s);
    const double* x0 = &states[6 * n * k0 + 6 * body];
    const double* x1 = &states[6 * n * k1 + 6 * body];
    const double* a0 = &accels[3 * n * k0 + 3 * body];
    const double* a1 = &accels[3 * n * k1 + 3 * body];
    const double* j0 = &jerks[3 * n * k0 + 3 * body];
    const double* j1 = &jerks[3 * n * k1 + 3 * body];
    const double h2 = h * h, h3 = h2 * h;
    StateVector out;
    for (int c = 0; c < 3; ++c) {
        const auto u = static_cast<std::size_t>(c);
        const double v[8] = {x0[u], h * x0[3 + u], h2 * a0[u], h3 * j0[u], x1[u], h * x1[3 + u], h2 * a1[u], h3 * j1[u]};
        double p = 0.0, dp = 0.0;
        for (int i = 0; i < 8; ++i) {
            p += b.w[i] * v[i];
            dp += b.dw[i] * v[i];
        }
        out.position[c] = p;
        out.velocity[c] = dp / h;
    }
    return out;
}

Vec3 Ephemeris::position(std::size_t body, double t) const { return state(body, t).position; }

System Ephemeris::system_at(double t) const {
    System s;
    s.bodies = bodies;
    s.gm = gm;
    s.time = t;
    s.state.resize(6 * size());
    for (std::size_t i = 0; i < size(); ++i) s.set(i, state(i, t));
    return s;
}

}  // namespace wayward
