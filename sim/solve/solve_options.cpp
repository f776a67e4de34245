// The solver's options: the distance prior's spelling and every option's range; see solve_options.hpp.
#include "sim/solve/solve_options.hpp"

#include <charconv>
#include <cmath>
#include <sstream>

#include "sim/base/errors.hpp"

namespace wayward {

namespace {

const char* const prior_forms = "use free, fixed:A, gauss:A,SIGMA or spacing[:FRACTION]";

double prior_number(const std::string& text) {
    char* end = nullptr;
    const double v = std::strtod(text.c_str(), &end);
    if (text.empty() || *end != '\0' || !std::isfinite(v))
        throw InputError("", 0, "distance", "\"" + text + "\" is not a number (" + prior_forms + ")");
    return v;
}

// Shortest text that reads back as the same double.
std::string shortest(double v) {
    char buf[32];
    const auto r = std::to_chars(buf, buf + sizeof buf, v);
    return std::string(buf, r.ptr);
}

}  // namespace

std::string SolveOptions::describe() const {
    std::ostringstream s;
    switch (distance) {
        case DistancePrior::free: s << "distance free"; break;
        case DistancePrior::fixed: s << "distance fixed at " << distance_au << " au"; break;
        case DistancePrior::gaussian: s << "distance " << distance_au << " +- " << distance_sigma_au << " au"; break;
        case DistancePrior::spacing: s << "distance from the spacing rule (+- " << spacing_sigma_fraction * 100 << "%)"; break;
    }
    s << (circular ? ", circular orbit" : ", eccentric orbit (prior sigma " + std::to_string(eccentricity_prior_sigma).substr(0, 5) + " on e)")
      << (coplanar ? ", coplanar" : ", inclined (prior sigma " + std::to_string(inclination_prior_rad / deg).substr(0, 4) + " deg on the tilt)");
    if (model.era_systematics == "offsets") s << ", era offsets fitted";
    if (model.era_systematics == "drifts") s << ", era offsets and drifts fitted";
    if (!shape_starts && !(circular && coplanar)) s << ", circular starts only";
    return s.str();
}

void set_distance_prior(SolveOptions& o, const std::string& d) {
    if (d == "free") {
        o.distance = DistancePrior::free;
    } else if (d.rfind("fixed:", 0) == 0) {
        o.distance = DistancePrior::fixed;
        o.distance_au = prior_number(d.substr(6));
    } else if (d.rfind("gauss:", 0) == 0) {
        o.distance = DistancePrior::gaussian;
        const std::string rest = d.substr(6);
        const auto comma = rest.find(',');
        if (comma == std::string::npos) throw InputError("", 0, "distance", "gauss needs a mean and a sigma: gauss:A,SIGMA");
        o.distance_au = prior_number(rest.substr(0, comma));
        o.distance_sigma_au = prior_number(rest.substr(comma + 1));
    } else if (d == "spacing" || d.rfind("spacing:", 0) == 0) {
        o.distance = DistancePrior::spacing;
        if (d.size() > 8) o.spacing_sigma_fraction = prior_number(d.substr(8));
    } else {
        throw InputError("", 0, "distance", "unknown prior \"" + d + "\" (" + prior_forms + ")");
    }
    validate(o);
}

std::string distance_prior_text(const SolveOptions& o) {
    switch (o.distance) {
        case DistancePrior::fixed: return "fixed:" + shortest(o.distance_au);
        case DistancePrior::gaussian: return "gauss:" + shortest(o.distance_au) + "," + shortest(o.distance_sigma_au);
        case DistancePrior::spacing: return "spacing:" + shortest(o.spacing_sigma_fraction);
        case DistancePrior::free: break;
    }
    return "free";
}

void validate(const SolveOptions& o) {
    if (o.distance == DistancePrior::fixed && !(o.distance_au > 0)) throw InputError("", 0, "distance", "a fixed distance must be positive");
    if (o.distance == DistancePrior::gaussian && !(o.distance_au > 0 && o.distance_sigma_au > 0))
        throw InputError("", 0, "distance", "mean and sigma must be positive");
    if (o.distance == DistancePrior::spacing && !(o.spacing_sigma_fraction > 0 && o.spacing_sigma_fraction < 1))
        throw InputError("", 0, "distance", "the spacing prior's sigma fraction must be in (0, 1)");
    if (!(o.eccentricity_prior_sigma > 0 && o.eccentricity_prior_sigma < 1)) throw InputError("", 0, "ecc_sigma", "must be in (0, 1)");
    if (!(o.inclination_prior_rad > 0 && o.inclination_prior_rad < 90 * deg))
        throw InputError("", 0, "tilt_sigma_deg", "must be in (0, 90) degrees");
    // 0 samples: the caller predicts without them (campaigns draw theirs once for every epoch).
    if (o.samples != 0 && (o.samples < 20 || o.samples > 100000)) throw InputError("", 0, "samples", "must be in [20, 100000] (or 0: none)");
    if (o.starts < 1 || o.starts > 64) throw InputError("", 0, "starts", "must be in [1, 64]");
    if (o.grid_distances < 2 || o.grid_distances > 100) throw InputError("", 0, "grid_distances", "must be in [2, 100]");
    if (o.grid_longitudes < 4 || o.grid_longitudes > 360) throw InputError("", 0, "grid_longitudes", "must be in [4, 360]");
    if (o.epoch_year && !std::isfinite(*o.epoch_year)) throw InputError("", 0, "epoch_year", "must be a finite year");
}

}  // namespace wayward
