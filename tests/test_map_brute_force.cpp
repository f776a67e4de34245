// The probability map of the solve's virtual bodies against a brute-force reference on a small problem: a
// circular orbit in the observer's plane (three hidden-body parameters: log mass, log distance, mean longitude),
// the posterior evaluated on a dense grid over all three (the planets' corrections solved at every node, as the
// sampler does, so both target the same profile posterior) and pushed to the sky at the epoch. The sampler's
// importance-weighted virtual bodies must give the same centre, spread along the region's long axis and 90 %
// radius within their own Monte Carlo error. On this exercise the posterior is close to the sampler's Gaussian
// proposal (an effective sample size near the count), so the check is of the weighting and the sky positions
// rather than of a strongly curved region.
#include <doctest/doctest.h>

#include <cmath>
#include <vector>

#include <Eigen/Dense>

#include "sim/base/units.hpp"
#include "sim/model/model.hpp"
#include "sim/predict/predict.hpp"
#include "sim/scenario/scenario.hpp"
#include "sim/search/region.hpp"
#include "sim/solve/solve.hpp"
#include "solve_helpers.hpp"
#include "test_helpers.hpp"

using namespace wayward;

namespace {

// Offsets (arcsec, east and north in the tangent plane about the prediction) with their weights.
struct WeightedSky {
    std::vector<Eigen::Vector2d> v;
    std::vector<double> w;
    double total() const {
        double t = 0.0;
        for (double x : w) t += x;
        return t;
    }
    Eigen::Vector2d mean() const {
        Eigen::Vector2d m = Eigen::Vector2d::Zero();
        for (std::size_t k = 0; k < v.size(); ++k) m += w[k] * v[k];
        return m / total();
    }
    Eigen::Matrix2d cov() const {
        const Eigen::Vector2d m = mean();
        Eigen::Matrix2d c = Eigen::Matrix2d::Zero();
        for (std::size_t k = 0; k < v.size(); ++k) c += w[k] * (v[k] - m) * (v[k] - m).transpose();
        return c / total();
    }
    // The share of the weight within `radius` of the prediction.
    double within(double radius) const {
        double in = 0.0;
        for (std::size_t k = 0; k < v.size(); ++k)
            if (v[k].norm() <= radius) in += w[k];
        return in / total();
    }
};

Eigen::Vector2d offset_arcsec(const Prediction& p, double lon, double lat) {
    double xi = 0.0, eta = 0.0;
    to_tangent(p.lon, p.lat, lon, lat, xi, eta);
    return {xi / arcsec, eta / arcsec};
}

}  // namespace

