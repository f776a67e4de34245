// The list of fields for a record with no truth: most probable first, each sample of the region counted once
// however the circles overlap, the shares adding up, and no field nearer the star than the elongation limit.
#include <doctest/doctest.h>

#include <cmath>

#include "sim/base/units.hpp"
#include "sim/search/field_plan.hpp"
#include "sim/search/region.hpp"

using namespace wayward;

namespace {
// A region about (lon 180 + offset deg, lat 0) with a 1-sigma ellipse of 1.5 x 0.75 deg, fixed on the sky.
SearchRegion region_at(double offset_deg) {
    Solution s;
    s.prediction.epoch_year = 2000.0;
    s.prediction.lon = (180.0 + offset_deg) * deg;
    s.prediction.lat = 0.0;
    s.prediction.cov_ll = std::pow(1.5 * 3600.0, 2);
    s.prediction.cov_bb = std::pow(0.75 * 3600.0, 2);
    s.prediction.semi_major_arcsec = 1.5 * 3600.0;
    s.prediction.semi_minor_arcsec = 0.75 * 3600.0;
    return region_from_solution(s, 4000, 7);
}
Telescope circle_of(double diameter_deg) {
    Telescope t;
    t.shape = FieldShape::circle;
    t.field_of_view_deg = diameter_deg;
    return t;
}
// The observer 1 au from the star along +x: the star is seen at longitude 180 deg.
const ObserverPath fixed_observer = [](double) { return Vec3(1.0, 0.0, 0.0); };
}  // namespace

TEST_CASE("the field list: most probable first, shares counted once, and the 50/90/99 % counts") {
    const SearchRegion r = region_at(90.0);  // 90 deg from the star: nothing is kept away
    const Telescope tel = circle_of(2.0);
    const std::vector<Field> tiling = tile_region(r, tel);
    const FieldPlan plan = plan_fields(r, tel, tiling, fixed_observer, 20.0 * deg, 2000.0, 0.0);
    REQUIRE(!plan.fields.empty());
    CHECK(plan.kept_from_star == 0);
    CHECK(plan.probability_near_star == 0.0);
    CHECK(plan.reach >= 0.99);
    double sum = 0.0;
    for (std::size_t k = 0; k < plan.fields.size(); ++k) {
        const PlannedField& f = plan.fields[k];
        sum += f.added;
        CHECK(f.cumulative == doctest::Approx(sum).epsilon(1e-12));
        CHECK(f.added <= f.probability + 1e-12);  // overlaps are not counted twice
        CHECK(f.added > 0.0);                     // and a field adding nothing is not listed
        if (k > 0) CHECK(f.probability <= plan.fields[k - 1].probability);
        CHECK(std::abs(f.elongation / deg - 90.0) < 6.0);
    }
    // Only the last field may take the list past 99 %.
    CHECK(plan.fields[plan.fields.size() - 2].cumulative < 0.99);
    // The circles overlap (neighbours are a square's side apart), so the plain shares add to more than the union.
    double plain = 0.0;
    for (const PlannedField& f : plan.fields) plain += f.probability;
    CHECK(plain > plan.reach);
    CHECK(plan.fields_for(0.5) >= 1);
    CHECK(plan.fields_for(0.5) <= plan.fields_for(0.9));
    CHECK(plan.fields_for(0.9) <= plan.fields_for(0.99));
    CHECK(plan.fields_for(0.99) == static_cast<int>(plan.fields.size()));
    // The most probable field is the one on the predicted place.
    CHECK(std::abs(plan.fields[0].lon / deg - 270.0) < 1.0);
}

TEST_CASE("the field list keeps away from the star and says how much of the region lies only there") {
    const SearchRegion r = region_at(21.0);  // its centre 21 deg from the star, the limit 20 deg
    const Telescope tel = circle_of(1.0);
    const FieldPlan plan = plan_fields(r, tel, tile_region(r, tel), fixed_observer, 20.0 * deg, 2000.0, 0.0);
    CHECK(plan.kept_from_star > 0);
    for (const PlannedField& f : plan.fields) CHECK(f.elongation >= 20.0 * deg);
    // About the share of the Gaussian nearer the star than the limit (1 deg of a 1.5 deg sigma along longitude:
    // P(x < -1/1.5) = 0.25), blurred by the fields' size; the rest is listed.
    CHECK(plan.probability_near_star > 0.1);
    CHECK(plan.probability_near_star < 0.4);
    CHECK(plan.reach + plan.probability_near_star <= 1.0 + 1e-12);
    CHECK(plan.reach > 0.5);
}
