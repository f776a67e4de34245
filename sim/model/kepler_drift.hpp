// The Kepler drift of the Wisdom-Holman map (wisdom_holman.cpp), for doubles and, through Dual numbers, for the
// tangent map: Stumpff functions, the root of the universal Kepler equation, and the f and g functions (Danby 1988,
// "Fundamentals of Celestial Mechanics", 2nd ed., ch. 6.9). Internal to the fitting model: the one public drift is
// kepler_drift (wisdom_holman.hpp). Hand-written: no Debian package provides a universal-variable Kepler drift.
#pragma once

#include <array>
#include <cmath>

#include "sim/model/dual.hpp"

namespace wayward::kepler {

using std::sqrt;  // the double overload beside Dual's (dual.hpp), for the code written for both

// Stumpff functions c0..c3 of z (Danby 1988, 6.9): series for |z| <= 0.1, then z is brought back by the
// quadrupling identities c0(4z) = 2 c0^2 - 1, c1(4z) = c0 c1, c2(4z) = c1^2 / 2, c3(4z) = (c2 + c0 c3) / 4.
template <class T>
void stumpff(T z, std::array<T, 4>& c) {
    int quarterings = 0;
    while (std::abs(value(z)) > 0.1 && quarterings < 200) {
        z *= 0.25;
        ++quarterings;
    }
    // 1/(2k+2)! and 1/(2k+3)! for k = 0..7: the next term is below 1e-20 for |z| <= 0.1. The map's drifts have
    // |z| <= 0.01 (a step of 1/96 of the shortest period: z ~ 0.004 at most; the outer bodies' far less), where
    // fewer terms do, the next one staying below 5e-18, under the rounding of c2 ~ 1/2 and c3 ~ 1/6: five terms
    // for |z| <= 0.01 (z^5 / 12! <= 2.1e-19), four for |z| <= 2e-3 (z^4 / 10! <= 4.4e-18), three for
    // |z| <= 5e-5 (z^3 / 8! <= 3.1e-18).
    static constexpr double inv2[8] = {1.0 / 2, 1.0 / 24, 1.0 / 720, 1.0 / 40320, 1.0 / 3628800, 1.0 / 479001600,
                                       1.0 / 87178291200.0, 1.0 / 20922789888000.0};
    static constexpr double inv3[8] = {1.0 / 6, 1.0 / 120, 1.0 / 5040, 1.0 / 362880, 1.0 / 39916800, 1.0 / 6227020800.0,
                                       1.0 / 1307674368000.0, 1.0 / 355687428096000.0};
    T c2 = 0.0, c3 = 0.0;
    const double az = std::abs(value(z));
    for (int k = az <= 5e-5 ? 2 : az <= 2e-3 ? 3 : az <= 0.01 ? 4 : 7; k >= 0; --k) {
        c2 = inv2[k] - z * c2;
        c3 = inv3[k] - z * c3;
    }
    T c1 = 1.0 - z * c3, c0 = 1.0 - z * c2;
    for (int i = 0; i < quarterings; ++i) {
        const T n3 = 0.25 * (c2 + c0 * c3), n2 = 0.5 * c1 * c1, n1 = c0 * c1, n0 = 2.0 * c0 * c0 - 1.0;
        c0 = n0;
        c1 = n1;
        c2 = n2;
        c3 = n3;
    }
    c = {c0, c1, c2, c3};
}

// G_0..G_3 at s + d from their values at s (dG_k/ds = G_{k-1}, dG_0/ds = -beta G_1), to third order in d: for
// |d| <= 1e-6 |s| the next term is below 1e-24 of them. Saves a Stumpff evaluation at the converged root.
inline void shift_g(double beta, double d, double g[4]) {
    const double e1 = d, e2 = 0.5 * d * d, e3 = e2 * d * (1.0 / 3.0);
    const double g0 = g[0], g1 = g[1];
    g[3] = g[3] + g[2] * e1 + g1 * e2 + g0 * e3;
    g[2] = g[2] + g1 * e1 + g0 * e2 - beta * g1 * e3;
    g[1] = g1 + g0 * e1 - beta * (g1 * e2 + g0 * e3);
    g[0] = g0 - beta * (g1 * e1 + g0 * e2 - beta * g1 * e3);
}

// Starting guess for the root of the universal Kepler equation F(s) = r0 G1 + eta0 G2 + mu G3 - dt = 0 (G_k =
// s^k c_k(beta s^2), F' = r > 0): the series of s(dt) to fourth order, from dt = r0 s + eta0 s^2/2 + (mu - beta
// r0) s^3/6 - eta0 beta s^4/24 + ... reverted (s = u - p u^2 + (2p^2 - q) u^3 + (5pq - 5p^3 - w) u^4); for a
// step of 1/96 of a period its error is ~1e-7 of s or less, so that the first Halley step both converges and
// passes the test in kepler_iterate: one Stumpff evaluation per drift. A long drift (the series' terms no longer
// small) starts from dt / r0 and leaves the work to the iteration.
inline double kepler_guess(double mu, double dt, double r0, double inv_r0, double eta0, double beta) {
    const double u = dt * inv_r0, p = 0.5 * eta0 * inv_r0, q = (mu - beta * r0) * inv_r0 * (1.0 / 6.0),
                 w = -eta0 * beta * inv_r0 * (1.0 / 24.0);
    const bool short_drift = std::abs(p * u) < 0.1 && std::abs(q * u * u) < 0.1 && std::abs(w * u * u * u) < 0.1;
    return short_drift ? u * (1.0 + u * (-p + u * ((2.0 * p * p - q) + u * (5.0 * p * q - 5.0 * p * p * p - w)))) : u;
}

// One iteration on s: F and its derivatives from G_0..G_3 at s (left in g), then Halley's correction (iteration
// `it` < 12) or Laguerre's (n = 5, Conway 1986), which converges from far worse guesses. Returns the correction
// (non-finite when it failed); s is moved by it.
inline double kepler_iterate(double mu, double dt, double r0, double eta0, double beta, int it, double& s, double g[4]) {
    std::array<double, 4> c{};
    stumpff(beta * s * s, c);
    g[0] = c[0];
    g[1] = s * c[1];
    g[2] = s * s * c[2];
    g[3] = s * s * s * c[3];
    const double f = r0 * g[1] + eta0 * g[2] + mu * g[3] - dt;
    const double fp = r0 * g[0] + eta0 * g[1] + mu * g[2], fpp = eta0 * g[0] + (mu - beta * r0) * g[1];
    double ds;
    if (it < 12) {
        ds = -f * fp / (fp * fp - 0.5 * f * fpp);  // -f / (fp - f fpp / (2 fp)), one division
    } else {
        const double n = 5.0;
        const double disc = std::sqrt(std::abs((n - 1.0) * (n - 1.0) * fp * fp - n * (n - 1.0) * f * fpp));
        ds = -n * f / (fp + std::copysign(disc, fp));
    }
    if (std::isfinite(ds)) s += ds;
    return ds;
}

// Both iterations converge cubically: once a correction is below 1e-6 of s, the one after it would be below
// 1e-18 of s, under the rounding of s itself.
inline bool kepler_converged(double ds, double s) { return std::abs(ds) <= 1e-6 * std::abs(s) || ds == 0.0; }

// The root s of the universal Kepler equation, and, when g is given, G_0..G_3 at it. False if it did not converge.
inline bool kepler_root(double mu, double dt, double r0, double eta0, double beta, double& s, double* g = nullptr) {
    s = kepler_guess(mu, dt, r0, 1.0 / r0, eta0, beta);
    double gs[4];
    for (int it = 0; it < 60; ++it) {
        const double ds = kepler_iterate(mu, dt, r0, eta0, beta, it, s, gs);
        if (!std::isfinite(ds)) return false;
        if (kepler_converged(ds, s)) {
            if (g) {
                for (int k = 0; k < 4; ++k) g[k] = gs[k];
                shift_g(beta, ds, g);
            }
            return true;
        }
    }
    return false;
}

// The end of a drift from G_0..G_3 at the root (f and g functions): false if the new distance is not positive.
inline bool kepler_finish(double mu, double dt, double r0, double inv_r0, double eta0, const double g[4], double* x, double* v) {
    const double r = r0 * g[0] + eta0 * g[1] + mu * g[2];
    if (!(r > 0.0) || !std::isfinite(r)) return false;
    // f and g in difference form (f - 1, g' - 1) so that the small change is not lost against the state.
    const double inv_r = 1.0 / r, mu_r0 = mu * inv_r0;
    const double f_m1 = -mu_r0 * g[2], gg = dt - mu * g[3];
    const double fdot = -mu_r0 * g[1] * inv_r, gdot_m1 = -mu * g[2] * inv_r;
    for (int k = 0; k < 3; ++k) {
        const double x0 = x[k], v0 = v[k];
        x[k] = x0 + (f_m1 * x0 + gg * v0);
        v[k] = v0 + (fdot * x0 + gdot_m1 * v0);
    }
    return true;
}

// kepler_drift on three-component arrays.
inline bool kepler_drift_xv(double mu, double dt, double* x, double* v) {
    const double r0 = std::sqrt(x[0] * x[0] + x[1] * x[1] + x[2] * x[2]);
    if (!(r0 > 0.0) || !std::isfinite(dt)) return false;
    const double inv_r0 = 1.0 / r0;
    const double eta0 = x[0] * v[0] + x[1] * v[1] + x[2] * v[2];
    const double beta = 2.0 * (mu * inv_r0) - (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]);  // mu / a
    double s = 0.0, g[4];
    if (!kepler_root(mu, dt, r0, eta0, beta, s, g)) return false;
    return kepler_finish(mu, dt, r0, inv_r0, eta0, g, x, v);
}

