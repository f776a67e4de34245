// What one exposure of one field records: the sky's stars (sim/search/starfield cells, the same on every visit),
// each detected with the logistic efficiency at the field's limit (the zenith limit less extinction at its
// airmass), measured with the telescope's astrometric error; spurious detections (a Poisson number per exposure:
// cosmic rays, ghosts, noise peaks) that never come back; and the hidden body, when it is in the field. The
// team's star chart lists stars with a completeness that falls off logistically around its limit, with small
// position errors, some spurious entries and a few variable stars listed at their mean brightness. A detection
// with no chart entry is a candidate. Matching of stars is by identity (the simulation knows which star made a
// detection, and fields here are uncrowded: the mean spacing of stars is many match radii), while the body is
// matched by position against the chart, so a chart entry on top of it hides it as it would in practice.
// Per-star properties and per-visit draws come from SplitMix64 hashes of (seed, cell, star, visit), so they do
// not depend on the order of visits. Truth side: the body's place comes from the answer key.
#pragma once

#include <cstdint>
#include <map>
#include <vector>

#include "sim/exercise/telescope.hpp"
#include "sim/search/starfield.hpp"

namespace wayward {

enum class Source { star, variable_star, spurious, body };

struct Detection {
    double lon = 0.0, lat = 0.0;  // measured (radians)
    Source source = Source::star;
    bool in_chart = false;        // matched to a chart entry
};

struct Exposure {
    long detections = 0;               // everything recorded
    std::vector<Detection> candidates;  // recorded and not in the chart
};

struct ChartModel {
    double completeness_width_mag = 0.3;  // logistic fall-off of the chart around its limit
    double position_error_arcsec = 0.3;   // per coordinate
    double spurious_entry_fraction = 0.002;
    double variable_fraction = 0.003;     // of stars: variables with amplitude 0.3-1.5 mag
    double spurious_detections_per_field = 0.3;
    double match_radius_arcsec = 3.0;     // also used for the body against chart entries (at least 3 sigma)
};

struct BodyInField {
    bool present = false;
    double lon = 0.0, lat = 0.0;  // true apparent place
    double mag = 99.0;            // apparent magnitude
};

// What a person would look at for one exposure: the chart's entries inside the field (where the chart puts them)
// and everything the exposure recorded (measured places), with magnitudes. For the viewer's field pictures.
struct FieldPicture {
    std::vector<Star> chart;
    std::vector<Star> recorded;
};

// The sky and chart for one rehearsal: caches each sky cell's stars and chart flags.
class SkyModel {
public:
    SkyModel(const SkySpec& sky, const Telescope& tel, const ChartModel& chart, std::uint64_t seed);
    // One exposure centred on (lon, lat) at day t with the given limiting magnitude; visit_key makes the
    // detection draws of this exposure its own.
    // `picture`, when given, receives the chart and the recorded objects in the field as well.
    Exposure expose(double lon, double lat, double t_days, double limit_mag, std::uint64_t visit_key, const BodyInField& body,
                    FieldPicture* picture = nullptr);
    long chart_entries_seen() const { return chart_entries_; }
    std::size_t cells_cached() const { return cells_.size(); }

private:
    struct CellStar {
        Star star;
        bool listed = false;
        double chart_dlon = 0.0, chart_dlat = 0.0;  // chart position error (radians)
        double amplitude = 0.0, period_days = 1.0, phase = 0.0;  // variable stars
    };
    struct CellData {
        std::vector<CellStar> stars;
        std::vector<Star> spurious_entries;
    };
    const CellData& cell(const SkyCell& c);

    SkySpec sky_;
    Telescope tel_;
    ChartModel chart_;
    std::uint64_t seed_;
    std::map<long, CellData> cells_;
    long chart_entries_ = 0;
};

// A uniform number in [0, 1) from a 64-bit key (SplitMix64).
double hash_uniform(std::uint64_t key);

}  // namespace wayward
