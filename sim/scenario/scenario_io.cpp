// Scenario TOML reader and the fixed-system builder. Validation happens here, once, at the boundary.
#include <algorithm>
#include <cmath>
#include <limits>
#include <set>
#include <sstream>

#include "sim/scenario/scenario.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/base/units.hpp"

namespace wayward {

using detail::TableReader;

double Param::draw(Rng& rng) const {
    switch (kind) {
        case Kind::fixed: return value;
        case Kind::uniform: return uniform(rng, lo, hi);
        case Kind::log_uniform: return std::exp(uniform(rng, std::log(lo), std::log(hi)));
        case Kind::rayleigh:
            // Rayleigh(sd): the length of a 2-D Gaussian vector, the usual model for small eccentricities and
            // inclinations (common practice); drawn as sd * sqrt(-2 ln U).
            for (int k = 0; k < 10000; ++k) {
                const double v = sd * std::sqrt(-2.0 * std::log(1.0 - uniform01(rng)));
                if (!bounded || (v >= lo && v <= hi)) return v;
            }
            return bounded ? lo : 0.0;
        case Kind::normal:
            for (int k = 0; k < 10000; ++k) {
                const double v = normal(rng, mean, sd);
                if (!bounded || (v >= lo && v <= hi)) return v;
            }
            return std::clamp(mean, lo, hi);
    }
    return value;
}

double Param::min_value() const {
    switch (kind) {
        case Kind::fixed: return value;
        case Kind::normal: return bounded ? lo : -std::numeric_limits<double>::infinity();
        case Kind::rayleigh: return bounded ? lo : 0.0;
        default: return lo;
    }
}
double Param::max_value() const {
    switch (kind) {
        case Kind::fixed: return value;
        case Kind::normal:
        case Kind::rayleigh: return bounded ? hi : std::numeric_limits<double>::infinity();
        default: return hi;
    }
}

namespace {

// A parameter: a number, or a table { uniform = [lo, hi] } | { log_uniform = [lo, hi] } |
// { normal = [mean, sd], bounds = [lo, hi] } | { rayleigh = sd, bounds = [lo, hi] }.
std::optional<Param> read_param(TableReader& r, const std::string& key) {
    const toml::node* n = r.node(key);
    if (!n) return std::nullopt;
    Param p;
    p.line = r.line_of(key);
    if (n->is_number()) {
        p.value = r.number(key).value();
        return p;
    }
    const toml::table* t = n->as_table();
    if (!t) r.fail(key, "expected a number or a distribution table such as { uniform = [lo, hi] }");
    TableReader d(*t, r.file(), r.field(key));
    auto pair = [&](const std::string& k) {
        auto v = d.numbers(k);
        if (v && v->size() != 2) d.fail(k, "expected two numbers");
        return v;
    };
    const auto uni = pair("uniform"), logu = pair("log_uniform"), nor = pair("normal"), bounds = pair("bounds");
    const auto ray = d.number("rayleigh");
    const int kinds = int(uni.has_value()) + int(logu.has_value()) + int(nor.has_value()) + int(ray.has_value());
    if (kinds != 1) r.fail(key, "a distribution needs exactly one of uniform, log_uniform, normal or rayleigh");
    if (uni) {
        p.kind = Param::Kind::uniform;
        p.lo = (*uni)[0]; p.hi = (*uni)[1];
        if (!(p.hi >= p.lo)) d.fail("uniform", "the upper end must not be below the lower end");
    } else if (logu) {
        p.kind = Param::Kind::log_uniform;
        p.lo = (*logu)[0]; p.hi = (*logu)[1];
        if (!(p.lo > 0.0)) d.fail("log_uniform", "both ends must be positive");
        if (!(p.hi >= p.lo)) d.fail("log_uniform", "the upper end must not be below the lower end");
    } else if (ray) {
        p.kind = Param::Kind::rayleigh;
        p.sd = *ray;
        if (!(p.sd > 0.0)) d.fail("rayleigh", "the scale must be positive");
    } else {
        p.kind = Param::Kind::normal;
        p.mean = (*nor)[0]; p.sd = (*nor)[1];
        if (!(p.sd >= 0.0)) d.fail("normal", "the standard deviation must not be negative");
    }
    if (bounds) {
        if (p.kind != Param::Kind::normal && p.kind != Param::Kind::rayleigh)
            d.fail("bounds", "bounds apply to normal and rayleigh distributions only");
        p.bounded = true;
        p.lo = (*bounds)[0]; p.hi = (*bounds)[1];
        if (!(p.hi >= p.lo)) d.fail("bounds", "the upper bound must not be below the lower bound");
        if (p.kind == Param::Kind::normal && (p.mean < p.lo - 5 * p.sd || p.mean > p.hi + 5 * p.sd))
            d.fail("bounds", "the bounds leave almost no probability");
    }
    d.finish();
    return p;
}

void check_range(const TableReader& r, const std::string& key, const Param& p, double lo, double hi,
                 bool lo_open, bool hi_open, const std::string& what) {
    const double mn = p.min_value(), mx = p.max_value();
    const bool below = lo_open ? !(mn > lo) : !(mn >= lo);
    const bool above = hi_open ? !(mx < hi) : !(mx <= hi);
    if (below || above) r.fail_at(p.line ? p.line : r.line_of(key), key, what);
}

Role parse_role(TableReader& r) {
    const std::string role = r.required_string("role");
    if (role == "known") return Role::known;
    if (role == "hidden") return Role::hidden;
    r.fail("role", "must be \"known\" or \"hidden\" (got \"" + role + "\")");
}

BodySpec read_body(const toml::table& t, const std::string& file, std::size_t index) {
    TableReader r(t, file, "body[" + std::to_string(index + 1) + "]");
    BodySpec b;
    b.line = r.line();
    b.name = r.required_name("name");
    if (b.name.empty()) r.fail("name", "must not be empty");
    b.role = parse_role(r);
    b.observer = r.boolean("observer").value_or(false);
    if (b.observer && b.role != Role::known) r.fail("observer", "the observer must be a known planet");

    auto mass = read_param(r, "mass");
    auto gm = read_param(r, "gm");
    if (mass && gm) r.fail("gm", "give either mass (solar masses) or gm (au^3/d^2), not both");
    if (!mass && !gm) r.fail("mass", "is required (or give gm in au^3/d^2)");
    if (gm) {
        if (!gm->is_fixed()) r.fail("gm", "gm must be a fixed number; draw `mass` instead");
        b.mass = Param::fixed_value(mass_from_gm(gm->value));
        b.mass.line = gm->line;
        check_range(r, "gm", b.mass, 0.0, 0.1, true, false, "must give a mass that is positive and below 0.1 solar masses");
    } else {
        b.mass = *mass;
        check_range(r, "mass", b.mass, 0.0, 0.1, true, false, "must be positive and below 0.1 solar masses");
    }

    const bool has_state = r.has("state");
    const bool has_any_element = r.has("a") || r.has("a_rel_outer") || r.has("e") || r.has("mean_anomaly_deg");
    if (has_state && has_any_element) r.fail("state", "give either orbital elements or a state vector, not both");
    if (has_state) {
        b.has_elements = false;
        TableReader s(*r.table("state"), file, r.field("state"));
        const std::string frame = s.string("frame").value_or("reference");
        if (frame == "reference") b.frame = BodySpec::Frame::reference;
        else if (frame == "equatorial") b.frame = BodySpec::Frame::equatorial;
        else s.fail("frame", "must be \"reference\" or \"equatorial\"");
        auto pos = s.numbers("position"), vel = s.numbers("velocity");
        if (!pos || pos->size() != 3) s.fail("position", "needs three numbers (au)");
        if (!vel || vel->size() != 3) s.fail("velocity", "needs three numbers (au/d)");
        std::copy(pos->begin(), pos->end(), b.position.begin());
        std::copy(vel->begin(), vel->end(), b.velocity.begin());
        if (std::hypot(b.position[0], b.position[1], b.position[2]) == 0.0) s.fail("position", "must not be at the star");
        s.finish();
    } else {
        auto a = read_param(r, "a");
        auto a_rel = read_param(r, "a_rel_outer");
        if (a && a_rel) r.fail("a_rel_outer", "give either a (au) or a_rel_outer, not both");
        if (!a && !a_rel) r.fail("a", "is required (semi-major axis in au), or give a state table");
        if (a_rel && b.role != Role::hidden) r.fail("a_rel_outer", "only a hidden body may be placed relative to the outermost known planet");
        b.a_relative_to_outer = a_rel.has_value();
        b.a = a ? *a : *a_rel;
        const std::string a_key = a ? "a" : "a_rel_outer";
        auto e = read_param(r, "e");
        if (!e) r.fail("e", "is required (eccentricity)");
        b.e = *e;
        check_range(r, "e", b.e, 0.0, 1.0, false, true,
                    "must be in [0, 1) for a body given as a bound orbit (hyperbolic bodies are not scenario bodies)");
        check_range(r, a_key, b.a, 0.0, 1e6, true, false, a ? "must be in (0, 1e6] au" : "must be positive and at most 1e6");
        b.i_deg = read_param(r, "i_deg").value_or(Param::fixed_value(0.0));
        check_range(r, "i_deg", b.i_deg, 0.0, 180.0, false, false, "must be in [0, 180] degrees");
        b.node_deg = read_param(r, "node_deg").value_or(Param::fixed_value(0.0));
        b.peri_deg = read_param(r, "peri_deg").value_or(Param::fixed_value(0.0));
        auto m = read_param(r, "mean_anomaly_deg");
        if (!m) r.fail("mean_anomaly_deg", "is required (mean anomaly at epoch 0, degrees)");
        b.mean_anomaly_deg = *m;
    }
    b.radius_km = read_param(r, "radius_km");
    b.albedo = read_param(r, "albedo");
    if ((b.radius_km || b.albedo) && b.role != Role::hidden)
        r.fail(b.radius_km ? "radius_km" : "albedo", "only the hidden body has a surface in the scenario (for the search rehearsal)");
    if (b.radius_km) check_range(r, "radius_km", *b.radius_km, 0.0, 2.0e5, true, false, "must be positive and at most 200000 km");
    if (b.albedo) check_range(r, "albedo", *b.albedo, 0.0, 1.5, true, false, "must be in (0, 1.5] (geometric albedo)");
    r.finish();
    return b;
}

}  // namespace

namespace detail {
// Shared with the observing-plan and family readers in observe_io.cpp.
std::optional<Param> read_param_public(TableReader& r, const std::string& key) { return read_param(r, key); }
}  // namespace detail

void read_family(TableReader& root, Scenario& sc);        // scenario_family.cpp
void read_observing_plan(TableReader& root, Scenario& sc);  // scenario_plan.cpp

namespace {
// The integrators take a roughly fixed number of steps per orbit, so the innermost orbit's revolutions over the
// span bound the cost of every run. A close-in planet (a = 0.01 au circles in hours) over centuries would take
// hours; refuse it up front with the reason rather than run for minutes without a word.
constexpr double max_innermost_orbits = 20000.0;
constexpr double max_draw_orbits = 5e5;

void check_integration_cost(const Scenario& sc) {
    double a_min = std::numeric_limits<double>::infinity();
    long line = 1;
    std::string field;
    for (std::size_t k = 0; k < sc.bodies.size(); ++k) {
        const BodySpec& b = sc.bodies[k];
        if (b.a_relative_to_outer || !b.has_elements) continue;
        if (b.a.min_value() < a_min) {
            a_min = b.a.min_value();
            line = b.line;
            field = "body[" + std::to_string(k + 1) + "].a";
        }
    }
    if (sc.family.present && sc.family.inner_a.min_value() < a_min) {
        a_min = sc.family.inner_a.min_value();
        line = sc.family.line;
        field = "known_family.inner_a";
    }
    if (!std::isfinite(a_min) || !(a_min > 0.0)) return;  // other checks name a missing or bad distance
    const double star_mass = std::max(sc.star_mass.min_value(), 1e-3);
    const double period_years = std::sqrt(a_min * a_min * a_min / star_mass);  // Kepler's third law in au, years, solar masses
    const double orbits = sc.span_years / period_years;
    if (orbits > max_innermost_orbits) {
        std::ostringstream msg;
        msg << "an orbit this close (" << a_min << " au) makes " << std::llround(orbits) << " revolutions over the " << sc.span_years
            << "-year span, more than the " << max_innermost_orbits << " Wayward integrates in reasonable time; move it out or shorten span_years";
        throw InputError(sc.file, line, field, msg.str());
    }
    // Every rejected draw may cost a check integration, so draws times revolutions bounds the worst case too
    // (5e5 is a few minutes of one core for a five-body system; the bundled scenarios need at most 6e4).
    if (!sc.all_fixed() && sc.rules.max_draws * orbits > max_draw_orbits) {
        std::ostringstream msg;
        msg << "max_draws = " << sc.rules.max_draws << " check integrations of " << std::llround(orbits)
            << " revolutions each could run for a long time; keep max_draws x revolutions of the innermost orbit below "
            << max_draw_orbits << " (max_draws at most " << static_cast<long long>(max_draw_orbits / orbits) << " here)";
        throw InputError(sc.file, 0, "scenario.plausibility.max_draws", msg.str());
    }
}
}  // namespace

Scenario parse_scenario(const std::string& text, const std::string& file) {
    const toml::table root_table = detail::parse_toml(text, file);
    TableReader root(root_table, file, "");
    Scenario sc;
    sc.file = file;

    const toml::table* meta = root.table("scenario");
    if (!meta) throw InputError(file, 1, "scenario", "the [scenario] table is required (name, epoch0_year)");
    {
        TableReader r(*meta, file, "scenario");
        sc.name = r.required_string("name");
        sc.description = r.string("description").value_or("");
        sc.epoch0_year = r.required_number("epoch0_year");
        sc.span_years = r.number_or("span_years", 300.0);
        if (!(sc.span_years > 0.0 && sc.span_years <= 5000.0)) r.fail("span_years", "must be in (0, 5000] years");
        sc.obliquity_deg = r.number_or("obliquity_deg", sc.obliquity_deg);
        if (!(sc.obliquity_deg >= 0.0 && sc.obliquity_deg <= 180.0)) r.fail("obliquity_deg", "must be in [0, 180]");
        if (const toml::table* rules = r.table("plausibility")) {
            TableReader p(*rules, file, "scenario.plausibility");
            sc.rules.min_hill_separation = p.number_or("min_hill_separation", sc.rules.min_hill_separation);
            if (!(sc.rules.min_hill_separation >= 2.0 * std::sqrt(3.0)))
                p.fail("min_hill_separation", "must be at least 2*sqrt(3) = 3.46 mutual Hill radii (Gladman 1993)");
            // Each rejected draw can cost a whole check integration, so the number of draws is bounded up front.
            sc.rules.max_draws = static_cast<int>(p.integer_in("max_draws", 1, 2000).value_or(sc.rules.max_draws));
            sc.rules.max_energy_error = p.number_or("max_energy_error", sc.rules.max_energy_error);
            // Below 1e-12 the limit sits at the integrator's own error level: every draw would fail its check
            // integration and the run would grind through all of them.
            if (!(sc.rules.max_energy_error >= 1e-12 && sc.rules.max_energy_error <= 1.0))
                p.fail("max_energy_error", "must be in [1e-12, 1] (a tighter limit rejects every draw)");
            sc.rules.hidden_clear_of_star = p.boolean("hidden_clear_of_star").value_or(sc.rules.hidden_clear_of_star);
            p.finish();
        }
        r.finish();
    }

    const toml::table* star = root.table("star");
    if (!star) throw InputError(file, 1, "star", "the [star] table is required (name, mass)");
    {
        TableReader r(*star, file, "star");
        sc.star_name = r.required_name("name");
        auto m = read_param(r, "mass");
        if (!m) r.fail("mass", "is required (solar masses)");
        sc.star_mass = *m;
        check_range(r, "mass", sc.star_mass, 0.0, 1000.0, true, false, "must be in (0, 1000] solar masses");
        r.finish();
    }

    const auto bodies = root.tables("body");
    for (std::size_t k = 0; k < bodies.size(); ++k) sc.bodies.push_back(read_body(*bodies[k], file, k));
    read_family(root, sc);

    // Whole-scenario checks: names unique, exactly one observer, at most one hidden body.
    std::set<std::string> names{sc.star_name};
    int observers = sc.family.observer_position > 0 ? 1 : 0;
    int hidden = 0;
    for (std::size_t k = 0; k < sc.bodies.size(); ++k) {
        const BodySpec& b = sc.bodies[k];
        const std::string field = "body[" + std::to_string(k + 1) + "].name";
        if (!names.insert(b.name).second) throw InputError(file, b.line, field, "the name \"" + b.name + "\" is used twice");
        observers += b.observer ? 1 : 0;
        hidden += b.role == Role::hidden ? 1 : 0;
        if (b.observer && observers > 1)
            throw InputError(file, b.line, "body[" + std::to_string(k + 1) + "].observer",
                             "two observers: exactly one known planet may be the observer");
        if (b.role == Role::hidden && hidden > 1)
            throw InputError(file, b.line, "body[" + std::to_string(k + 1) + "].role", "only one hidden body is supported");
    }
    for (const std::string& n : sc.family.names)
        if (!names.insert(n).second) throw InputError(file, sc.family.line, "known_family.names", "the name \"" + n + "\" is used twice");
    if (observers == 0)
        throw InputError(file, bodies.empty() ? 1 : sc.bodies.front().line, "observer",
                         "no observer: mark exactly one known planet with observer = true");

    check_integration_cost(sc);
    read_observing_plan(root, sc);
    if (const toml::table* tel = root.table("telescope")) {
        TableReader r(*tel, file, "telescope");
        sc.telescope = detail::read_telescope(r);
    }
    root.finish();
    return sc;
}

Scenario load_scenario(const std::string& path) { return parse_scenario(detail::read_text_file(path), path); }

bool Scenario::all_fixed() const {
    if (!star_mass.is_fixed() || family.present) return false;
    for (const BodySpec& b : bodies) {
        if (b.a_relative_to_outer) return false;
        for (const Param* p : {&b.mass, &b.a, &b.e, &b.i_deg, &b.node_deg, &b.peri_deg, &b.mean_anomaly_deg})
            if (b.has_elements || p == &b.mass)
                if (!p->is_fixed()) return false;
    }
    return true;
}

}  // namespace wayward
