// The solver's options: the distance prior's one spelling (read and written back), and range checks that name
// the library field.
#include <doctest/doctest.h>

#include <limits>

#include "sim/base/errors.hpp"
#include "sim/commands/commands.hpp"
#include "sim/solve/solve_options.hpp"

using namespace wayward;

TEST_CASE("distance prior: every form reads back as written, numbers at full precision") {
    for (const char* text : {"free", "fixed:41.5", "gauss:30,4", "spacing:0.2", "fixed:33.123456789012345", "gauss:1e+02,0.125"}) {
        SolveOptions o;
        set_distance_prior(o, text);
        SolveOptions again;
        set_distance_prior(again, distance_prior_text(o));
        CHECK(again.distance == o.distance);
        CHECK(again.distance_au == o.distance_au);
        CHECK(again.distance_sigma_au == o.distance_sigma_au);
        CHECK(again.spacing_sigma_fraction == o.spacing_sigma_fraction);
    }
    SolveOptions o;
    set_distance_prior(o, "fixed:33.123456789012345");
    CHECK(o.distance_au == 33.123456789012345);  // %g would have cut this to 33.1235
    set_distance_prior(o, "spacing");
    CHECK(o.distance == DistancePrior::spacing);
    CHECK(o.spacing_sigma_fraction == 0.1);
}

TEST_CASE("solve options: a value out of range names the library field, with no file") {
    auto field_of = [](auto change) {
        SolveOptions o;
        change(o);
        try {
            validate(o);
        } catch (const InputError& e) {
            CHECK(e.file().empty());
            CHECK_FALSE(e.message().empty());
            return e.field();
        }
        return std::string("(accepted)");
    };
    CHECK(field_of([](SolveOptions&) {}) == "(accepted)");
    CHECK(field_of([](SolveOptions& o) { o.eccentricity_prior_sigma = 1.5; }) == "ecc_sigma");
    CHECK(field_of([](SolveOptions& o) { o.inclination_prior_rad = 0.0; }) == "tilt_sigma_deg");
    CHECK(field_of([](SolveOptions& o) { o.samples = 5; }) == "samples");
    CHECK(field_of([](SolveOptions& o) { o.samples = 0; }) == "(accepted)");  // no samples: a caller predicts without them
    CHECK(field_of([](SolveOptions& o) { o.starts = 65; }) == "starts");
    CHECK(field_of([](SolveOptions& o) { o.grid_distances = 1; }) == "grid_distances");
    CHECK(field_of([](SolveOptions& o) { o.grid_longitudes = 3; }) == "grid_longitudes");
    CHECK(field_of([](SolveOptions& o) { o.distance = DistancePrior::fixed; o.distance_au = -1; }) == "distance");
    CHECK(field_of([](SolveOptions& o) { o.epoch_year = std::numeric_limits<double>::quiet_NaN(); }) == "epoch_year");
    for (const char* bad : {"fixed:", "fixed:abc", "gauss:30", "spacing:1.5", "near", "fixed:nan"}) {
        SolveOptions o;
        CHECK_THROWS_AS(set_distance_prior(o, bad), InputError);
    }
}

TEST_CASE("solve command: the fitting model and its derivatives are chosen by name and checked") {
    SolveArgs a;
    a.dir = "ex";
    CHECK(solve_options(a).model.integrator == "wisdom-holman");
    CHECK(solve_options(a).model.derivatives == "variational");
    a.derivatives = "differences";
    CHECK(solve_options(a).model.derivatives == "differences");
    // The adaptive reference has no tangent map: it always takes differences.
    a.fitting_model = "adaptive";
    a.derivatives = "variational";
    CHECK(solve_options(a).model.integrator == "adaptive");
    CHECK(solve_options(a).model.derivatives == "differences");
    auto flag_of = [](const SolveArgs& bad) {
        try {
            solve_options(bad);
        } catch (const InputError& e) {
            return e.field();
        }
        return std::string("(accepted)");
    };
    SolveArgs b;
    b.fitting_model = "leapfrog";
    CHECK(flag_of(b) == "--fitting-model");
    SolveArgs c;
    c.derivatives = "automatic";
    CHECK(flag_of(c) == "--derivatives");
}
