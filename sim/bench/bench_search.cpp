// The search rehearsal benchmarks: the quick scenario's truth integrated once (not timed), a solution that
// predicts the true track with a circular 1-sigma radius, and 30 nights of the probability strategy in clear
// weather, so every night is worked. See bench_search.hpp.
#include "sim/bench/bench_search.hpp"

#include <memory>

#include <benchmark/benchmark.h>

#include "sim/base/units.hpp"
#include "sim/bench/bench_common.hpp"
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
    s.exercise_sha256 = w.ex->exercise.brief.answer_key_sha256;
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

}  // namespace

void register_search_benchmarks() {
    world();  // the truth run is set up outside the timings
    auto* b = benchmark::RegisterBenchmark("search_rehearsal_30_nights", search_rehearsal);
    b->ArgNames({"sigma_arcmin", "limit_mag"});
    for (int sigma : {10, 20, 40}) b->Args({sigma, 15});
    for (int limit : {13, 17}) b->Args({20, limit});
    b->Unit(benchmark::kMillisecond)->Iterations(1)->Repetitions(3);  // CPU time (the default), three runs each
}

}  // namespace wayward::bench
