// The solve's virtual bodies (its weighted samples at the epoch) as the one probability map: kept in
// solution.toml and read back exactly, drawn from by the search region (the same kernel density as the HEALPix
// map), so that a curved band stays a curved band and weights carry over; bad sample arrays are refused by name.
#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>
#include <unistd.h>

#include "sim/base/errors.hpp"
#include "sim/base/random.hpp"
#include "sim/base/units.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/predict/sky_map.hpp"
#include "sim/score/stated_prediction.hpp"
#include "sim/search/region.hpp"
#include "sim/solve/solve.hpp"

using namespace wayward;

namespace {

// A solution whose predicted place is (lon0, lat0) at 2000.0, with the given virtual bodies (equal weights unless
// given), every one run in full (the map not linear), and the ellipse of their own covariance.
Solution solution_with_bodies(const std::vector<SkySample>& bodies) {
    Solution s;
    s.exercise_sha256 = std::string(64, 'a');
    Prediction& p = s.prediction;
    p.epoch_year = 2000.0;
    p.lon = 1.0;
    p.lat = 0.0;
    p.distance_au = 40.0;
    double total = 0.0;
    for (const SkySample& b : bodies) total += b.weight;
    double sll = 0, slb = 0, sbb = 0;
    for (const SkySample& b : bodies) {
        p.sample_lon.push_back(b.lon);
        p.sample_lat.push_back(b.lat);
        p.sample_weight.push_back(b.weight / total);
        const double x = wrap_pi(b.lon - p.lon) * std::cos(p.lat) / arcsec, y = (b.lat - p.lat) / arcsec;
        sll += b.weight / total * x * x;
        slb += b.weight / total * x * y;
        sbb += b.weight / total * y * y;
    }
    p.cov_ll = sll;
    p.cov_lb = slb;
    p.cov_bb = sbb;
    ellipse_axes(sll, slb, sbb, p.semi_major_arcsec, p.semi_minor_arcsec, p.orientation_deg);
    p.samples_used = static_cast<int>(bodies.size());
    p.samples_in_full = p.samples_used;
    for (int k = -4; k <= 4; ++k) p.track.push_back({2000.0 + 0.25 * k, 1.0 + 0.01 * k * deg, 0.0});
    return s;
}

// Bodies along a circular arc of radius R (radians) about (lon0, lat0 + R), from angle -t_max to t_max: a band
// curving up from the predicted place, as a poorly known distance makes it.
std::vector<SkySample> arc_bodies(int n, double radius, double t_max, std::uint64_t seed) {
    Rng rng = make_rng(seed, "arc");
    std::vector<SkySample> out;
    for (int k = 0; k < n; ++k) {
        const double t = uniform(rng, -t_max, t_max);
        const double x = radius * std::sin(t) + normal(rng, 0.0, 0.02 * deg), y = radius * (1.0 - std::cos(t)) + normal(rng, 0.0, 0.02 * deg);
        out.push_back({1.0 + x, y, 1.0});
    }
    return out;
}

// Distance (radians, small-angle) of a tangent-plane offset from the arc above.
double from_arc(double xi, double eta, double radius) { return std::abs(std::hypot(xi, eta - radius) - radius); }

std::string write_temp(const std::string& text, const std::string& tag) {
    const std::filesystem::path f = std::filesystem::temp_directory_path() / ("wayward-vb-" + tag + "-" + std::to_string(::getpid()) + ".toml");
    std::ofstream(f) << text;
    return f.string();
}

// solution_toml's text with one line (starting `key =` in the [prediction] table) replaced.
std::string with_line(std::string text, const std::string& key, const std::string& line) {
    const std::size_t at = text.find("\n" + key + " = ");
    REQUIRE(at != std::string::npos);
    std::size_t end = text.find('\n', at + 1);
    if (text[text.find(" = ", at) + 3] == '[') end = text.find("]\n", at) + 1;  // a wrapped array ends at its ]
    return text.substr(0, at + 1) + line + text.substr(end);
}

}  // namespace

TEST_CASE("virtual bodies: solution.toml keeps their places and weights exactly") {
    std::vector<SkySample> bodies = arc_bodies(200, 5.0 * deg, 1.0, 1);
    for (std::size_t k = 0; k < bodies.size(); ++k) bodies[k].weight = 1.0 + static_cast<double>(k % 7);
    Solution s = solution_with_bodies(bodies);
    s.prediction.effective_samples = 170.25;
    const std::string path = write_temp(solution_toml(s), "roundtrip");
    const Solution back = load_solution(path);
    std::filesystem::remove(path);
    REQUIRE(back.prediction.sample_lon.size() == bodies.size());
    for (std::size_t k = 0; k < bodies.size(); ++k) {
        CAPTURE(k);
        // Degrees written with the shortest text that reads back to the same double, so the radians agree to the
        // rounding of the degree conversion.
        CHECK(std::abs(wrap_pi(back.prediction.sample_lon[k] - s.prediction.sample_lon[k])) < 1e-15);
        CHECK(std::abs(back.prediction.sample_lat[k] - s.prediction.sample_lat[k]) < 1e-15);
        CHECK(back.prediction.sample_weight[k] == s.prediction.sample_weight[k]);
    }
    CHECK(back.prediction.effective_samples == 170.25);
    CHECK(samples_describe_region(back.prediction));
}

