// A list of field centres for a record with no sealed truth: the region's fields ordered by the probability each
// holds at one date, with the share each adds to those before it, stopping once the list holds the wanted share;
// fields whose centre lies within the elongation limit of the star are left out and counted. Night-by-night
// scheduling (darkness, altitude and airmass at a real site) is not attempted: that is the observatory's own
// tools' work. Team side: nothing here knows the truth. Units: radians and days inside.
#pragma once

#include <vector>

#include "sim/exercise/observer_path.hpp"
#include "sim/exercise/telescope.hpp"
#include "sim/search/region.hpp"

namespace wayward {

struct PlannedField {
    int order = 0;               // 1-based, by the probability the field holds
    int field = 0;               // the tiling's field id
    double lon = 0.0, lat = 0.0;  // centre at the plan's date, fitting frame (radians)
    double probability = 0.0;    // share of the region inside this field
    double added = 0.0;          // share inside this field and none listed before it (circles overlap)
    double cumulative = 0.0;     // share inside this field or any listed before it
    double elongation = 0.0;     // of the centre from the star (radians)
};

struct FieldPlan {
    double year = 0.0;
    std::vector<PlannedField> fields;
    int tiled = 0;                         // fields in the tiling
    int kept_from_star = 0;                // nearer than the elongation limit: never listed
    double probability_near_star = 0.0;    // share of the region only such fields would cover
    double reach = 0.0;                    // cumulative share of the whole list
    int fields_for(double share) const;    // fields needed to hold `share` (0: the list never does)
};

// The fields of `tiling` at `year` (t_days from the exercise's epoch for the observer's path), listed until they
// hold `stop_at` of the region or the tiling runs out; a field that would add nothing to those before it is left out.
FieldPlan plan_fields(const SearchRegion& r, const Telescope& tel, const std::vector<Field>& tiling, const ObserverPath& path,
                      double elongation_limit, double year, double t_days, double stop_at = 0.99);

}  // namespace wayward
