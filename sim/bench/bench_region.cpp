// The stated region benchmarks. region_samples: 300 weighted directions of a tilted Gaussian (1.5 x 0.6 deg), their
// SampledRegion asked what score asks (the rank of a direction 1 sigma out from 4000 draws, the share of a 2-deg
// field from 20000). region_map/nside:N: the same directions made into a flat map at nside N by make_sky_map (not
// timed), as a PixelMapRegion, asked the same. region_read/nside:N: that map written once as FITS by our writer (not
// timed) and read back by read_stated_sky_map (checks, normalisation), then asked the same. See bench_region.hpp.
#include "sim/bench/bench_region.hpp"

#include <cmath>
#include <filesystem>
#include <string>
#include <vector>

#include <unistd.h>

#include <benchmark/benchmark.h>

#include "sim/base/random.hpp"
#include "sim/base/units.hpp"
#include "sim/predict/region_density.hpp"
#include "sim/predict/sky_map.hpp"
#include "sim/report/sky_map_file.hpp"
#include "sim/score/stated_sky_map.hpp"

namespace wayward::bench {

namespace {

constexpr double lon0 = 1.0, lat0 = 0.1, major = 1.5 * deg, minor = 0.6 * deg, tilt = 30.0 * deg;

const std::vector<SkySample>& samples() {
    static const std::vector<SkySample> s = [] {
        Rng rng = make_rng(21, "bench region");
        std::vector<SkySample> out;
        for (int k = 0; k < 300; ++k) {
            const double u = normal(rng, 0.0, major), v = normal(rng, 0.0, minor);
            const double x = u * std::cos(tilt) - v * std::sin(tilt), y = u * std::sin(tilt) + v * std::cos(tilt);
            out.push_back({lon0 + x / std::cos(lat0), lat0 + y, 0.5 + uniform01(rng)});
        }
        return out;
    }();
    return s;
}

// What score asks of a region: the rank of a direction 1 sigma out along the minor axis, the share of a 2-deg field.
double ask(const RegionDensity& region) {
    Rng rng = make_rng(1, "score map");
    const double lon = lon0 - minor * std::sin(tilt) / std::cos(lat0), lat = lat0 + minor * std::cos(tilt);
    return region.rank_of(lon, lat, rng) + region.mass_within(lon0, lat0, 2.0 * deg, rng);
}

std::vector<double> nested_of(const SkyMap& m) { return m.probability; }

void region_samples(benchmark::State& state) {
    for (auto _ : state) {
        const SampledRegion region(samples(), 4000, 20000);
        benchmark::DoNotOptimize(ask(region));
    }
}

void region_map(benchmark::State& state) {
    const int nside = static_cast<int>(state.range(0));
    const SkyMap m = make_sky_map(samples(), nside);
    const PixelMapRegion region(sky_map_order(nside), nested_of(m), Eigen::Matrix3d::Identity());
    for (auto _ : state) benchmark::DoNotOptimize(ask(region));
}

void region_read(benchmark::State& state) {
    const int nside = static_cast<int>(state.range(0));
    const std::string path = (std::filesystem::temp_directory_path() / ("wayward-bench-map-" + std::to_string(::getpid()) + ".fits")).string();
    write_sky_map_fits(path, make_sky_map(samples(), nside), {"bench", 2000.0, 300, false});
    for (auto _ : state) benchmark::DoNotOptimize(ask(*read_stated_sky_map(path, nullptr)));
    std::filesystem::remove(path);
}

}  // namespace

void register_region_benchmarks() {
    benchmark::RegisterBenchmark("region_samples", region_samples)->Unit(benchmark::kMillisecond);
    for (int nside : {256, 1024}) {
        benchmark::RegisterBenchmark("region_map", region_map)->ArgName("nside")->Arg(nside)->Unit(benchmark::kMillisecond);
        benchmark::RegisterBenchmark("region_read", region_read)->ArgName("nside")->Arg(nside)->Unit(benchmark::kMillisecond);
    }
}

}  // namespace wayward::bench