TEST_CASE("virtual bodies: bad sample arrays are refused, naming the field") {
    const Solution s = solution_with_bodies(arc_bodies(20, 5.0 * deg, 1.0, 2));
    const std::string good = solution_toml(s);
    auto refused = [&](const std::string& text, const std::string& field) {
        const std::string path = write_temp(text, "bad");
        std::string message;
        try {
            (void)load_solution(path);
        } catch (const InputError& e) {
            message = e.what();
        }
        std::filesystem::remove(path);
        CAPTURE(message);
        CHECK(message.find(field) != std::string::npos);
    };
    refused(with_line(good, "sample_weight", "sample_weight = [0.5, 0.5]"), "sample_lon_deg");    // lengths differ
    std::string w = "sample_weight = [";
    for (int k = 0; k < 20; ++k) w += k ? ", 0.1" : "0.1";
    refused(with_line(good, "sample_weight", w + "]"), "add up to 1");
    std::string neg = "sample_weight = [-0.05, 0.1";
    for (int k = 2; k < 20; ++k) neg += ", 0.0527777777777777777";
    refused(with_line(good, "sample_weight", neg + "]"), "sample_weight");
    std::string lat = "sample_lat_deg = [91.0";
    for (int k = 1; k < 20; ++k) lat += ", 0.0";
    refused(with_line(good, "sample_lat_deg", lat + "]"), "sample_lat_deg");
    refused(with_line(good, "samples", "samples = 21"), "sample_lon_deg");
}

TEST_CASE("virtual bodies: draws from their density keep the weighted mean and covariance") {
    std::vector<SkySample> bodies = arc_bodies(300, 5.0 * deg, 1.0, 3);
    for (std::size_t k = 0; k < bodies.size(); ++k) bodies[k].weight = k % 3 == 0 ? 3.0 : 1.0;
    Rng rng = make_rng(9, "draws");
    const int n = 40000;
    const std::vector<SkySample> d = draw_from_sample_density(bodies, n, rng);
    REQUIRE(d.size() == static_cast<std::size_t>(n));
    auto moments = [](const std::vector<SkySample>& s, double& mx, double& my, double& vxx, double& vyy, double& vxy) {
        double t = 0;
        mx = my = vxx = vyy = vxy = 0;
        for (const SkySample& x : s) t += x.weight, mx += x.weight * (x.lon - 1.0), my += x.weight * x.lat;
        mx /= t, my /= t;
        for (const SkySample& x : s) {
            const double a = x.lon - 1.0 - mx, b = x.lat - my;
            vxx += x.weight * a * a, vyy += x.weight * b * b, vxy += x.weight * a * b;
        }
        vxx /= t, vyy /= t, vxy /= t;
    };
    double mx, my, vxx, vyy, vxy, dx, dy, dxx, dyy, dxy;
    moments(bodies, mx, my, vxx, vyy, vxy);
    moments(d, dx, dy, dxx, dyy, dxy);
    // Standard errors of a mean and a variance from n draws: sqrt(v / n) and about v sqrt(2 / n); 5 of them.
    CHECK(std::abs(dx - mx) < 5.0 * std::sqrt(vxx / n));
    CHECK(std::abs(dy - my) < 5.0 * std::sqrt(vyy / n));
    CHECK(std::abs(dxx / vxx - 1.0) < 5.0 * std::sqrt(2.0 / n));
    CHECK(std::abs(dyy / vyy - 1.0) < 5.0 * std::sqrt(2.0 / n) + 0.01);  // + the small-angle map's curvature at 5 deg
    CHECK(std::abs(dxy - vxy) < 5.0 * std::sqrt((vxx * vyy + vxy * vxy) / n));
    // The same seed gives the same draws.
    Rng again = make_rng(9, "draws");
    const std::vector<SkySample> d2 = draw_from_sample_density(bodies, 100, again);
    for (std::size_t k = 0; k < d2.size(); ++k) CHECK(d2[k].lon == d[k].lon);
    Rng bad = make_rng(1, "bad");
    CHECK_THROWS_AS(draw_from_sample_density({}, 10, bad), InputError);
    CHECK_THROWS_AS(draw_from_sample_density({{1.0, 0.0, -1.0}, {1.0, 0.0, 2.0}}, 10, bad), InputError);
}

