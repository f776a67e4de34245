// Era offsets and drifts as nuisance parameters, eliminated by projection. See era_systematics.hpp.
#include "sim/model/era_systematics.hpp"

#include <cmath>
#include <stdexcept>

#include "sim/base/units.hpp"

namespace wayward {

EraSystematics era_systematics_from_name(const std::string& name) {
    if (name == "none") return EraSystematics::none;
    if (name == "offsets") return EraSystematics::offsets;
    if (name == "drifts") return EraSystematics::drifts;
    throw std::invalid_argument("unknown era systematics '" + name + "' (none, offsets or drifts)");
}

std::string to_string(EraSystematics s) {
    switch (s) {
        case EraSystematics::none: return "none";
        case EraSystematics::offsets: return "offsets";
        case EraSystematics::drifts: return "drifts";
    }
    return "?";
}

namespace {

// Per nuisance era and coordinate: the rows, their basis (offset column b1, drift column b2 = b1 tau) and the
// 2 x 2 normal matrix (1 x 1 for offsets alone, or when the era's times give the drift no leverage).
struct Block {
    std::size_t era = 0;
    int coordinate = 0;  // 0: lambda cos beta, 1: beta
    std::vector<Eigen::Index> rows;
    std::vector<std::size_t> observations;
    Eigen::MatrixXd basis;  // rows.size() x (1 or 2)
};

std::vector<Block> blocks(const EraSystematicsView& setup) {
    std::vector<Block> out;
    const EraSystematics kind = era_systematics_from_name(setup.choice);
    if (kind == EraSystematics::none) return out;
    for (std::size_t e = 0; e < setup.eras; ++e) {
        double t_mean = 0.0, n = 0.0;
        for (const FitObservation& f : *setup.obs)
            if (f.era == e && !f.rejected) { t_mean += f.time_days; n += 1.0; }
        if (n == 0.0) continue;
        t_mean /= n;
        for (int c = 0; c < 2; ++c) {
            if (e == setup.reference_era && c == 0) continue;  // the frame's zero of longitude (era_systematics.hpp)
            Block b;
            b.era = e;
            b.coordinate = c;
            for (std::size_t k = 0; k < setup.obs->size(); ++k)
                if ((*setup.obs)[k].era == e && !(*setup.obs)[k].rejected) {
                    b.rows.push_back(static_cast<Eigen::Index>(2 * k + static_cast<std::size_t>(c)));
                    b.observations.push_back(k);
                }
            const bool drift = kind == EraSystematics::drifts && b.rows.size() >= 3;
            b.basis.resize(static_cast<Eigen::Index>(b.rows.size()), drift ? 2 : 1);
            double t_spread = 0.0;
            for (std::size_t i = 0; i < b.rows.size(); ++i) {
                const FitObservation& f = (*setup.obs)[b.observations[i]];
                const double w = c == 0 ? std::cos(f.lat) / f.sigma_lon_arcsec : 1.0 / f.sigma_lat_arcsec;
                const double tau = (f.time_days - t_mean) / julian_year_days;
                t_spread = std::max(t_spread, std::abs(tau));
                b.basis(static_cast<Eigen::Index>(i), 0) = w;
                if (drift) b.basis(static_cast<Eigen::Index>(i), 1) = w * tau;
            }
            // An era whose observations all fall within a month gives a drift no leverage: offset alone.
            if (drift && t_spread < 1.0 / 12.0) b.basis.conservativeResize(Eigen::NoChange, 1);
            out.push_back(std::move(b));
        }
    }
    return out;
}

}  // namespace

std::size_t era_systematic_parameters(const EraSystematicsView& setup) {
    std::size_t n = 0;
    for (const Block& b : blocks(setup)) n += static_cast<std::size_t>(b.basis.cols());
    return n;
}

void project_out_era_systematics(const EraSystematicsView& setup, Eigen::Ref<Eigen::MatrixXd> m) {
    for (const Block& b : blocks(setup)) {
        const auto nr = static_cast<Eigen::Index>(b.rows.size());
        Eigen::MatrixXd sub(nr, m.cols());
        for (Eigen::Index i = 0; i < nr; ++i) sub.row(i) = m.row(b.rows[static_cast<std::size_t>(i)]);
        const Eigen::MatrixXd coef = b.basis.colPivHouseholderQr().solve(sub);
        sub -= b.basis * coef;
        for (Eigen::Index i = 0; i < nr; ++i) m.row(b.rows[static_cast<std::size_t>(i)]) = sub.row(i);
    }
}

std::vector<std::array<double, 2>> fitted_era_systematics(const EraSystematicsView& setup, const Eigen::VectorXd& r) {
    std::vector<std::array<double, 2>> out(setup.obs->size(), {0.0, 0.0});
    const EraSystematics kind = era_systematics_from_name(setup.choice);
    for (const Block& b : blocks(setup)) {
        const auto nr = static_cast<Eigen::Index>(b.rows.size());
        Eigen::VectorXd sub(nr);
        for (Eigen::Index i = 0; i < nr; ++i) sub[i] = r[b.rows[static_cast<std::size_t>(i)]];
        const Eigen::VectorXd coef = b.basis.colPivHouseholderQr().solve(sub);
        double t_mean = 0.0;
        for (std::size_t k : b.observations) t_mean += (*setup.obs)[k].time_days;
        t_mean /= static_cast<double>(b.observations.size());
        // Every observation of the era, rejected ones too (their residuals are judged without the systematic).
        for (std::size_t k = 0; k < setup.obs->size(); ++k) {
            const FitObservation& f = (*setup.obs)[k];
            if (f.era != b.era) continue;
            const double tau = (f.time_days - t_mean) / julian_year_days;
            const double arcsec_value = coef[0] + (coef.size() > 1 && kind == EraSystematics::drifts ? coef[1] * tau : 0.0);
            out[k][static_cast<std::size_t>(b.coordinate)] = b.coordinate == 0 ? arcsec_value * std::cos(f.lat) : arcsec_value;
        }
    }
    return out;
}

}  // namespace wayward
