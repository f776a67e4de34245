// The map over every plausible minimum: other minima's virtual bodies join the best's with their Laplace shares,
// implausible or negligible minima stay out, each island is smoothed at its own scale (not blurred by the distance
// between islands), solution.toml keeps which minimum each body belongs to, and a record whose minima compete
// (hard, seed 4) gets a map with an island where the other minimum points.
#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <unistd.h>

#include "sim/base/errors.hpp"
#include "sim/base/random.hpp"
#include "sim/base/units.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/predict/sky_map.hpp"
#include "sim/scenario/scenario.hpp"
#include "sim/solve/mixture.hpp"
#include "sim/solve/solve.hpp"
#include "solve_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;

namespace {

// A prediction at (lon, lat) with a 1-sigma ellipse of sx x sy arcsec along lambda and beta.
Prediction ellipse_at(double lon, double lat, double sx, double sy) {
    Prediction p;
    p.epoch_year = 2000.0;
    p.lon = lon;
    p.lat = lat;
    p.cov_ll = sx * sx;
    p.cov_bb = sy * sy;
    return p;
}

// The best minimum's prediction with n equally weighted Gaussian virtual bodies of its own ellipse.
Prediction best_with_bodies(int n) {
    Prediction p = ellipse_at(1.0, 0.0, 1800.0, 600.0);
    Rng rng = make_rng(3, "best bodies");
    for (int k = 0; k < n; ++k) {
        p.sample_lon.push_back(p.lon + normal(rng) * 1800.0 * arcsec);
        p.sample_lat.push_back(p.lat + normal(rng) * 600.0 * arcsec);
        p.sample_weight.push_back(1.0 / n);
    }
    p.samples_used = p.samples_in_full = n;
    return p;
}

Minimum minimum_with(double probability, std::optional<Prediction> prediction, std::vector<std::string> flags = {}) {
    Minimum m;
    m.probability = probability;
    m.prediction = std::move(prediction);
    m.flags = std::move(flags);
    return m;
}

}  // namespace

TEST_CASE("mixture: plausible minima join with their Laplace shares; implausible and negligible ones stay out") {
    Prediction p = best_with_bodies(2000);
    const double far_lon = 1.0 + 90.0 * deg;
    const std::vector<Minimum> minima = {
        minimum_with(0.6, std::nullopt),                                           // the best (its prediction is p)
        minimum_with(0.3, ellipse_at(far_lon, 0.1, 1200.0, 300.0)),                // taken in
        minimum_with(0.09, ellipse_at(2.0, 0.0, 600.0, 600.0), {"a star's mass"}),  // implausible
        minimum_with(5e-4, ellipse_at(3.0, 0.0, 600.0, 600.0)),                    // negligible
        minimum_with(0.0995, std::nullopt),                                        // no prediction at the epoch
    };
    REQUIRE(mix_other_minima(p, minima, 7) == 1);
    REQUIRE(p.sample_group.size() == p.sample_lon.size());
    // Shares renormalised over the best and the one taken in: 0.6 / 0.9 and 0.3 / 0.9; round(2000 / 3) = 667 bodies
    // for the latter.
    const MixedShare m = mixed_share(p);
    CHECK(m.minima == 1);
    CHECK(m.bodies == 667);
    CHECK(m.probability == doctest::Approx(1.0 / 3.0).epsilon(1e-12));
    CHECK(p.samples_used == 2667);
    double total = 0.0;
    for (double w : p.sample_weight) total += w;
    CHECK(total == doctest::Approx(1.0).epsilon(1e-12));
    CHECK(p.effective_samples == doctest::Approx(1.0 / (2000 * std::pow(2.0 / 3.0 / 2000, 2) + 667 * std::pow(1.0 / 3.0 / 667, 2))).epsilon(1e-9));
    CHECK(samples_describe_region(p));
    CHECK(std::string(why_samples_describe_region(p)) == "other minima mixed in");
    // The other minimum's bodies follow its own ellipse: means and standard deviations within 5 standard errors
    // (667 draws: 2.7 % for a standard deviation).
    const double n1 = 667.0;
    double sx = 0.0, sy = 0.0, mx = 0.0, my = 0.0;
    for (std::size_t k = 0; k < p.sample_lon.size(); ++k)
        if (p.sample_group[k] == 1) {
            const double x = wrap_pi(p.sample_lon[k] - far_lon) * std::cos(0.1) / arcsec, y = (p.sample_lat[k] - 0.1) / arcsec;
            mx += x / n1;
            my += y / n1;
            sx += x * x / n1;
            sy += y * y / n1;
        } else {
            CHECK(p.sample_group[k] == 0);
        }
    CHECK(std::abs(mx) < 5.0 * 1200.0 / std::sqrt(n1));
    CHECK(std::abs(my) < 5.0 * 300.0 / std::sqrt(n1));
    CHECK(std::sqrt(sx) == doctest::Approx(1200.0).epsilon(5 * 0.027));
    CHECK(std::sqrt(sy) == doctest::Approx(300.0).epsilon(5 * 0.027));
    // Mixing twice does nothing more.
    CHECK(mix_other_minima(p, minima, 7) == 0);
    // Nothing qualifies: nothing changes.
    Prediction q = best_with_bodies(100);
    CHECK(mix_other_minima(q, {minimum_with(1.0, std::nullopt), minimum_with(1e-9, ellipse_at(2.0, 0.0, 600.0, 600.0))}, 7) == 0);
    CHECK(q.sample_group.empty());
    CHECK(q.sample_lon.size() == 100);
}