TEST_CASE("virtual bodies: the search region follows a curved band where the ellipse cannot") {
    const double radius = 5.0 * deg;
    const Solution s = solution_with_bodies(arc_bodies(300, radius, 1.0, 4));
    const SearchRegion from_bodies = region_from_solution(s, 20000, 5);
    CHECK(from_bodies.from_virtual_bodies);
    CHECK(from_bodies.effective_samples == doctest::Approx(300.0).epsilon(1e-9));
    Solution linear = s;
    linear.prediction.samples_in_full = 40;  // the pilot found the map linear: the ellipse describes it
    const SearchRegion from_ellipse = region_from_solution(linear, 20000, 5);
    CHECK_FALSE(from_ellipse.from_virtual_bodies);
    auto near_arc = [&](const SearchRegion& r) {
        int k = 0;
        for (const RegionSample& x : r.samples) k += from_arc(x.xi, x.eta, radius) < 0.5 * deg;
        return static_cast<double>(k) / static_cast<double>(r.samples.size());
    };
    const double band = near_arc(from_bodies), ellipse = near_arc(from_ellipse);
    CAPTURE(band);
    CAPTURE(ellipse);
    // The ellipse of the same covariance puts most of its probability inside the curve, off the band. The kernel
    // density keeps the band but blurs it: its kernel is 0.39 (300^(-1/6)) of the bodies' own spread, 1.0 deg
    // along the band and 0.26 deg across, and its centres are drawn 8 % towards the mean; so about two thirds of
    // the draws lie within 0.5 deg of the arc (0.68 seen), more than twice the ellipse's share (0.30 seen).
    CHECK(band > 0.6);
    CHECK(band > 2.0 * ellipse);
    // The region's reach holds 98.9 % of its draws, and the tiling reaches as far.
    int inside = 0;
    for (const RegionSample& x : from_bodies.samples) inside += std::hypot(x.xi, x.eta) <= from_bodies.reach;
    CHECK(static_cast<double>(inside) / 20000.0 == doctest::Approx(0.989).epsilon(0.002));
}

TEST_CASE("virtual bodies: weights carry into the region") {
    std::vector<SkySample> bodies;
    Rng rng = make_rng(6, "clouds");
    for (int k = 0; k < 200; ++k) bodies.push_back({1.0 + normal(rng, 0.0, 0.2 * deg), normal(rng, 0.0, 0.2 * deg), 3.0});
    for (int k = 0; k < 200; ++k) bodies.push_back({1.0 + 10.0 * deg + normal(rng, 0.0, 0.2 * deg), normal(rng, 0.0, 0.2 * deg), 1.0});
    const SearchRegion r = region_from_solution(solution_with_bodies(bodies), 40000, 7);
    int near = 0;
    for (const RegionSample& x : r.samples) near += x.xi < std::tan(5.0 * deg);  // the clouds' midpoint divides them
    // The weights 600 : 200, within 5 binomial standard errors of 40 000 draws. (The kernel, 0.38 of the 4.3-degree
    // spread along the line of the clouds, sends about 0.1 % of draws across the midpoint: within the tolerance.)
    const double n = 40000.0;
    CHECK(std::abs(static_cast<double>(near) / n - 0.75) < 5.0 * std::sqrt(0.75 * 0.25 / n));
}

TEST_CASE("virtual bodies: bodies on the far side of the sky fall outside every field") {
    std::vector<SkySample> bodies;
    Rng rng = make_rng(8, "cloud");
    for (int k = 0; k < 400; ++k) bodies.push_back({1.0 + normal(rng, 0.0, 0.5 * deg), normal(rng, 0.0, 0.5 * deg), 1.0});
    for (int k = 0; k < 4; ++k) bodies.push_back({1.0 + pi, 0.0, 0.5});  // 2 of 402 in weight, 180 deg away
    const SearchRegion r = region_from_solution(solution_with_bodies(bodies), 40000, 9);
    int far = 0;
    for (const RegionSample& x : r.samples) far += x.xi > 100.0;
    const double n = 40000.0, p_far = 2.0 / 402.0;
    CHECK(std::abs(static_cast<double>(far) - n * p_far) < 5.0 * std::sqrt(n * p_far * (1.0 - p_far)));
    Telescope tel;
    const std::vector<Field> fields = tile_region(r, tel);
    double sum = 0.0;
    for (double p : field_probabilities(r, tel, fields)) sum += p;
    CHECK(sum <= 1.0 - static_cast<double>(far) / n + 1e-12);
}

