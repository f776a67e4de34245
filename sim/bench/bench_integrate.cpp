// Benchmarks of the truth integrator: the cost of one integration step and of one body-step for every method
// in the registry (over ten years of the default system, trimmed to 2..6 bodies), and the time of the default
// scenario's full truth run (300 years, default accuracy) with its relative energy error. Also the export of
// that run for the SciPy comparison (wayward_bench --export-truth=FILE).
#include "sim/bench/bench_integrate.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <ctime>
#include <fstream>
#include <iomanip>
#include <iostream>
#include <vector>

#include <benchmark/benchmark.h>
#include <boost/numeric/odeint/stepper/runge_kutta_fehlberg78.hpp>

#include "sim/bench/bench_common.hpp"
#include "sim/physics/integrate.hpp"
#include "sim/physics/system.hpp"
#include "sim/base/units.hpp"

namespace wayward::bench {

namespace {

constexpr double step_span_days = 10.0 * julian_year_days;

// Integrates `bodies` bodies of the default system for ten years with one method, timing whole runs and
// dividing by the accepted steps (rejected steps are part of the cost of an accepted one).
void bm_integrate_step(benchmark::State& state, const std::string& method) {
    const std::size_t bodies = static_cast<std::size_t>(state.range(0));
    const System sys = first_bodies(default_system(), bodies);
    IntegratorOptions opt;
    opt.method = method;
    double steps = 0.0, rejected = 0.0, rhs_calls = 0.0, runs = 0.0;
    for (auto _ : state) {
        IntegrationResult r = integrate(sys, 0.0, step_span_days, opt);
        if (r.outcome != IntegrationOutcome::ok) {
            state.SkipWithError(("integration failed: " + to_string(r.outcome)).c_str());
            break;
        }
        benchmark::DoNotOptimize(r.ephemeris.states.data());
        steps += static_cast<double>(r.steps);
        rejected += static_cast<double>(r.rejected_steps);
        rhs_calls += static_cast<double>(r.rhs_calls);
        runs += 1.0;
    }
    if (runs == 0.0) return;
    using benchmark::Counter;
    state.counters["per_step"] = Counter(steps, Counter::kIsRate | Counter::kInvert);
    state.counters["per_body_step"] = Counter(steps * static_cast<double>(bodies), Counter::kIsRate | Counter::kInvert);
    state.counters["steps"] = Counter(steps / runs);
    state.counters["rejected"] = Counter(rejected / runs);
    state.counters["rhs_per_step"] = Counter(rhs_calls / steps);
}

// The default scenario's truth run over its whole span at the default accuracy.
void bm_truth_run(benchmark::State& state) {
    const System& sys = default_system();
    const double span = default_span_days();
    const IntegratorOptions opt;
    IntegrationResult last;
    for (auto _ : state) {
        last = integrate(sys, 0.0, span, opt);
        benchmark::DoNotOptimize(last.ephemeris.states.data());
    }
    if (last.outcome != IntegrationOutcome::ok) {
        state.SkipWithError(("integration failed: " + to_string(last.outcome)).c_str());
        return;
    }
    const double err = relative_energy_error(sys, last.ephemeris.system_at(span));
    char label[160];
    std::snprintf(label, sizeof label, "%s rtol %.0e, %.0f years, %zu bodies, rel. energy error %.2e", opt.method.c_str(),
                  opt.rel_tol, span / julian_year_days, sys.size(), err);
    state.SetLabel(label);
    state.counters["steps"] = benchmark::Counter(static_cast<double>(last.steps));
    state.counters["rhs_calls"] = benchmark::Counter(static_cast<double>(last.rhs_calls));
}

// The system at ephemeris node k.
System node_system(const Ephemeris& eph, std::size_t k) {
    System s;
    s.bodies = eph.bodies;
    s.gm = eph.gm;
    s.time = eph.times[k];
    const std::size_t n6 = 6 * eph.size();
    s.state.assign(eph.states.begin() + static_cast<std::ptrdiff_t>(n6 * k),
                   eph.states.begin() + static_cast<std::ptrdiff_t>(n6 * (k + 1)));
    return s;
}

double max_energy_error(const System& start, const Ephemeris& eph) {
    double worst = 0.0;
    for (std::size_t k = 0; k < eph.nodes(); ++k) worst = std::max(worst, relative_energy_error(start, node_system(eph, k)));
    return worst;
}

// Reference integration in long double: fixed-step RKF 7(8) on the Newtonian N-body equations.
using LongState = std::vector<long double>;

struct LongRhs {
    std::vector<long double> gm;
    void operator()(const LongState& x, LongState& dx, long double /*t*/) const {
        const std::size_t n = gm.size();
        for (std::size_t i = 0; i < n; ++i)
            for (std::size_t c = 0; c < 3; ++c) {
                dx[6 * i + c] = x[6 * i + 3 + c];
                dx[6 * i + 3 + c] = 0.0L;
            }
        for (std::size_t i = 0; i < n; ++i)
            for (std::size_t j = i + 1; j < n; ++j) {
                long double d[3], r2 = 0.0L;
                for (std::size_t c = 0; c < 3; ++c) {
                    d[c] = x[6 * j + c] - x[6 * i + c];
                    r2 += d[c] * d[c];
                }
                const long double inv3 = 1.0L / (r2 * std::sqrt(r2));
                for (std::size_t c = 0; c < 3; ++c) {
                    dx[6 * i + 3 + c] += gm[j] * inv3 * d[c];
                    dx[6 * j + 3 + c] -= gm[i] * inv3 * d[c];
                }
            }
    }
};

// Energy times G of a long double state (as total_energy, without rounding the state to double first).
long double long_energy(const std::vector<long double>& gm, const LongState& x) {
    long double kinetic = 0.0L, potential = 0.0L;
    const std::size_t n = gm.size();
    for (std::size_t i = 0; i < n; ++i) {
        long double v2 = 0.0L;
        for (std::size_t c = 3; c < 6; ++c) v2 += x[6 * i + c] * x[6 * i + c];
        kinetic += 0.5L * gm[i] * v2;
        for (std::size_t j = i + 1; j < n; ++j) {
            long double r2 = 0.0L;
            for (std::size_t c = 0; c < 3; ++c) r2 += (x[6 * i + c] - x[6 * j + c]) * (x[6 * i + c] - x[6 * j + c]);
            potential -= gm[i] * gm[j] / std::sqrt(r2);
        }
    }
    return kinetic + potential;
}

struct ReferenceRun {
    System end;
    double rel_energy_error = 0.0;
    std::size_t steps = 0;
    double seconds = 0.0;
};

ReferenceRun reference_run(const System& sys, double span, double step_fraction) {
    const auto steps = static_cast<std::size_t>(std::ceil(span / (shortest_period(sys) * step_fraction)));
    const long double dt = static_cast<long double>(span) / static_cast<long double>(steps);
    LongRhs rhs{std::vector<long double>(sys.gm.begin(), sys.gm.end())};
    LongState x(sys.state.begin(), sys.state.end());
    const long double e0 = long_energy(rhs.gm, x);
    boost::numeric::odeint::runge_kutta_fehlberg78<LongState, long double, LongState, long double> stepper;
    const double t0 = now_seconds();
    for (std::size_t k = 0; k < steps; ++k) stepper.do_step(rhs, x, static_cast<long double>(k) * dt, dt);
    ReferenceRun r;
    r.seconds = now_seconds() - t0;
    r.steps = steps;
    r.rel_energy_error = static_cast<double>(std::abs((long_energy(rhs.gm, x) - e0) / e0));
    r.end = sys;
    r.end.time = span;
    for (std::size_t i = 0; i < x.size(); ++i) r.end.state[i] = static_cast<double>(x[i]);
    return r;
}

double largest_position_difference(const System& a, const System& b) {
    double worst = 0.0;
    for (std::size_t i = 0; i < a.size(); ++i) worst = std::max(worst, (a.position(i) - b.position(i)).norm());
    return worst;
}

void write_array(std::ostream& out, const std::vector<double>& v) {
    out << '[';
    for (std::size_t i = 0; i < v.size(); ++i) out << (i ? ", " : "") << v[i];
    out << ']';
}

}  // namespace

void register_integrate_benchmarks() {
    for (const IntegratorMethod& m : integrator_methods()) {
        benchmark::RegisterBenchmark(("integrate_step/" + m.name).c_str(), bm_integrate_step, m.name)
            ->ArgName("bodies")
            ->DenseRange(2, 6, 1)
            ->Unit(benchmark::kMillisecond);
    }
    benchmark::RegisterBenchmark("truth_run/default", bm_truth_run)
        ->Iterations(3)
        ->UseRealTime()
        ->Unit(benchmark::kMillisecond);
}

int export_truth_run(const TruthExportOptions& o) {
    const System& sys = default_system();
    const double span = default_span_days();
    IntegratorOptions opt;
    opt.max_step_fraction = o.step_fraction;
    opt.method = o.method;
    opt.rel_tol = o.rel_tol;
    opt.step_precision = o.step_precision;
    std::vector<double> seconds, cpu_seconds;
    IntegrationResult run;
    for (int k = 0; k < std::max(1, o.repeats); ++k) {
        const double t0 = now_seconds();
        const std::clock_t c0 = std::clock();
        run = integrate(sys, 0.0, span, opt);
        cpu_seconds.push_back(static_cast<double>(std::clock() - c0) / CLOCKS_PER_SEC);
        seconds.push_back(now_seconds() - t0);
        if (run.outcome != IntegrationOutcome::ok) {
            std::cerr << "truth run failed: " << to_string(run.outcome) << "\n";
            return 1;
        }
    }
    const System end = run.ephemeris.system_at(span);

    const ReferenceRun ref = reference_run(sys, span, o.reference_step_fraction);
    const ReferenceRun check = reference_run(sys, span, 2.0 * o.reference_step_fraction);

    std::ofstream out(o.path);
    if (!out) {
        std::cerr << "cannot write " << o.path << "\n";
        return 1;
    }
    out << std::setprecision(17);
    out << "{\n  \"span_days\": " << span << ",\n  \"names\": [";
    for (std::size_t i = 0; i < sys.size(); ++i) out << (i ? ", " : "") << '"' << sys.bodies[i].name << '"';
    out << "],\n  \"gm\": ";
    write_array(out, sys.gm);
    out << ",\n  \"state0\": ";
    write_array(out, sys.state);
    out << ",\n  \"ours\": {\"method\": \"" << opt.method << "\", \"rel_tol\": " << opt.rel_tol << ", \"abs_tol\": " << opt.abs_tol
        << ", \"step_precision\": " << opt.step_precision
        << ", \"max_step_days\": " << shortest_period(sys) * opt.max_step_fraction << ", \"steps\": " << run.steps
        << ", \"rejected_steps\": " << run.rejected_steps << ", \"rhs_calls\": " << run.rhs_calls << ",\n    \"seconds\": ";
    write_array(out, seconds);
    out << ",\n    \"cpu_seconds\": ";
    write_array(out, cpu_seconds);
    out << ",\n    \"rel_energy_error\": " << relative_energy_error(sys, end)
        << ", \"max_rel_energy_error\": " << max_energy_error(sys, run.ephemeris) << ",\n    \"end_state\": ";
    write_array(out, end.state);
    out << "},\n  \"reference\": {\"method\": \"rkf78, long double, fixed step\", \"step_days\": " << span / static_cast<double>(ref.steps)
        << ", \"steps\": " << ref.steps << ", \"seconds\": " << ref.seconds
        << ",\n    \"rel_energy_error\": " << ref.rel_energy_error
        << ", \"self_check_distance\": " << largest_position_difference(ref.end, check.end)
        << ", \"self_check_step_days\": " << span / static_cast<double>(check.steps) << ",\n    \"end_state\": ";
    write_array(out, ref.end.state);
    out << "}\n}\n";
    out.close();
    if (!out) {
        std::cerr << "failed writing " << o.path << "\n";
        return 1;
    }
    std::sort(seconds.begin(), seconds.end());
    std::cout << "truth run (" << opt.method << ", rtol " << opt.rel_tol << ", " << span / julian_year_days << " years, "
              << sys.size() << " bodies): median " << seconds[seconds.size() / 2] << " s of " << seconds.size()
              << " runs; written to " << o.path << "\n";
    return 0;
}

}  // namespace wayward::bench
