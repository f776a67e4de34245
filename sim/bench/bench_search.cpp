// The search rehearsal benchmarks. search_rehearsal: the quick scenario's truth integrated once (not timed), a
// solution that predicts the true track with a circular 1-sigma radius, and 30 nights of the probability strategy
// in clear weather, so every night is worked. search_default_90: the default exercise (seed 1) solved once with
// the default options (not timed), its Gaussian region tiled out to the 90 % contour, searched with the brief's
// telescope in clear weather; the region's area and the star density scaled by the arguments; peak heap bytes
// of each run from the counting allocator (bench_memory). See bench_search.hpp.
#include "sim/bench/bench_search.hpp"

#include <cmath>
#include <cstdint>
#include <memory>
#include <vector>

#include <benchmark/benchmark.h>

#include "sim/base/units.hpp"
#include "sim/bench/bench_common.hpp"
#include "sim/bench/bench_memory.hpp"
#include "sim/solve/solve.hpp"
#include "sim/night/rehearsal.hpp"
#include "sim/score/truth_ephemeris.hpp"

namespace wayward::bench {

namespace {

struct SearchWorld {
    const ExerciseInMemory* ex = nullptr;
    std::unique_ptr<TruthEphemeris> truth;
    double h = 0.0;
};

const SearchWorld& world() {
    static const SearchWorld w = [] {
        SearchWorld x;
        x.ex = &exercise_for("quick", 1);
        x.truth = std::make_unique<TruthEphemeris>(integrate_truth(x.ex->exercise.brief, x.ex->key));
        x.h = hidden_absolute_magnitude(x.ex->key);
        return x;
    }();
    return w;
}

Solution solution_with_sigma(double sigma_arcmin) {
    const SearchWorld& w = world();
    const double y = w.ex->exercise.brief.search_epochs_year.front();
    Solution s;
    s.exercise_sha256 = w.ex->exercise.brief.identity_sha256();
    s.prediction.epoch_year = y;
    const TrackPoint t = w.truth->at_year(y);
    s.prediction.lon = t.lon;
    s.prediction.lat = t.lat;
    s.prediction.distance_au = 20.0;
    const double sigma = sigma_arcmin * 60.0;
    s.prediction.cov_ll = s.prediction.cov_bb = sigma * sigma;
    s.prediction.semi_major_arcsec = s.prediction.semi_minor_arcsec = sigma;
    s.prediction.track = true_track(*w.truth, y - 0.5, y + 0.5, 0.05).points;
    return s;
}

// Args: 1-sigma radius (arcmin), limiting magnitude.
void search_rehearsal(benchmark::State& state) {
    const SearchWorld& w = world();
    const Solution s = solution_with_sigma(static_cast<double>(state.range(0)));
    Telescope tel;
    tel.field_of_view_deg = 1.0;
    tel.limiting_mag = static_cast<double>(state.range(1));
    tel.chart_limit_mag = tel.limiting_mag + 2.0;
    tel.clear_fraction = 1.0;
    tel.site_latitude_deg = 0.0;
    RehearsalOptions opt;
    opt.nights = 30;
    opt.start_year = s.prediction.epoch_year;
    // The body is made too faint to find, so every night is worked to its end.
    const double h = w.h + 30.0;
    long visits = 0, fields = 0;
    for (auto _ : state) {
        const RehearsalResult r = run_rehearsal(w.ex->exercise.brief, s, tel, *w.truth, h, opt);
        visits = static_cast<long>(r.log.size());
        fields = static_cast<long>(r.fields.size());
        benchmark::DoNotOptimize(r.false_candidates);
    }
    state.counters["fields_tiled"] = static_cast<double>(fields);
    state.counters["visits"] = static_cast<double>(visits);
    state.counters["per_night"] = benchmark::Counter(30.0, benchmark::Counter::kIsIterationInvariantRate | benchmark::Counter::kInvert);
}

struct DefaultWorld {
    const ExerciseInMemory* ex = nullptr;
    std::unique_ptr<TruthEphemeris> truth;
    Solution solution;
    double h = 0.0;
};

const DefaultWorld& default_world() {
    static const DefaultWorld w = [] {
        DefaultWorld x;
        x.ex = &exercise_for("default", 1);
        x.truth = std::make_unique<TruthEphemeris>(integrate_truth(x.ex->exercise.brief, x.ex->key));
        x.h = hidden_absolute_magnitude(x.ex->key);
        SolveOptions o;
        o.epoch_year = x.ex->exercise.brief.search_epochs_year.front();
        x.solution = solve(x.ex->exercise, o);
        return x;
    }();
    return w;
}

// Args: nights, area factor (the covariance times it), star density factor (the count law times it).
void search_default_90(benchmark::State& state) {
    const DefaultWorld& w = default_world();
    const Brief& brief = w.ex->exercise.brief;
    Solution s = w.solution;
    const double area = static_cast<double>(state.range(1));
    Prediction& p = s.prediction;
    p.cov_ll *= area;
    p.cov_lb *= area;
    p.cov_bb *= area;
    p.semi_major_arcsec *= std::sqrt(area);
    p.semi_minor_arcsec *= std::sqrt(area);
    Telescope tel = *brief.telescope;
    tel.clear_fraction = 1.0;
    RehearsalOptions opt;
    opt.nights = static_cast<int>(state.range(0));
    opt.start_year = p.epoch_year;
    opt.extent_sigma = std::sqrt(-2.0 * std::log(0.1));  // the 90 % contour of a 2-D Gaussian: r^2 = -2 ln 0.1
    opt.sky.law.log10_n0 += std::log10(static_cast<double>(state.range(2)));
    const double h = w.h + 30.0;  // too faint to find: every night is worked to its end
    long visits = 0, fields = 0;
    double peak_mb = 0.0;
    for (auto _ : state) {
        const std::int64_t before = heap_live_bytes();
        reset_heap_peak();
        const RehearsalResult r = run_rehearsal(brief, s, tel, *w.truth, h, opt);
        peak_mb = static_cast<double>(heap_peak_bytes() - before) / 1048576.0;
        visits = static_cast<long>(r.log.size());
        fields = static_cast<long>(r.fields.size());
        benchmark::DoNotOptimize(r.false_candidates);
    }
    state.counters["fields_tiled"] = static_cast<double>(fields);
    state.counters["visits"] = static_cast<double>(visits);
    state.counters["peak_heap_MB"] = peak_mb;
    state.counters["per_night"] =
        benchmark::Counter(static_cast<double>(opt.nights), benchmark::Counter::kIsIterationInvariantRate | benchmark::Counter::kInvert);
}

}  // namespace

void register_search_benchmarks() {
    world();  // the truth run is set up outside the timings
    auto* b = benchmark::RegisterBenchmark("search_rehearsal_30_nights", search_rehearsal);
    b->ArgNames({"sigma_arcmin", "limit_mag"});
    for (int sigma : {10, 20, 40}) b->Args({sigma, 15});
    for (int limit : {13, 17}) b->Args({20, limit});
    b->Unit(benchmark::kMillisecond)->Iterations(1)->Repetitions(3);  // CPU time (the default), three runs each

    // The default exercise is solved on the first run, before its timed loop (so other filters never pay for it).
    auto* d = benchmark::RegisterBenchmark("search_default_90", search_default_90);
    d->ArgNames({"nights", "area_x", "density_x"});
    for (const auto& a : {std::vector<std::int64_t>{30, 1, 1}, {10, 1, 1}, {30, 2, 1}, {30, 4, 1}, {30, 1, 3}, {30, 1, 10}}) d->Args(a);
    d->Unit(benchmark::kMillisecond)->Iterations(1)->Repetitions(3);
}

}  // namespace wayward::bench
