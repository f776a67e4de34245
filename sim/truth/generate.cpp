// Drawing invented systems and checking that they are plausible. See generate.hpp.
#include "sim/truth/generate.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>

#include "sim/base/errors.hpp"
#include "sim/physics/geometry.hpp"
#include "sim/base/units.hpp"

namespace wayward {

std::optional<std::size_t> Truth::hidden_index() const {
    for (std::size_t i = 0; i < system.bodies.size(); ++i)
        if (system.bodies[i].role == Role::hidden) return i;
    return std::nullopt;
}

double mutual_hill_radius(double a1, double m1, double a2, double m2, double star_mass) {
    return std::cbrt((m1 + m2) / (3.0 * star_mass)) * 0.5 * (a1 + a2);
}

namespace {

Vec3 to_vec(const std::array<double, 3>& v) { return {v[0], v[1], v[2]}; }

Elements draw_elements(const BodySpec& b, Rng& rng, double outer_a) {
    Elements el;
    el.semi_major_axis = b.a.draw(rng) * (b.a_relative_to_outer ? outer_a : 1.0);
    el.eccentricity = b.e.draw(rng);
    el.inclination = b.i_deg.draw(rng) * deg;
    el.ascending_node = wrap_two_pi(b.node_deg.draw(rng) * deg);
    el.arg_periapsis = wrap_two_pi(b.peri_deg.draw(rng) * deg);
    el.mean_anomaly = wrap_two_pi(b.mean_anomaly_deg.draw(rng) * deg);
    return el;
}

}  // namespace

System make_system(const std::string& star_name, double star_mass, const std::vector<DrawnBody>& bodies) {
    std::vector<HelioBody> helio;
    for (const DrawnBody& b : bodies) helio.push_back({b.name, b.role, b.observer, b.mass, b.helio});
    return system_from_helio(star_name, star_mass, helio);
}

Truth draw_system(const Scenario& sc, Rng& rng) {
    Truth t;
    t.scenario_name = sc.name;
    t.epoch0_year = sc.epoch0_year;
    t.span_days = sc.span_years * julian_year_days;
    t.star_mass = sc.star_mass.draw(rng);
    const double gm_star = gm_from_mass(t.star_mass);
    const double obliquity = sc.obliquity_deg * deg;

    std::vector<DrawnBody> known, hidden;
    // Listed known bodies first, in file order, so that a body's draws do not depend on the family's count.
    auto finish_body = [&](DrawnBody& d) {
        const double mu = gm_star + gm_from_mass(d.mass);
        d.helio = elements_to_state(d.elements, mu);
    };
    std::vector<const BodySpec*> deferred;
    for (const BodySpec& b : sc.bodies) {
        if (b.a_relative_to_outer) { deferred.push_back(&b); continue; }
        DrawnBody d{b.name, b.role, b.observer, b.mass.draw(rng), {}, {}};
        if (b.has_elements) {
            d.elements = draw_elements(b, rng, 1.0);
            finish_body(d);
        } else {
            const bool eq = b.frame == BodySpec::Frame::equatorial;
            d.helio.position = eq ? equatorial_to_reference(to_vec(b.position), obliquity) : to_vec(b.position);
            d.helio.velocity = eq ? equatorial_to_reference(to_vec(b.velocity), obliquity) : to_vec(b.velocity);
            d.elements = state_to_elements(d.helio, gm_star + gm_from_mass(d.mass));
        }
        (b.role == Role::hidden ? hidden : known).push_back(d);
    }
    if (sc.family.present) {
        const FamilySpec& f = sc.family;
        const int count = f.count_min + static_cast<int>(std::floor(uniform01(rng) * (f.count_max - f.count_min + 1)));
        double a = f.inner_a.draw(rng);
        for (int k = 0; k < std::min(count, f.count_max); ++k) {
            if (k > 0) a *= f.spacing_ratio.draw(rng) * (1.0 + f.ratio_scatter.draw(rng) * normal(rng));
            DrawnBody d{f.names[static_cast<std::size_t>(k)], Role::known, f.observer_position == k + 1, f.mass.draw(rng), {}, {}};
            d.elements.semi_major_axis = a;
            d.elements.eccentricity = f.e.draw(rng);
            d.elements.inclination = f.i_deg.draw(rng) * deg;
            d.elements.ascending_node = uniform(rng, 0.0, two_pi);
            d.elements.arg_periapsis = uniform(rng, 0.0, two_pi);
            d.elements.mean_anomaly = uniform(rng, 0.0, two_pi);
            finish_body(d);
            known.push_back(d);
        }
    }
    std::stable_sort(known.begin(), known.end(),
                     [](const DrawnBody& x, const DrawnBody& y) { return x.elements.semi_major_axis < y.elements.semi_major_axis; });
    double outer_a = 0.0;
    for (const DrawnBody& d : known) outer_a = std::max(outer_a, d.elements.semi_major_axis);
    for (const BodySpec* b : deferred) {
        DrawnBody d{b->name, b->role, b->observer, b->mass.draw(rng), draw_elements(*b, rng, outer_a), {}};
        finish_body(d);
        hidden.push_back(d);
    }
    t.bodies = known;
    t.bodies.insert(t.bodies.end(), hidden.begin(), hidden.end());
    t.system = make_system(sc.star_name, t.star_mass, t.bodies);
    return t;
}

Plausibility check_spacing(const Truth& t, const PlausibilityRules& rules) {
    std::vector<const DrawnBody*> order;
    for (const DrawnBody& b : t.bodies) order.push_back(&b);
    std::sort(order.begin(), order.end(), [](auto* x, auto* y) { return x->elements.semi_major_axis < y->elements.semi_major_axis; });
    const double gladman = 2.0 * std::sqrt(3.0);
    for (std::size_t k = 0; k + 1 < order.size(); ++k) {
        const DrawnBody& in = *order[k];
        const DrawnBody& out = *order[k + 1];
        const double a1 = in.elements.semi_major_axis, a2 = out.elements.semi_major_axis;
        if (!(in.elements.eccentricity < 1.0) || !(out.elements.eccentricity < 1.0))
            return {false, "an orbit is unbound (e >= 1): " + (in.elements.eccentricity >= 1.0 ? in.name : out.name)};
        const double apo = a1 * (1.0 + in.elements.eccentricity);
        const double peri = a2 * (1.0 - out.elements.eccentricity);
        std::ostringstream msg;
        if (apo >= peri) {
            msg << "the orbits of " << in.name << " and " << out.name << " cross (apocentre " << apo
                << " au >= pericentre " << peri << " au)";
            return {false, msg.str()};
        }
        const double rh = mutual_hill_radius(a1, in.mass, a2, out.mass, t.star_mass);
        const double spacing = (a2 - a1) / rh;
        const double need = std::max(rules.min_hill_separation, gladman);
        if (spacing < need) {
            msg << in.name << " and " << out.name << " are " << spacing << " mutual Hill radii apart; at least " << need
                << " are required" << (spacing < gladman ? " (below Gladman's 1993 two-planet criterion)" : "");
            return {false, msg.str()};
        }
    }
    return {};
}

Plausibility check_dynamics(const Truth& t, const PlausibilityRules& rules, const IntegrationResult& run) {
    if (run.outcome != IntegrationOutcome::ok)
        return {false, "the check integration failed: " + to_string(run.outcome)};
    const Ephemeris& eph = run.ephemeris;
    const System last = eph.system_at(eph.t_end());
    const double e0 = total_energy(t.system), e1 = total_energy(last);
    const double rel = std::abs((e1 - e0) / e0);
    if (!(rel <= rules.max_energy_error)) {
        std::ostringstream msg;
        msg << "the check integration's relative energy error " << rel << " exceeds " << rules.max_energy_error;
        return {false, msg.str()};
    }
    // Close encounters: at every node, every pair must stay outside 3 mutual Hill radii of their current distances.
    const std::size_t n = eph.size();
    const double gm_star = eph.gm[0];
    for (std::size_t k = 0; k < eph.nodes(); ++k) {
        const double* x = &eph.states[6 * n * k];
        for (std::size_t i = 1; i < n; ++i) {
            const Vec3 ri(x[6 * i] - x[0], x[6 * i + 1] - x[1], x[6 * i + 2] - x[2]);
            for (std::size_t j = i + 1; j < n; ++j) {
                const Vec3 rj(x[6 * j] - x[0], x[6 * j + 1] - x[1], x[6 * j + 2] - x[2]);
                const double d = (ri - rj).norm();
                const double rh = std::cbrt((eph.gm[i] + eph.gm[j]) / (3.0 * gm_star)) * 0.5 * (ri.norm() + rj.norm());
                if (d < 3.0 * rh) {
                    std::ostringstream msg;
                    msg << eph.bodies[i].name << " and " << eph.bodies[j].name << " pass within " << d / rh
                        << " mutual Hill radii at day " << eph.times[k];
                    return {false, "close encounter: " + msg.str()};
                }
            }
        }
    }
    return {};
}

// The hidden body's radius and geometric albedo, from a stream of their own so that every other draw is the same
// with or without them. Absent from the scenario: the radius of a sphere of the body's mass at 1.64 g/cm^3 (an
// ice giant's mean density, from memory) and albedo 0.3 (common practice for a cloud-topped giant).
static void draw_surfaces(const Scenario& sc, std::uint64_t seed, Truth& t) {
    Rng rng = make_rng(seed, "surface");
    constexpr double solar_mass_kg = 1.98847e30;  // IAU 2015 nominal GM_sun / G (from memory)
    constexpr double density_kg_m3 = 1640.0;
    for (DrawnBody& d : t.bodies) {
        if (d.role != Role::hidden) continue;
        const BodySpec* spec = nullptr;
        for (const BodySpec& b : sc.bodies) if (b.name == d.name) spec = &b;
        const double radius_m = std::cbrt(3.0 * d.mass * solar_mass_kg / (4.0 * pi * density_kg_m3));
        d.radius_km = spec && spec->radius_km ? spec->radius_km->draw(rng) : radius_m / 1000.0;
        d.geometric_albedo = spec && spec->albedo ? spec->albedo->draw(rng) : 0.3;
    }
}

std::vector<HiddenAtSearch> hidden_at_search_epochs(const Truth& t, const Scenario& sc, const Ephemeris& eph) {
    std::vector<HiddenAtSearch> out;
    if (!sc.plan.present) return out;
    const std::size_t observer = t.system.observer_index();
    for (std::size_t i = 0; i < t.system.bodies.size(); ++i) {
        if (t.system.bodies[i].role != Role::hidden) continue;
        for (double year : sc.plan.search_epochs_year) {
            const double days = std::clamp(days_from_year(t.epoch0_year, year), eph.t_begin(), eph.t_end());
            const double e_deg = elongation(eph, observer, i, days) / deg;
            out.push_back({t.system.bodies[i].name, year, e_deg, !(e_deg > sc.plan.elongation_limit_deg)});
        }
    }
    return out;
}

Plausibility check_search_view(const Truth& t, const Scenario& sc, const IntegrationResult& run) {
    if (!sc.rules.hidden_clear_of_star) return {};
    for (const HiddenAtSearch& h : hidden_at_search_epochs(t, sc, run.ephemeris))
        if (h.inside_limit) {
            std::ostringstream msg;
            msg << h.name << " stands " << h.elongation_deg << " deg from the star at the search epoch " << h.year
                << ", inside the elongation limit of " << sc.plan.elongation_limit_deg << " deg (hidden_clear_of_star)";
            return {false, msg.str()};
        }
    return {};
}

// Light from 100 au takes 0.58 d; the ephemeris starts this early so every light-time correction is covered.
constexpr double light_time_margin_days = 2.0;

Truth generate(const Scenario& sc, std::uint64_t seed, IntegrationResult* run, const IntegratorOptions& options) {
    std::string last_problem;
    for (int draw = 0; draw < sc.rules.max_draws; ++draw) {
        Rng rng = make_rng(seed, "generate", static_cast<std::uint64_t>(draw));
        Truth t = draw_system(sc, rng);
        t.seed = seed;
        t.draws = draw + 1;
        Plausibility p = check_spacing(t, sc.rules);
        if (p.ok) {
            // A short margin before epoch 0 lets light-time corrections reach back from the first observations.
            IntegrationResult r = integrate(t.system, -light_time_margin_days, t.span_days, options);
            p = check_dynamics(t, sc.rules, r);
            if (p.ok) p = check_search_view(t, sc, r);
            if (p.ok) {
                draw_surfaces(sc, seed, t);
                if (run) *run = std::move(r);
                return t;
            }
        }
        last_problem = p.problem;
        if (sc.all_fixed()) break;  // drawing again cannot help
    }
    throw InputError(sc.file, 0, "", "no plausible system after " + std::to_string(sc.all_fixed() ? 1 : sc.rules.max_draws) +
                                         " draw(s); the last one failed because " + last_problem);
}

System build_fixed_system(const Scenario& sc) {
    if (!sc.all_fixed()) throw InputError(sc.file, 0, "", "the scenario draws some of its values: give a seed (wayward new --seed N)");
    Rng rng = make_rng(0, "fixed");
    return draw_system(sc, rng).system;
}

}  // namespace wayward
