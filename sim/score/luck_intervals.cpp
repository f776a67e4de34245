// Inside-the-field years of a luck curve; see luck_intervals.hpp.
#include "sim/score/luck_intervals.hpp"

namespace wayward {

std::vector<Interval> inside_field_intervals(const Score& score) {
    std::vector<double> years, separations;
    for (const LuckPoint& l : score.luck) {
        years.push_back(l.year);
        separations.push_back(l.separation_arcmin);
    }
    return intervals_at_or_below(years, separations, score.field_radius_deg * 60.0);
}

}  // namespace wayward
