// The 15th-order Gauss-Radau stepper (Everhart 1985; Rein & Spiegel 2015, MNRAS 446, 1424). See gauss_radau.hpp.
// Notation: over a step of dt the acceleration is a(s) = a0 + sum_k b_k s^(k+1), s = (t - t0) / dt, and in
// Newton form a0 + sum_m g_m s (s - h_1) ... (s - h_m) on the Gauss-Radau spacings h_1..h_7; the g follow from
// the accelerations at the spacings by divided differences, and b = C g where C holds the monomial coefficients
// of the Newton products (computed below rather than tabulated).
#include "sim/physics/gauss_radau.hpp"

#include <algorithm>
#include <cmath>
#include <utility>

namespace wayward {

namespace {

// The Gauss-Radau spacings on [0, 1] (the start and the seven roots of (P7 + P8)(2s - 1) / s, P Legendre).
constexpr double spacing[8] = {0.0,
                               0.0562625605369221464656521910318,
                               0.180240691736892364987579942780,
                               0.352624717113169637373907769648,
                               0.547153626330555383001448554766,
                               0.734210177215410531523210605558,
                               0.885320946839095768090359771030,
                               0.977520613561287501891174488626};

// A step may shrink to no less than this fraction of the one tried (else it is redone) and grow at most by its
// inverse (Rein & Spiegel 2015, section 3.4).
constexpr double safety = 0.25;

struct Tables {
    double c[7][7] = {};   // c[m][k]: coefficient of s^k in prod_{j=1..m} (s - h_j)
    double w[8][7] = {};   // w[n][m] = h_n^(m+1) / ((m + 2)(m + 3)): b_m's weight in the position at spacing n
    double rr[8][8] = {};  // 1 / (h_n - h_j)
    double binom[8][8] = {};
    Tables() {
        for (int m = 0; m < 7; ++m) {
            // Multiply the product for m - 1 by (s - h_m).
            double p[8] = {1.0};
            for (int j = 1; j <= m; ++j) {
                for (int k = j; k >= 1; --k) p[k] = p[k - 1] - spacing[j] * p[k];
                p[0] = -spacing[j] * p[0];
            }
            for (int k = 0; k <= m; ++k) c[m][k] = p[k];
        }
        for (int n = 0; n < 8; ++n)
            for (int j = 0; j < 8; ++j)
                if (n != j) rr[n][j] = 1.0 / (spacing[n] - spacing[j]);
        for (int n = 0; n < 8; ++n) {
            double p = spacing[n];
            for (int m = 0; m < 7; ++m, p *= spacing[n]) w[n][m] = p / ((m + 2.0) * (m + 3.0));
        }
        for (int n = 0; n < 8; ++n) {
            binom[n][0] = 1.0;
            for (int k = 1; k <= n; ++k) binom[n][k] = binom[n - 1][k - 1] + (k < n ? binom[n - 1][k] : 0.0);
        }
    }
};

const Tables& tables() {
    static const Tables t;
    return t;
}

// x += inc with the rounding error carried in cs (Kahan's compensated summation).
inline void compensated_add(double& x, double& cs, double inc) {
    const double y = inc - cs;
    const double t = x + y;
    cs = (t - x) - y;
    x = t;
}

// The twice-integrated polynomial: x(s) - x0 - tau v0 = tau^2 * this, tau = s dt. Divisions by the exact
// integers, not multiplications by rounded reciprocals: the update of every step goes through here, and a
// rounded reciprocal's error would have the same sign in every step (measured: ten times the innermost
// planet's error after 300 years).
inline double position_poly(const double* b, std::size_t stride, std::size_t k, double a0, double s) {
    return a0 / 2.0 +
           s * (b[k] / 6.0 +
                s * (b[stride + k] / 12.0 +
                     s * (b[2 * stride + k] / 20.0 +
                          s * (b[3 * stride + k] / 30.0 +
                               s * (b[4 * stride + k] / 42.0 + s * (b[5 * stride + k] / 56.0 + s * b[6 * stride + k] / 72.0))))));
}

// The once-integrated polynomial: v(s) - v0 = tau * this.
inline double velocity_poly(const double* b, std::size_t stride, std::size_t k, double a0, double s) {
    return a0 + s * (b[k] / 2.0 +
                     s * (b[stride + k] / 3.0 +
                          s * (b[2 * stride + k] / 4.0 +
                               s * (b[3 * stride + k] / 5.0 +
                                    s * (b[4 * stride + k] / 6.0 + s * (b[5 * stride + k] / 7.0 + s * b[6 * stride + k] / 8.0))))));
}

// The step's end increments of x and v less the tau v0 term, at s = 1, by multiplications (cheap): used only
// to tell whether an iteration still changes them, never to update the state.
inline void end_polys(const double* b, std::size_t stride, std::size_t k, double a0, double& p, double& q) {
    constexpr double rp[7] = {1.0 / 6.0, 1.0 / 12.0, 1.0 / 20.0, 1.0 / 30.0, 1.0 / 42.0, 1.0 / 56.0, 1.0 / 72.0};
    constexpr double rq[7] = {1.0 / 2.0, 1.0 / 3.0, 1.0 / 4.0, 1.0 / 5.0, 1.0 / 6.0, 1.0 / 7.0, 1.0 / 8.0};
    p = 0.5 * a0;
    q = a0;
    for (std::size_t m = 0; m < 7; ++m) {
        p += rp[m] * b[m * stride + k];
        q += rq[m] * b[m * stride + k];
    }
}

// Positions at the spacing whose weights are w (tau = spacing * dt), with the compensation of x taken in.
// Multiplications only: with the force and correct(), this is the stepper's whole cost.
void predict_positions(std::size_t n3, const double* w, double tau, const double* __restrict x, const double* __restrict v,
                       const double* __restrict a0, const double* __restrict cs, const double* __restrict b, double* __restrict pos) {
    for (std::size_t k = 0; k < n3; ++k) {
        const double p = 0.5 * a0[k] + w[0] * b[k] + w[1] * b[n3 + k] + w[2] * b[2 * n3 + k] + w[3] * b[3 * n3 + k] +
                         w[4] * b[4 * n3 + k] + w[5] * b[5 * n3 + k] + w[6] * b[6 * n3 + k];
        pos[k] = ((tau * v[k] + tau * tau * p) - cs[k]) + x[k];
    }
}

// The new acceleration at spacing N updates g_(N-1) by divided differences, and every b_j, j < N, by that
// change (a template so that the short loops unroll). Largest |change| and |acceleration| go to max_dg, max_a.
template <int N>
void correct(std::size_t n3, const double* __restrict acc, const double* __restrict a0, double* __restrict g, double* __restrict b,
             double& max_dg, double& max_a) {
    const Tables& tb = tables();
    double dg_max = 0.0, a_max = 0.0;  // locals: the compiler need not reload them after every store to b
    for (std::size_t k = 0; k < n3; ++k) {
        double gk = (acc[k] - a0[k]) * tb.rr[N][0];
        for (int j = 0; j < N - 1; ++j) gk = (gk - g[static_cast<std::size_t>(j) * n3 + k]) * tb.rr[N][j + 1];
        double& slot = g[static_cast<std::size_t>(N - 1) * n3 + k];
        const double dg = gk - slot;
        slot = gk;
        for (int j = 0; j < N; ++j) b[static_cast<std::size_t>(j) * n3 + k] += tb.c[N - 1][j] * dg;
        dg_max = std::max(dg_max, std::abs(dg));
        a_max = std::max(a_max, std::abs(acc[k]));
    }
    max_dg = dg_max;
    max_a = a_max;
}

}  // namespace

GaussRadau15::GaussRadau15(std::size_t bodies, Force force, double epsilon)
    : n3_(3 * bodies), force_(std::move(force)), epsilon_(epsilon) {
    for (auto* v : {&x_, &v_, &a0_, &cs_x_, &cs_v_, &x_start_, &v_start_, &a_start_, &pos_, &acc_}) v->assign(n3_, 0.0);
    for (auto* v : {&b_, &g_, &e_, &b_last_, &e_last_}) v->assign(7 * n3_, 0.0);
}

void GaussRadau15::evaluate(const double* pos, double* acc) {
    ++force_calls_;
    force_(pos, acc);
}

void GaussRadau15::start(const std::vector<double>& state) {
    for (std::size_t i = 0; i < n3_ / 3; ++i)
        for (std::size_t c = 0; c < 3; ++c) {
            x_[3 * i + c] = state[6 * i + c];
            v_[3 * i + c] = state[6 * i + 3 + c];
        }
    std::fill(cs_x_.begin(), cs_x_.end(), 0.0);
    std::fill(cs_v_.begin(), cs_v_.end(), 0.0);
    dt_last_ = dt_next_ = 0.0;
    a0_valid_ = false;
}

void GaussRadau15::state(std::vector<double>& out) const {
    out.resize(2 * n3_);
    for (std::size_t i = 0; i < n3_ / 3; ++i)
        for (std::size_t c = 0; c < 3; ++c) {
            out[6 * i + c] = x_[3 * i + c];
            out[6 * i + 3 + c] = v_[3 * i + c];
        }
}

// The polynomial of the last accepted step carried over to a step `ratio` times as long that starts where it
// ended (Everhart 1985), plus the correction by which that step's own prediction had missed.
void GaussRadau15::predict_from_last(double ratio) {
    const Tables& tb = tables();
    if (dt_last_ == 0.0 || !(std::abs(ratio) <= 20.0)) {
        std::fill(b_.begin(), b_.end(), 0.0);
        std::fill(e_.begin(), e_.end(), 0.0);
        return;
    }
    double q[8];
    q[0] = 1.0;
    for (int m = 1; m < 8; ++m) q[m] = q[m - 1] * ratio;
    for (std::size_t k = 0; k < n3_; ++k)
        for (int m = 0; m < 7; ++m) {
            double sum = 0.0;
            for (int j = m; j < 7; ++j) sum += tb.binom[j + 1][m + 1] * b_last_[at(j, k)];
            e_[at(m, k)] = q[m + 1] * sum;
            b_[at(m, k)] = e_[at(m, k)] + (b_last_[at(m, k)] - e_last_[at(m, k)]);
        }
}

// Whether another iteration changed the step's end increments (dx, dv) by no more than one unit in the last place
// of the largest of them; `last` holds the previous iteration's increments and is updated.
bool GaussRadau15::end_settled(double dt, std::vector<double>& last) const {
    double change = 0.0, size_x = 0.0, size_v = 0.0, change_v = 0.0;
    for (std::size_t k = 0; k < n3_; ++k) {
        double p, q;
        end_polys(b_.data(), n3_, k, a0_[k], p, q);
        const double dx = dt * v_[k] + dt * dt * p;
        const double dv = dt * q;
        change = std::max(change, std::abs(dx - last[k]));
        change_v = std::max(change_v, std::abs(dv - last[n3_ + k]));
        size_x = std::max(size_x, std::abs(dx));
        size_v = std::max(size_v, std::abs(dv));
        last[k] = dx;
        last[n3_ + k] = dv;
    }
    constexpr double ulp_one = 0x1p-52;  // one unit in the last place of 1 (DBL_EPSILON)
    return change <= ulp_one * size_x && change_v <= ulp_one * size_v;
}

// Predictor-corrector iterations over the seven spacings until the last coefficient stops changing (relative
// change below 1e-16, or no longer decreasing, or 12 iterations; Rein & Spiegel 2015, section 3.2), or, our
// addition, once an iteration no longer changes the step's end increments beyond their round-off: with long
// steps the change of the last coefficient, amplified round-off by then, would go on for several iterations
// more that change nothing at the step's end.
void GaussRadau15::converge(double dt) {
    const Tables& tb = tables();
    double error = 1e300, error_last = 2.0;
    int iterations = 0;
    end_last_.assign(2 * n3_, 0.0);
    while (true) {
        if (error < 1e-16) break;
        if (iterations > 2 && error_last <= error) break;
        if (iterations >= 12) break;
        if (end_settled(dt, end_last_) && iterations >= 2) break;
        error_last = error;
        error = 0.0;
        ++iterations;
        for (int n = 1; n <= 7; ++n) {
            predict_positions(n3_, tb.w[n], spacing[n] * dt, x_.data(), v_.data(), a0_.data(), cs_x_.data(), b_.data(), pos_.data());
            evaluate(pos_.data(), acc_.data());
            double max_dg = 0.0, max_a = 0.0;
            switch (n) {
                case 1: correct<1>(n3_, acc_.data(), a0_.data(), g_.data(), b_.data(), max_dg, max_a); break;
                case 2: correct<2>(n3_, acc_.data(), a0_.data(), g_.data(), b_.data(), max_dg, max_a); break;
                case 3: correct<3>(n3_, acc_.data(), a0_.data(), g_.data(), b_.data(), max_dg, max_a); break;
                case 4: correct<4>(n3_, acc_.data(), a0_.data(), g_.data(), b_.data(), max_dg, max_a); break;
                case 5: correct<5>(n3_, acc_.data(), a0_.data(), g_.data(), b_.data(), max_dg, max_a); break;
                case 6: correct<6>(n3_, acc_.data(), a0_.data(), g_.data(), b_.data(), max_dg, max_a); break;
                default:
                    correct<7>(n3_, acc_.data(), a0_.data(), g_.data(), b_.data(), max_dg, max_a);
                    error = max_a > 0.0 ? max_dg / max_a : 0.0;
            }
        }
    }
}

bool GaussRadau15::try_step(double dt) {
    const Tables& tb = tables();
    if (!a0_valid_) {
        evaluate(x_.data(), a0_.data());
        a0_valid_ = true;
    }
    predict_from_last(dt_last_ != 0.0 ? dt / dt_last_ : 0.0);
    // g from b (C is unit upper triangular): g_k = b_k - sum_{m > k} c[m][k] g_m.
    for (std::size_t k = 0; k < n3_; ++k)
        for (int m = 6; m >= 0; --m) {
            double gk = b_[at(m, k)];
            for (int j = m + 1; j < 7; ++j) gk -= tb.c[j][m] * g_[at(j, k)];
            g_[at(m, k)] = gk;
        }
    converge(dt);

    // Step control on the last coefficient relative to the acceleration (the global form of section 3.4).
    double max_b6 = 0.0, max_a = 0.0;
    for (std::size_t k = 0; k < n3_; ++k) {
        max_b6 = std::max(max_b6, std::abs(b_[at(6, k)]));
        max_a = std::max(max_a, std::abs(acc_[k]));
    }
    const double error = max_a > 0.0 ? max_b6 / max_a : 0.0;
    double dt_new = std::isnormal(error) ? dt * std::pow(epsilon_ / error, 1.0 / 7.0) : dt / safety;
    if (std::abs(dt_new) < safety * std::abs(dt)) {
        dt_next_ = dt_new;
        return false;
    }
    if (std::abs(dt_new) > std::abs(dt) / safety) dt_new = dt / safety;

    x_start_ = x_;
    v_start_ = v_;
    a_start_ = a0_;
    for (std::size_t k = 0; k < n3_; ++k) {
        const double dx = dt * v_[k] + dt * dt * position_poly(b_.data(), n3_, k, a0_[k], 1.0);
        const double dv = dt * velocity_poly(b_.data(), n3_, k, a0_[k], 1.0);
        compensated_add(x_[k], cs_x_[k], dx);
        compensated_add(v_[k], cs_v_[k], dv);
    }
    b_last_ = b_;
    e_last_ = e_;
    dt_last_ = dt;
    dt_next_ = dt_new;
    a0_valid_ = false;
    return true;
}

void GaussRadau15::step_polynomial(std::vector<double>& out) const {
    const std::size_t n = n3_ / 3;
    out.resize(30 * n);
    for (std::size_t i = 0; i < n; ++i) {
        double* o = &out[30 * i];
        for (std::size_t c = 0; c < 3; ++c) {
            o[c] = x_start_[3 * i + c];
            o[3 + c] = v_start_[3 * i + c];
            o[6 + c] = a_start_[3 * i + c];
            for (int m = 0; m < 7; ++m) o[9 + 3 * m + c] = b_last_[at(m, 3 * i + c)];
        }
    }
}

void gauss_radau_evaluate(const double* poly, double dt, double s, double* pos, double* vel) {
    const double tau = s * dt;
    for (std::size_t c = 0; c < 3; ++c) {
        pos[c] = poly[c] + (tau * poly[3 + c] + tau * tau * position_poly(poly + 9, 3, c, poly[6 + c], s));
        vel[c] = poly[3 + c] + tau * velocity_poly(poly + 9, 3, c, poly[6 + c], s);
    }
}

}  // namespace wayward
