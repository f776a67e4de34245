// Generation of an invented system from a scenario and a seed: every drawn parameter is drawn from the
// scenario's stream, then the system is accepted only if it is plausible (Hill spacing no tighter than the
// scenario asks and never below Gladman's (1993) two-planet criterion 2*sqrt(3) mutual Hill radii, no crossing
// orbits, and a check integration over the span with no close encounter and bounded energy error).
// Units: au, day, solar masses; angles in radians.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "sim/physics/integrate.hpp"
#include "sim/scenario/scenario.hpp"

namespace wayward {

struct DrawnBody {
    std::string name;
    Role role = Role::known;
    bool observer = false;
    double mass = 0.0;          // solar masses
    Elements elements;          // heliocentric osculating elements at epoch 0 (reference frame)
    StateVector helio;          // heliocentric state at epoch 0 (reference frame)
    double radius_km = 0.0;     // hidden body only (0: none recorded): its surface, for the search rehearsal
    double geometric_albedo = 0.0;
};

struct Truth {
    std::string scenario_name;
    double epoch0_year = 0.0;
    double span_days = 0.0;
    std::uint64_t seed = 0;
    int draws = 1;                    // how many draws it took to find a plausible system
    double star_mass = 1.0;
    std::vector<DrawnBody> bodies;    // planets: known ones by semi-major axis, then the hidden body
    System system;                    // barycentric system at epoch 0 (body 0 = star)
    std::optional<std::size_t> hidden_index() const;  // index in `system`
};

// Draws one system (no plausibility check). Bodies from elements and from state vectors both come out with
// elements and heliocentric states filled in.
Truth draw_system(const Scenario& sc, Rng& rng);

// The builder shared by all paths: star mass + drawn bodies -> barycentric System at epoch 0.
System make_system(const std::string& star_name, double star_mass, const std::vector<DrawnBody>& bodies);

struct Plausibility {
    bool ok = true;
    std::string problem;  // which condition failed, in words
};
// Spacing and crossing rules only (cheap).
Plausibility check_spacing(const Truth& t, const PlausibilityRules& rules);
// The check integration over the span: close encounters and energy error.
Plausibility check_dynamics(const Truth& t, const PlausibilityRules& rules, const IntegrationResult& run);
// Each hidden body's elongation from the star at each search epoch, and whether it lies within the plan's limit.
struct HiddenAtSearch {
    std::string name;
    double year = 0.0;
    double elongation_deg = 0.0;
    bool inside_limit = false;
};
std::vector<HiddenAtSearch> hidden_at_search_epochs(const Truth& t, const Scenario& sc, const Ephemeris& eph);

// With the scenario's hidden_clear_of_star rule: every hidden body farther from the star than the elongation
// limit at every search epoch (otherwise always plausible).
Plausibility check_search_view(const Truth& t, const Scenario& sc, const IntegrationResult& run);

// Draws until a plausible system is found, up to the scenario's limit; throws InputError naming the scenario
// and the condition it cannot meet. `run` (optional) receives the truth integration over [0, span].
Truth generate(const Scenario& sc, std::uint64_t seed, IntegrationResult* run = nullptr,
               const IntegratorOptions& options = {});

// The fixed system of a scenario whose parameters are all fixed (throws InputError otherwise).
System build_fixed_system(const Scenario& sc);

// Mutual Hill radius of two planets (Chambers et al. 1996): ((m1 + m2) / 3M)^(1/3) (a1 + a2) / 2.
double mutual_hill_radius(double a1, double m1, double a2, double m2, double star_mass);

}  // namespace wayward