TEST_CASE("mixture: each island of the map keeps its own scale and its own share") {
    Prediction p = best_with_bodies(1000);
    const double far_lon = 1.0 + 90.0 * deg;
    REQUIRE(mix_other_minima(p, {minimum_with(0.75, std::nullopt), minimum_with(0.25, ellipse_at(far_lon, 0.0, 600.0, 600.0))}, 9) == 1);
    std::vector<SkySample> bodies;
    for (std::size_t k = 0; k < p.sample_lon.size(); ++k)
        bodies.push_back({p.sample_lon[k], p.sample_lat[k], p.sample_weight[k], group_of_sample(p, k)});
    const SampleDensity map(bodies);
    Rng rng = make_rng(4, "islands");
    // The far island's share (0.25) within 3 degrees (18 of its sigmas) of its centre, from 20 000 draws (binomial
    // standard error 0.3 %: within 5).
    CHECK(map.mass_within(far_lon, 0.0, 3.0 * deg, 20000, rng) == doctest::Approx(0.25).epsilon(5 * 0.0031 / 0.25));
    // Its spread is its own 600", widened only by Scott's kernel (h^2 = n_eff^(-1/3) of its 250 bodies, 16 % in
    // variance, taken back by the centres' shrink): within 10 %. One kernel over both islands would be about
    // 45 degrees wide.
    const std::vector<SkySample> d = map.draw(20000, rng);
    double s2 = 0.0, n = 0.0;
    for (const SkySample& x : d)
        if (separation(x.lon, x.lat, far_lon, 0.0) < 3.0 * deg) {
            const double dx = wrap_pi(x.lon - far_lon) / arcsec;
            s2 += dx * dx;
            n += 1.0;
        }
    REQUIRE(n > 4000.0);
    CHECK(std::sqrt(s2 / n) == doctest::Approx(600.0).epsilon(0.10));
    // The density at the island's centre is about its Gaussian's peak: 0.25 / (2 pi 600"^2) per square radian,
    // within 20 % (the kernel's smoothing and 250 bodies' noise).
    CHECK(map.at(far_lon, 0.0) == doctest::Approx(0.25 / (2.0 * pi * std::pow(600.0 * arcsec, 2))).epsilon(0.2));
    // And the HEALPix map holds each island's share too.
    const SkyMap sky = make_sky_map(bodies, 256);
    double far = 0.0;
    for (std::size_t pix = 0; pix < sky.probability.size(); ++pix) {
        if (sky.probability[pix] == 0.0) continue;
        double lon = 0.0, lat = 0.0;
        sky_map_pixel_centre(256, static_cast<std::int64_t>(pix), lon, lat);
        if (separation(lon, lat, far_lon, 0.0) < 3.0 * deg) far += sky.probability[pix];
    }
    CHECK(far == doctest::Approx(0.25).epsilon(1e-3));
}

