// The 15th-order Gauss-Radau stepper for second-order equations x'' = a(x) (Everhart 1985, "An efficient
// integrator that uses Gauss-Radau spacings", in Dynamics of Comets, IAU Colloq. 83; with the adaptive step,
// the predictor-corrector stopping rule and compensated summation of Rein & Spiegel 2015, MNRAS 446, 1424).
// Written here because no Debian 12 package offers it (Odeint has no Gauss-Radau stepper, GSL's ODE solvers
// neither). Every accepted step leaves its acceleration polynomial a(s) = a0 + b0 s + ... + b6 s^7 over the step
// (s in [0, 1]), which the dense ephemeris integrates twice to answer any time inside the step.
#pragma once

#include <cstddef>
#include <functional>
#include <vector>

namespace wayward {

class GaussRadau15 {
public:
    // Accelerations (3 per body) of positions (3 per body).
    using Force = std::function<void(const double* pos, double* acc)>;

    // `epsilon`: the step is chosen so that |b6| / |a| (largest components over all bodies) stays near it.
    GaussRadau15(std::size_t bodies, Force force, double epsilon);

    // Starts from a 6-per-body state (x y z vx vy vz); forgets earlier steps.
    void start(const std::vector<double>& state);
    // Tries one step of dt (either sign). On success the state advances and true is returned; either way
    // next_step() is the step to try next.
    bool try_step(double dt);
    double next_step() const { return dt_next_; }
    // The current 6-per-body state.
    void state(std::vector<double>& out) const;
    // The accepted step's anchor state and polynomial, for dense output: per body 30 numbers (position,
    // velocity, acceleration at the step's start, then b0..b6 with 3 components each).
    void step_polynomial(std::vector<double>& out) const;
    std::size_t force_calls() const { return force_calls_; }

private:
    void evaluate(const double* pos, double* acc);
    void predict_from_last(double ratio);
    void converge(double dt);
    bool end_settled(double dt, std::vector<double>& last) const;
    // Index of coefficient m (0..6) of component k in the 7-per-component arrays.
    std::size_t at(int m, std::size_t k) const { return static_cast<std::size_t>(m) * n3_ + k; }

    std::size_t n3_;
    Force force_;
    double epsilon_;
    std::vector<double> x_, v_, a0_, cs_x_, cs_v_;  // state, start acceleration, compensations
    std::vector<double> x_start_, v_start_, a_start_;  // the last accepted step's start (for dense output)
    std::vector<double> b_, g_, e_, b_last_, e_last_;  // 7 * 3N each: coefficient m of component k at m * 3N + k
    std::vector<double> pos_, acc_, end_last_;
    double dt_last_ = 0.0, dt_next_ = 0.0;
    bool a0_valid_ = false;
    std::size_t force_calls_ = 0;
};

// Position and velocity at fraction s of a step of dt from its polynomial (one body's 30 numbers as written by
// step_polynomial); the dense output of the Gauss-Radau ephemeris.
void gauss_radau_evaluate(const double* poly, double dt, double s, double* pos, double* vel);

}  // namespace wayward