TEST_CASE("virtual bodies: the map's rank of a direction and its mass in a circle, for a Gaussian cloud") {
    // A circular Gaussian of sigma 1 deg in 20 000 equal bodies. The kernel estimate keeps the cloud's covariance
    // (shrunk centres plus the kernel), so the map is close to that Gaussian, whose highest-density region through
    // a point at d sigmas holds 1 - exp(-d^2/2) and whose circle of radius r sigmas holds the same (standard
    // results for the two-dimensional normal distribution). The estimate's own noise at a point is
    // sqrt(1 / (4 pi n h^2 f sigma^2)) relative (the kernel estimator's variance, Scott 1992, ch. 6), which moves the
    // rank by (f / f_peak) times as much: 0.02 at 1 sigma and 0.01 at 2 sigma here; with 3000 bodies it is 0.03
    // at 2 sigma (0.81 was seen for 0.865), hence the large cloud.
    Rng rng = make_rng(12, "cloud");
    std::vector<SkySample> bodies;
    for (int k = 0; k < 20000; ++k) bodies.push_back({1.0 + normal(rng, 0.0, 1.0 * deg), normal(rng, 0.0, 1.0 * deg), 1.0});
    const SampleDensity map(bodies);
    Rng draws = make_rng(13, "draws");
    for (double d : {0.5, 1.0, 2.0}) {
        CAPTURE(d);
        const double expected = 1.0 - std::exp(-0.5 * d * d);
        // 2000 draws (a binomial standard error) and the estimate's noise above, together: within 4 of them.
        const double n = 20000.0, h2 = std::pow(n, -1.0 / 3.0), f = std::exp(-0.5 * d * d) / (2.0 * pi);
        const double kde = (1.0 - expected) * std::sqrt(1.0 / (4.0 * pi * n * h2 * f));
        const double tolerance = 4.0 * std::sqrt(expected * (1.0 - expected) / 2000.0 + kde * kde);
        CAPTURE(tolerance);
        CHECK(std::abs(map.rank_of(1.0 + d * deg, 0.0, 2000, draws) - expected) < tolerance);
        CHECK(std::abs(map.mass_within(1.0, 0.0, d * deg, 20000, draws) - expected) < 0.02);
    }
    CHECK(map.rank_of(1.0 + 8.0 * deg, 0.0, 500, draws) == doctest::Approx(1.0));  // far out: everything is denser
    CHECK(map.effective_samples() == doctest::Approx(20000.0));
}

TEST_CASE("virtual bodies: a stated prediction may give its region as samples, weighted or not") {
    const std::string head = "lon_deg = 57.3\nlat_deg = 0.5\nepoch_year = 2000.0\n";
    // Without weights: equal; the samples become the region.
    std::vector<Prediction> p = parse_stated_predictions(head + "sample_lon_deg = [57.0, 57.5, 58.0]\nsample_lat_deg = [0.4, 0.5, 0.6]\n", "p.toml");
    REQUIRE(p.size() == 1);
    CHECK(samples_describe_region(p[0]));
    CHECK(p[0].samples_used == 3);
    for (double w : p[0].sample_weight) CHECK(w == doctest::Approx(1.0 / 3.0));
    CHECK(p[0].effective_samples == doctest::Approx(3.0));
    // Weights on any scale are normalised.
    p = parse_stated_predictions(head + "sample_lon_deg = [57.0, 57.5]\nsample_lat_deg = [0.4, 0.5]\nsample_weight = [3.0, 1.0]\n", "p.toml");
    CHECK(p[0].sample_weight[0] == doctest::Approx(0.75));
    CHECK(p[0].effective_samples == doctest::Approx(16.0 / 10.0));
    // Bad sets are refused by field.
    auto field_of = [&](const std::string& text) {
        try {
            (void)parse_stated_predictions(head + text, "p.toml");
        } catch (const InputError& e) {
            return e.field();
        }
        return std::string("(accepted)");
    };
    CHECK(field_of("sample_lon_deg = [57.0, 57.5]\nsample_lat_deg = [0.4]\n") == "sample_lon_deg");
    CHECK(field_of("sample_lon_deg = [57.0]\nsample_lat_deg = [95.0]\n") == "sample_lat_deg");
    CHECK(field_of("sample_lon_deg = [57.0, 58.0]\nsample_lat_deg = [0.4, 0.5]\nsample_weight = [1.0, -1.0]\n") == "sample_weight");
    CHECK(field_of("sample_lon_deg = [57.0, 58.0]\nsample_lat_deg = [0.4, 0.5]\nsample_weight = [0.0, 0.0]\n") == "sample_weight");
}