TEST_CASE("mixture: solution.toml keeps which minimum each virtual body belongs to, and refuses a bad list") {
    Solution s;
    s.exercise_sha256 = std::string(64, 'b');
    s.prediction = best_with_bodies(200);
    REQUIRE(mix_other_minima(s.prediction, {minimum_with(0.5, std::nullopt), minimum_with(0.5, ellipse_at(2.5, 0.0, 900.0, 900.0))}, 3) == 1);
    const std::string text = solution_toml(s);
    const std::filesystem::path f = std::filesystem::temp_directory_path() / ("wayward-mix-" + std::to_string(::getpid()) + ".toml");
    std::ofstream(f) << text;
    const Solution back = load_solution(f.string());
    CHECK(back.prediction.sample_group == s.prediction.sample_group);
    CHECK(samples_describe_region(back.prediction));
    CHECK(mixed_share(back.prediction).probability == doctest::Approx(0.5).epsilon(1e-9));
    // A list of the wrong length, or one that is not whole numbers, names the field.
    const std::size_t at = text.find("\nsample_minimum = [");
    REQUIRE(at != std::string::npos);
    const std::size_t end = text.find("]\n", at) + 1;
    std::string not_whole = "sample_minimum = [0.5";
    for (std::size_t k = 1; k < s.prediction.sample_group.size(); ++k) not_whole += ", 0";
    not_whole += ']';
    for (const std::string& bad : {std::string("sample_minimum = [0, 1]"), not_whole}) {
        std::string broken = text.substr(0, at + 1);
        broken += bad;
        broken += text.substr(end);
        std::ofstream(f) << broken;
        CHECK_THROWS_WITH_AS(load_solution(f.string()), doctest::Contains("sample_minimum"), InputError);
    }
    std::filesystem::remove(f);
}

TEST_SUITE("slow") {

TEST_CASE("mixture: on hard seed 4 the map has an island where the second plausible minimum points") {
    // Hard, seed 4: the record does not demand a body, and three minima compete: the best (a = 141 au), a star-like
    // one (implausible) and a plausible one 84 degrees away with about a seventh of the probability.
    const Scenario sc = load_scenario(testing::source_path("scenarios/hard.toml"));
    const auto m = testing::make_exercise(sc, 4);
    SolveOptions o;
    o.threads = 2;
    const Solution s = solve(m.ex.exercise, o);
    const MixedShare share = mixed_share(s.prediction);
    MESSAGE("mixed in: " << share.minima << " minima, " << share.probability << " of the probability");
    REQUIRE(share.minima >= 1);
    double expected = 0.0, taken = s.minima.front().probability;
    std::optional<Prediction> island;
    for (std::size_t i = 1; i < s.minima.size(); ++i)
        if (s.minima[i].flags.empty() && s.minima[i].prediction && s.minima[i].probability >= mixture_min_probability) {
            expected += s.minima[i].probability;
            taken += s.minima[i].probability;
            if (!island) island = s.minima[i].prediction;
        }
    CHECK(share.probability == doctest::Approx(expected / taken).epsilon(1e-9));
    REQUIRE(island);
    CHECK(separation(island->lon, island->lat, s.prediction.lon, s.prediction.lat) > 30.0 * deg);
    // At the other minimum's place the map's density is the best minimum's own (its long band reaches there) plus
    // the island's: the island adds about its share times its Gaussian's peak, share / (2 pi sigma_1 sigma_2),
    // within a factor 1.6 either way (its few dozen bodies and the kernel's smoothing).
    std::vector<SkySample> all, own;
    for (std::size_t k = 0; k < s.prediction.sample_lon.size(); ++k) {
        const SkySample b{s.prediction.sample_lon[k], s.prediction.sample_lat[k], s.prediction.sample_weight[k], group_of_sample(s.prediction, k)};
        all.push_back(b);
        if (b.group == 0) own.push_back(b);
    }
    const double added = SampleDensity(all).at(island->lon, island->lat) - (1.0 - share.probability) * SampleDensity(own).at(island->lon, island->lat);
    const double peak = share.probability / (2.0 * pi * island->semi_major_arcsec * island->semi_minor_arcsec * arcsec * arcsec);
    MESSAGE("density the island adds at its centre: " << added / peak << " of its Gaussian peak");
    CHECK(added > peak / 1.6);
    CHECK(added < peak * 1.6);
}

}  // TEST_SUITE("slow")
