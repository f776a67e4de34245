// Readers for the drawn known-planet family and the observing plan of a scenario.
#include <algorithm>
#include <cmath>
#include <set>

#include "sim/scenario/scenario.hpp"
#include "sim/io/toml_reader.hpp"

namespace wayward {

using detail::TableReader;
namespace detail {
std::optional<Param> read_param_public(TableReader& r, const std::string& key);
}

void read_family(TableReader& root, Scenario& sc) {
    const toml::table* t = root.table("known_family");
    if (!t) return;
    TableReader r(*t, sc.file, "known_family");
    FamilySpec& f = sc.family;
    f.present = true;
    f.line = r.line();
    auto names = r.strings("names");
    if (!names || names->empty()) r.fail("names", "is required: the names to give the drawn planets, innermost first");
    f.names = *names;
    for (const std::string& n : f.names) {
        const std::string problem = detail::name_problem(n);
        if (!problem.empty()) r.fail("names", "the name \"" + n + "\" " + problem);
    }
    auto count = r.numbers("count");
    if (!count || count->size() != 2) r.fail("count", "is required: [fewest, most] planets to draw");
    f.count_min = static_cast<int>((*count)[0]);
    f.count_max = static_cast<int>((*count)[1]);
    if (f.count_min < 1 || f.count_max < f.count_min) r.fail("count", "needs 1 <= fewest <= most");
    if (static_cast<std::size_t>(f.count_max) > f.names.size()) r.fail("names", "needs at least as many names as the most planets drawn");
    auto need = [&](const std::string& key) {
        auto p = detail::read_param_public(r, key);
        if (!p) r.fail(key, "is required");
        return *p;
    };
    f.inner_a = need("inner_a");
    f.spacing_ratio = need("spacing_ratio");
    f.ratio_scatter = detail::read_param_public(r, "ratio_scatter").value_or(Param::fixed_value(0.0));
    f.mass = need("mass");
    f.e = need("e");
    f.i_deg = detail::read_param_public(r, "i_deg").value_or(Param::fixed_value(0.0));
    if (!(f.inner_a.min_value() > 0.0)) r.fail("inner_a", "must be positive");
    if (!(f.spacing_ratio.min_value() > 1.0)) r.fail("spacing_ratio", "must exceed 1 (orbits must grow outwards)");
    if (!(f.ratio_scatter.min_value() >= 0.0 && f.ratio_scatter.max_value() < 0.5)) r.fail("ratio_scatter", "must be in [0, 0.5)");
    if (!(f.mass.min_value() > 0.0 && f.mass.max_value() < 0.1)) r.fail("mass", "must be positive and below 0.1 solar masses");
    if (!(f.e.min_value() >= 0.0 && f.e.max_value() < 1.0)) r.fail("e", "must be in [0, 1)");
    if (!(f.i_deg.min_value() >= 0.0 && f.i_deg.max_value() <= 180.0)) r.fail("i_deg", "must be in [0, 180]");
    f.observer_position = static_cast<int>(r.integer_in("observer", 0, 1000).value_or(0));
    if (f.observer_position < 0 || f.observer_position > f.count_min)
        r.fail("observer", "must name a planet that is always drawn (1.." + std::to_string(f.count_min) + ")");
    r.finish();
}

void read_observing_plan(TableReader& root, Scenario& sc) {
    const toml::table* t = root.table("observing");
    if (!t) return;
    TableReader r(*t, sc.file, "observing");
    ObservingPlan& p = sc.plan;
    p.present = true;
    p.line = r.line();

    std::set<std::string> known;
    for (const BodySpec& b : sc.bodies)
        if (b.role == Role::known && !b.observer) known.insert(b.name);
    for (std::size_t k = 0; k < sc.family.names.size(); ++k)
        if (static_cast<int>(k + 1) != sc.family.observer_position) known.insert(sc.family.names[k]);

    p.targets = r.strings("targets").value_or(std::vector<std::string>{});
    for (const std::string& name : p.targets)
        if (!known.count(name)) r.fail("targets", "unknown target \"" + name + "\": targets must be known planets other than the observer");

    p.elongation_limit_deg = r.number_or("elongation_limit_deg", p.elongation_limit_deg);
    if (!(p.elongation_limit_deg >= 0.0 && p.elongation_limit_deg < 180.0))
        r.fail("elongation_limit_deg", "must be in [0, 180) degrees");
    p.field_radius_deg = r.number_or("field_radius_deg", p.field_radius_deg);
    if (!(p.field_radius_deg > 0.0 && p.field_radius_deg <= 90.0)) r.fail("field_radius_deg", "must be in (0, 90] degrees");

    const double y0 = sc.epoch0_year, y1 = sc.epoch0_year + sc.span_years;
    if (auto one = r.number("search_epoch_year")) p.search_epochs_year.push_back(*one);
    if (auto many = r.numbers("search_epochs_year")) p.search_epochs_year.insert(p.search_epochs_year.end(), many->begin(), many->end());
    if (p.search_epochs_year.empty()) r.fail("search_epoch_year", "is required (the year the team will search)");
    for (double y : p.search_epochs_year)
        if (!(y >= y0 && y <= y1))
            r.fail(r.has("search_epoch_year") ? "search_epoch_year" : "search_epochs_year",
                   "must lie within the scenario's span (" + std::to_string(y0) + " to " + std::to_string(y1) + ")");

    p.brief_mass_error = r.number_or("brief_mass_error", p.brief_mass_error);
    if (!(p.brief_mass_error >= 0.0 && p.brief_mass_error < 0.5)) r.fail("brief_mass_error", "must be in [0, 0.5)");
    p.brief_orbit_error_deg = r.number_or("brief_orbit_error_deg", p.brief_orbit_error_deg);
    if (!(p.brief_orbit_error_deg >= 0.0 && p.brief_orbit_error_deg <= 10.0)) r.fail("brief_orbit_error_deg", "must be in [0, 10] degrees");

    const auto eras = r.tables("era");
    if (eras.empty()) r.fail("era", "at least one [[observing.era]] is required");
    for (std::size_t k = 0; k < eras.size(); ++k) {
        TableReader e(*eras[k], sc.file, "observing.era[" + std::to_string(k + 1) + "]");
        Era era;
        era.line = e.line();
        era.label = e.string("label").value_or("era " + std::to_string(k + 1));
        if (const std::string problem = detail::name_problem(era.label); !problem.empty()) e.fail("label", problem);
        era.start_year = e.required_number("start_year");
        era.end_year = e.required_number("end_year");
        if (!(era.end_year > era.start_year)) e.fail("end_year", "the era ends before it starts");
        if (era.start_year < y0 || era.end_year > y1) e.fail("start_year", "the era must lie within the scenario's span");
        const long long per = e.integer_in("per_season", 1, 1000).value_or(1);
        era.per_season = static_cast<int>(per);
        auto nonneg = [&](const std::string& key, double fallback, bool positive) {
            const double v = e.number_or(key, fallback);
            if (positive ? !(v > 0.0) : !(v >= 0.0)) e.fail(key, positive ? "must be positive" : "must not be negative");
            return v;
        };
        // A sigma below a micro-arcsecond is no record anyone kept, and its weight (1/sigma^2) overflows.
        auto sigma = [&](const std::string& key, double fallback) {
            const double v = e.number_or(key, fallback);
            if (!(v >= min_sigma_arcsec && v <= 1e6)) e.fail(key, "must be in [1e-6, 1e6] arcsec");
            return v;
        };
        era.sigma_lon_arcsec = sigma("sigma_lon_arcsec", 1.0);
        era.sigma_lat_arcsec = sigma("sigma_lat_arcsec", era.sigma_lon_arcsec);
        era.offset_lon_arcsec = e.number_or("offset_lon_arcsec", 0.0);
        era.offset_lat_arcsec = e.number_or("offset_lat_arcsec", 0.0);
        era.drift_lon_arcsec_per_yr = e.number_or("drift_lon_arcsec_per_yr", 0.0);
        era.drift_lat_arcsec_per_yr = e.number_or("drift_lat_arcsec_per_yr", 0.0);
        era.precision_arcsec = nonneg("precision_arcsec", 0.0, false);
        era.outlier_fraction = e.number_or("outlier_fraction", 0.0);
        if (!(era.outlier_fraction >= 0.0 && era.outlier_fraction <= 1.0)) e.fail("outlier_fraction", "must be in [0, 1]");
        era.outlier_sigma_arcsec = nonneg("outlier_sigma_arcsec", 10.0 * era.sigma_lon_arcsec, true);
        era.records_sigma = e.boolean("records_sigma").value_or(true);
        e.finish();
        p.eras.push_back(era);
    }
    for (std::size_t k = 1; k < p.eras.size(); ++k)
        if (p.eras[k].start_year < p.eras[k - 1].end_year)
            throw InputError(sc.file, p.eras[k].line, "observing.era[" + std::to_string(k + 1) + "].start_year",
                             "eras must be in order and must not overlap");

    const auto early = r.tables("early_sighting");
    for (std::size_t k = 0; k < early.size(); ++k) {
        TableReader e(*early[k], sc.file, "observing.early_sighting[" + std::to_string(k + 1) + "]");
        EarlySighting s;
        s.line = e.line();
        s.target = e.required_string("target");
        if (!known.count(s.target)) e.fail("target", "unknown target \"" + s.target + "\"");
        s.year = e.required_number("year");
        if (!(s.year >= y0 && s.year <= y1)) e.fail("year", "must lie within the scenario's span");
        s.sigma_arcsec = e.number_or("sigma_arcsec", s.sigma_arcsec);
        if (!(s.sigma_arcsec >= min_sigma_arcsec && s.sigma_arcsec <= 1e6)) e.fail("sigma_arcsec", "must be in [1e-6, 1e6] arcsec");
        e.finish();
        p.early.push_back(s);
    }
    r.finish();
}

}  // namespace wayward