// The drift of one Jacobi vector (x, v: 3 each) in Dual arithmetic: the root from values, one Newton step in
// Dual arithmetic at it (which carries the root's derivatives), then f and g as in kepler_drift.
template <class T>
bool kepler_drift_tangent(const T& mu, double dt, T* x, T* v) {
    const T r0 = sqrt(x[0] * x[0] + x[1] * x[1] + x[2] * x[2]);
    const T eta0 = x[0] * v[0] + x[1] * v[1] + x[2] * v[2];
    const T beta = 2.0 * mu / r0 - (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]);
    if (!(value(r0) > 0.0) || !std::isfinite(dt)) return false;
    double s = 0.0;
    if (!kepler_root(value(mu), dt, value(r0), value(eta0), value(beta), s)) return false;
    std::array<T, 4> c{};
    stumpff(beta * (s * s), c);
    const T residual = r0 * (s * c[1]) + eta0 * (s * s * c[2]) + mu * (s * s * s * c[3]) - dt;
    const double slope = value(r0 * c[0] + eta0 * (s * c[1]) + mu * (s * s * c[2]));
    const T st = s - residual / slope;
    stumpff(beta * (st * st), c);
    const T g1 = st * c[1], g2 = st * st * c[2], g3 = st * st * st * c[3];
    const T r = r0 * c[0] + eta0 * g1 + mu * g2;
    if (!(value(r) > 0.0) || !std::isfinite(value(r))) return false;
    const T f_m1 = -mu * g2 / r0, g = dt - mu * g3;
    const T fdot = -mu * g1 / (r0 * r), gdot_m1 = -mu * g2 / r;
    for (int k = 0; k < 3; ++k) {
        const T x0 = x[k], v0 = v[k];
        x[k] = x0 + (f_m1 * x0 + g * v0);
        v[k] = v0 + (fdot * x0 + gdot_m1 * v0);
    }
    return true;
}

}  // namespace wayward::kepler
