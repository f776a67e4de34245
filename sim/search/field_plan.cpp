// Field centres ordered by probability for a record with no sealed truth. See field_plan.hpp.
#include "sim/search/field_plan.hpp"

#include <algorithm>
#include <numeric>

namespace wayward {

int FieldPlan::fields_for(double share) const {
    for (const PlannedField& f : fields)
        if (f.cumulative >= share) return f.order;
    return 0;
}

FieldPlan plan_fields(const SearchRegion& r, const Telescope& tel, const std::vector<Field>& tiling, const ObserverPath& path,
                      double elongation_limit, double year, double t_days, double stop_at) {
    FieldPlan plan;
    plan.year = year;
    plan.tiled = static_cast<int>(tiling.size());
    const std::vector<double> prob = field_probabilities(r, tel, tiling);
    std::vector<std::size_t> order(tiling.size());
    std::iota(order.begin(), order.end(), std::size_t{0});
    // Most probable first; equal shares by field id, so the list does not depend on the sort's internals.
    std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return prob[a] > prob[b]; });
    const double total = r.total_prior_weight();
    std::vector<bool> counted(r.samples.size(), false);      // inside a listed field
    std::vector<bool> near_star(r.samples.size(), false);    // inside a field kept from the star
    double cumulative = 0.0;
    for (std::size_t i : order) {
        const Field& f = tiling[i];
        double lon = 0.0, lat = 0.0;
        field_centre(r, f, year, lon, lat);
        const double elongation = elongation_from_star(path, lon, lat, t_days);
        const bool kept = elongation < elongation_limit;
        if (kept) ++plan.kept_from_star;  // every such field of the tiling is counted, listed or not
        const bool listing = !kept && cumulative < stop_at && prob[i] > 0.0;
        if (!kept && !listing) continue;
        double added = 0.0;
        for (std::size_t k = 0; k < r.samples.size(); ++k) {
            const RegionSample& s = r.samples[k];
            if (counted[k] || !inside_field(tel, s.xi - f.xi, s.eta - f.eta)) continue;
            if (kept) {
                near_star[k] = true;
            } else {
                counted[k] = true;
                added += s.weight / total;
            }
        }
        if (kept || added <= 0.0) continue;  // a field wholly inside those listed before adds nothing
        cumulative += added;
        plan.fields.push_back({static_cast<int>(plan.fields.size()) + 1, f.id, lon, lat, prob[i], added, cumulative, elongation});
    }
    for (std::size_t k = 0; k < r.samples.size(); ++k)
        if (near_star[k] && !counted[k]) plan.probability_near_star += r.samples[k].weight / total;
    plan.reach = cumulative;
    return plan;
}

}  // namespace wayward
