// Forward-mode differentiation: a value with N first derivatives (a "dual number" with a vector part), so that
// code written once for a scalar type gives, run on Dual<N>, the exact derivatives of what it computes along N
// directions. The fitting model's map runs on it to give its tangent map (the variational equations of the
// discrete map itself, not of the differential equations it approximates). Hand-written: Eigen's AutoDiffScalar
// is unsupported-module code with a dynamic derivative vector that allocates on every operation, which would
// make the tangent run many times slower than the fixed-size arrays here.
// Comparisons and branches use the value alone (value()), so control flow is that of the double code.
#pragma once

#include <array>
#include <cmath>

namespace wayward {

template <int N>
struct Dual {
    double v;
    std::array<double, N> d;

    struct Uninitialised {};
    explicit Dual(Uninitialised) {}  // for results about to be written in full: no zero fill to throw away
    Dual() : v(0.0) { d.fill(0.0); }
    Dual(double value) : v(value) { d.fill(0.0); }  // NOLINT: a constant is a Dual with zero derivatives

    Dual& operator+=(const Dual& o) {
        v += o.v;
        for (int i = 0; i < N; ++i) d[i] += o.d[i];
        return *this;
    }
    Dual& operator-=(const Dual& o) {
        v -= o.v;
        for (int i = 0; i < N; ++i) d[i] -= o.d[i];
        return *this;
    }
    Dual& operator*=(const Dual& o) {
        for (int i = 0; i < N; ++i) d[i] = d[i] * o.v + v * o.d[i];
        v *= o.v;
        return *this;
    }
    Dual& operator/=(const Dual& o) {
        const double inv = 1.0 / o.v, q = v * inv;
        for (int i = 0; i < N; ++i) d[i] = (d[i] - q * o.d[i]) * inv;
        v = q;
        return *this;
    }
    Dual& operator*=(double s) {
        v *= s;
        for (int i = 0; i < N; ++i) d[i] *= s;
        return *this;
    }
    Dual operator-() const {
        Dual r{Uninitialised{}};
        r.v = -v;
        for (int i = 0; i < N; ++i) r.d[i] = -d[i];
        return r;
    }
};

// Binary operators write their result directly (no copy of an operand first: at N = 32 a Dual is 264 bytes,
// and copies were most of the cost).
template <int N> Dual<N> operator+(const Dual<N>& a, const Dual<N>& b) {
    Dual<N> r{typename Dual<N>::Uninitialised{}};
    r.v = a.v + b.v;
    for (int i = 0; i < N; ++i) r.d[i] = a.d[i] + b.d[i];
    return r;
}
template <int N> Dual<N> operator-(const Dual<N>& a, const Dual<N>& b) {
    Dual<N> r{typename Dual<N>::Uninitialised{}};
    r.v = a.v - b.v;
    for (int i = 0; i < N; ++i) r.d[i] = a.d[i] - b.d[i];
    return r;
}
template <int N> Dual<N> operator*(const Dual<N>& a, const Dual<N>& b) {
    Dual<N> r{typename Dual<N>::Uninitialised{}};
    r.v = a.v * b.v;
    for (int i = 0; i < N; ++i) r.d[i] = a.d[i] * b.v + a.v * b.d[i];
    return r;
}
template <int N> Dual<N> operator/(const Dual<N>& a, const Dual<N>& b) {
    Dual<N> r{typename Dual<N>::Uninitialised{}};
    const double inv = 1.0 / b.v;
    r.v = a.v * inv;
    for (int i = 0; i < N; ++i) r.d[i] = (a.d[i] - r.v * b.d[i]) * inv;
    return r;
}
template <int N> Dual<N> operator+(const Dual<N>& a, double b) {
    Dual<N> r = a;
    r.v += b;
    return r;
}
template <int N> Dual<N> operator+(double a, const Dual<N>& b) { return b + a; }
template <int N> Dual<N> operator-(const Dual<N>& a, double b) { return a + (-b); }
template <int N> Dual<N> operator-(double a, const Dual<N>& b) {
    Dual<N> r{typename Dual<N>::Uninitialised{}};
    r.v = a - b.v;
    for (int i = 0; i < N; ++i) r.d[i] = -b.d[i];
    return r;
}
template <int N> Dual<N> operator*(const Dual<N>& a, double b) {
    Dual<N> r{typename Dual<N>::Uninitialised{}};
    r.v = a.v * b;
    for (int i = 0; i < N; ++i) r.d[i] = a.d[i] * b;
    return r;
}
template <int N> Dual<N> operator*(double a, const Dual<N>& b) { return b * a; }
template <int N> Dual<N> operator/(const Dual<N>& a, double b) { return a * (1.0 / b); }
template <int N> Dual<N> operator/(double a, const Dual<N>& b) {
    Dual<N> r{typename Dual<N>::Uninitialised{}};
    r.v = a / b.v;
    const double f = -r.v / b.v;
    for (int i = 0; i < N; ++i) r.d[i] = f * b.d[i];
    return r;
}

template <int N>
Dual<N> sqrt(const Dual<N>& a) {
    Dual<N> r{typename Dual<N>::Uninitialised{}};
    r.v = std::sqrt(a.v);
    const double f = 0.5 / r.v;
    for (int i = 0; i < N; ++i) r.d[i] = f * a.d[i];
    return r;
}

inline double value(double x) { return x; }
template <int N> double value(const Dual<N>& x) { return x.v; }

}  // namespace wayward