TEST_SUITE("slow") {

TEST_CASE("the map of the virtual bodies agrees with a brute-force posterior grid on a small problem") {
    const Scenario sc = load_scenario(testing::source_path("scenarios/tutorial.toml"));
    const auto m = testing::make_exercise(sc, 4);
    SolveOptions o;
    o.circular = true;
    o.coplanar = true;
    o.samples = 0;
    o.threads = 2;
    const Solution s = solve(m.ex.exercise, o);
    REQUIRE(s.setup);
    const FittedModel& fit = s.fit;
    REQUIRE(fit.profile);
    REQUIRE(fit.chi2_of);
    const double t = days_from_year(m.ex.exercise.brief.epoch0_year, s.prediction.epoch_year);

    // The sampler with every sample run in full and importance-weighted (no linear shortcut).
    PredictOptions po;
    po.samples = 1000;
    po.linear_tolerance = 0.0;
    po.threads = 2;
    po.seed = 5;
    const Prediction p = predict(*s.setup, fit, {s.prediction.epoch_year}, po)[0];
    WeightedSky sampled;
    for (std::size_t k = 0; k < p.sample_lon.size(); ++k) {
        sampled.v.push_back(offset_arcsec(p, p.sample_lon[k], p.sample_lat[k]));
        sampled.w.push_back(p.sample_weight[k]);
    }
    REQUIRE(sampled.v.size() == 1000);

    // The grid: 15 nodes a side over +-5 sigma of the three parameters' marginal covariance, in its whitened
    // coordinates (a regular grid there is a regular grid in the parameters, so the density needs no Jacobian);
    // each node weighted by the profile posterior exp(-(chi2 - chi2_best) / 2s), priors included in chi2.
    const auto np = static_cast<Eigen::Index>(fit.layout.planets), nt = fit.best.size() - np;
    REQUIRE(nt == 3);
    Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> et(fit.covariance.bottomRightCorner(nt, nt));
    const Eigen::MatrixXd Lt = et.eigenvectors() * et.eigenvalues().cwiseMax(0.0).cwiseSqrt().asDiagonal();
    const int n = 15;
    const double reach = 5.0, h = 2.0 * reach / (n - 1);
    WeightedSky grid;
    double edge = 0.0;
    int failed = 0;
    for (int i = 0; i < n; ++i)
        for (int j = 0; j < n; ++j)
            for (int k = 0; k < n; ++k) {
                Eigen::VectorXd x = fit.best;
                x.tail(nt) += Lt * Eigen::Vector3d(-reach + i * h, -reach + j * h, -reach + k * h);
                double chi2 = 0.0;
                if (!fit.profile(x)) { ++failed; continue; }
                const ModelRun r = run_model(*s.setup, fit.state(*s.setup, x), std::max(t, s.setup->t_end));
                if (!r.ok() || !r.hidden_index || !fit.chi2_of(x, r, chi2)) { ++failed; continue; }
                const SkyPosition sky = model_apparent(*s.setup, r, *r.hidden_index, t);
                const double w = std::exp(-0.5 * (chi2 - fit.chi2_best) / fit.chi2_scale);
                grid.v.push_back(offset_arcsec(p, sky.lon, sky.lat));
                grid.w.push_back(w);
                if (i == 0 || j == 0 || k == 0 || i == n - 1 || j == n - 1 || k == n - 1) edge += w;
            }
    // The reference is trustworthy: every node ran, and the grid's faces hold a negligible share (it reaches far
    // enough; a lattice of 0.71 sigma integrates a smooth density's moments to far better than the sampler's noise).
    CHECK(failed == 0);
    CHECK(edge / grid.total() < 1e-4);

    // Along the long axis of the grid's region: centre and spread, the sampler's standard errors from its own
    // weighted samples (self-normalised importance sampling, delta method).
    const Eigen::Matrix2d cg = grid.cov();
    Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> eg(cg);
    const Eigen::Vector2d axis = eg.eigenvectors().col(1);
    const double mg = axis.dot(grid.mean()), vg = eg.eigenvalues()[1];
    const double ms = axis.dot(sampled.mean()), vs = axis.dot(sampled.cov() * axis);
    double se_m = 0.0, se_v = 0.0, w_total = sampled.total();
    for (std::size_t k = 0; k < sampled.v.size(); ++k) {
        const double u = axis.dot(sampled.v[k]) - ms, wk = sampled.w[k] / w_total;
        se_m += wk * wk * u * u;
        se_v += wk * wk * (u * u - vs) * (u * u - vs);
    }
    se_m = std::sqrt(se_m);
    se_v = std::sqrt(se_v);
    const double ess = 1.0 / [&] { double q = 0.0; for (double w : sampled.w) q += (w / w_total) * (w / w_total); return q; }();
    MESSAGE("long axis: grid mean " << mg << " sd " << std::sqrt(vg) << " arcsec; virtual bodies mean " << ms << " +- " << se_m << ", sd "
                                    << std::sqrt(vs) << " (variance +- " << se_v << "); effective samples " << ess << "; linear 1-sigma "
                                    << p.semi_major_arcsec << " arcsec");
    CHECK(std::abs(ms - mg) < 4.0 * se_m);
    CHECK(std::abs(vs - vg) < 4.0 * se_v);
    // The virtual bodies' 90 % radius holds 90 % of the grid's posterior, within the binomial error of the
    // effective sample size (4 standard errors).
    const double held = grid.within(p.radius90_arcsec);
    MESSAGE("the virtual bodies' 90 % radius " << p.radius90_arcsec << " arcsec holds " << held << " of the grid's posterior");
    CHECK(std::abs(held - 0.9) < 4.0 * std::sqrt(0.09 / ess));
}

}  // TEST_SUITE("slow")
