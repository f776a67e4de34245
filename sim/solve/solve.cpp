// The inverse problem and the prediction; see solve.hpp for the method.
#include "sim/solve/solve.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <sstream>


#include "sim/base/errors.hpp"
#include "sim/base/parallel.hpp"
#include "sim/base/random.hpp"
#include "sim/base/units.hpp"
#include "sim/solve/minima.hpp"
#include "sim/solve/mixture.hpp"
#include "sim/solve/solve_problem.hpp"

namespace wayward {

double spacing_rule_next(const Brief& brief) {
    std::vector<double> a;
    for (const BriefPlanet& p : brief.planets) a.push_back(p.elements.semi_major_axis);
    std::sort(a.begin(), a.end());
    if (a.size() < 2) return 0.0;
    // Least-squares line through (n, log a_n).
    const double n = static_cast<double>(a.size());
    double sx = 0, sy = 0, sxx = 0, sxy = 0;
    for (std::size_t k = 0; k < a.size(); ++k) {
        const double x = static_cast<double>(k), y = std::log(a[k]);
        sx += x; sy += y; sxx += x * x; sxy += x * y;
    }
    const double slope = (n * sxy - sx * sy) / (n * sxx - sx * sx);
    const double intercept = (sy - slope * sx) / n;
    return std::exp(intercept + slope * n);
}

namespace {

using namespace solve_detail;  // Problem, as_lsq, normal_inverse (solve_problem.hpp)

void check_epoch(const Exercise& ex, double year) {
    const double lo = ex.brief.epoch0_year, hi = ex.brief.epoch0_year + ex.brief.span_years;
    if (!(year >= lo && year <= hi))
        throw InputError("", 0, "epoch_year", "the epoch " + std::to_string(year) + " lies outside the exercise's integrable span (" +
                                             std::to_string(lo) + " to " + std::to_string(hi) + ")");
}

// The sigma-weighted mean time of the kept observations (days): where the mean longitude is fitted.
double data_centre_days(const ModelSetup& setup) {
    double sum = 0.0, weight = 0.0;
    for (const FitObservation& f : setup.obs) {
        if (f.rejected) continue;
        const double w = 1.0 / (f.sigma_lon_arcsec * f.sigma_lon_arcsec);
        sum += w * f.time_days;
        weight += w;
    }
    return weight > 0 ? sum / weight : 0.0;
}

Problem make_problem(const ModelSetup& setup, const Brief& brief, const SolveOptions& o, double spacing_rule_au) {
    Problem prob;
    prob.setup = &setup;
    prob.options = o;
    prob.fit.reference = initial_state(setup);
    prob.fit.layout = HiddenParameters::make(setup.planets.size(), o.distance != DistancePrior::fixed, !o.circular, !o.coplanar);
    prob.fit.layout.gm_star = setup.known.gm[0];
    prob.fit.layout.t_ref = data_centre_days(setup);
    switch (o.distance) {
        case DistancePrior::free: break;
        case DistancePrior::fixed: prob.fit.layout.fixed_a = o.distance_au; break;
        case DistancePrior::gaussian: prob.prior_a = o.distance_au; prob.prior_a_sigma = o.distance_sigma_au; break;
        case DistancePrior::spacing:
            if (!(spacing_rule_au > 0.0)) throw InputError(brief.file, 0, "planet", "the spacing rule needs at least two known planets");
            prob.prior_a = spacing_rule_au;
            prob.prior_a_sigma = o.spacing_sigma_fraction * spacing_rule_au;
            break;
    }
    prob.priors = (prob.prior_a_sigma > 0 ? 1 : 0) + (o.circular ? 0 : 2) + (o.coplanar ? 0 : 2);
    return prob;
}

// ---- grid screening, linear in the mass ----
struct Grid {
    std::vector<double> a;        // semi-major axes (au)
    std::size_t longitudes = 0;   // mean longitudes at t_ref, evenly spaced
    struct Cell { double chi2 = INFINITY; double alpha = 0.0; };
    std::vector<Cell> cells;      // a-major: cell = ia * longitudes + il
    static constexpr double m_ref = 1e-5;  // trial mass of the screening runs
    double a_of(std::size_t c) const { return a[c / longitudes]; }
    double longitude_of(std::size_t c) const { return two_pi * static_cast<double>(c % longitudes) / static_cast<double>(longitudes); }
};

std::vector<double> grid_distances(const Brief& brief, const SolveOptions& o, const Problem& prob) {
    double a_outer = 0.0;
    for (const BriefPlanet& p : brief.planets) a_outer = std::max(a_outer, p.elements.semi_major_axis);
    std::vector<double> grid_a;
    if (o.distance == DistancePrior::fixed) {
        grid_a.push_back(o.distance_au);
    } else if (o.distance == DistancePrior::free) {
        const double lo = 1.25 * a_outer, hi = 3.5 * a_outer;
        for (int k = 0; k < o.grid_distances; ++k)
            grid_a.push_back(lo * std::pow(hi / lo, (k + 0.5) / o.grid_distances));
    } else {
        const double lo = std::max(1.05 * a_outer, prob.prior_a - 2.5 * prob.prior_a_sigma), hi = prob.prior_a + 2.5 * prob.prior_a_sigma;
        for (int k = 0; k < o.grid_distances; ++k) grid_a.push_back(lo + (hi - lo) * (k + 0.5) / o.grid_distances);
    }
    return grid_a;
}

// The priors' chi2 of an orbit's shape (e cos, e sin; the tilt components), as prior_residuals counts them.
double shape_prior_chi2(const Problem& prob, const HiddenOrbit& h) {
    double chi2 = 0.0;
    if (prob.layout().i_k >= 0) chi2 += (h.k * h.k + h.h * h.h) / std::pow(prob.options.eccentricity_prior_sigma, 2);
    if (prob.layout().i_ix >= 0) chi2 += std::pow(h.inclination / prob.options.inclination_prior_rad, 2);
    return chi2;
}

// One screened trial orbit: one model run with the trial mass, then a linear least-squares solve for the mass
// scale and the planets' corrections (through the known fit's Jacobian). r0: the known fit's weighted residuals.
// The orbit's chi2 holds the priors on its distance and shape; a cell that cannot run, or that needs a negative
// mass, keeps chi2 = inf.
struct Screened { double chi2 = INFINITY; double alpha = 0.0; };
Screened screen_orbit(const KnownFit& known, const Problem& prob, const Eigen::VectorXd& r0, HiddenOrbit h) {
    const ModelSetup& setup = known.setup;
    ModelState s = known.state;
    h.mass = Grid::m_ref;
    s.hidden = h;
    ++*prob.runs;
    Eigen::VectorXd rh;
    if (!weighted_residuals(setup, run_model(setup, s, setup.t_end), rh)) return {};
    const Eigen::MatrixXd& Jp = known.jacobian;
    Eigen::MatrixXd M(Jp.rows(), Jp.cols() + 1);
    M.leftCols(Jp.cols()) = Jp;
    M.col(Jp.cols()) = rh - r0;
    const Eigen::VectorXd sol_lin = M.colPivHouseholderQr().solve(-r0);
    Screened out;
    out.alpha = sol_lin[Jp.cols()];
    const double a = h.semi_major_axis;
    const double prior = (prob.prior_a_sigma > 0 ? std::pow((a - prob.prior_a) / prob.prior_a_sigma, 2) : 0.0) + shape_prior_chi2(prob, h);
    out.chi2 = out.alpha > 0 ? (r0 + M * sol_lin).squaredNorm() + prior : INFINITY;
    return out;
}

// A circular orbit in the observer's plane at a grid cell's distance and mean longitude (at t_ref).
HiddenOrbit cell_orbit(const Grid& g, std::size_t c, const Problem& prob) {
    HiddenOrbit h;
    h.mass = Grid::m_ref;
    h.semi_major_axis = g.a_of(c);
    h.mean_longitude = g.longitude_of(c) - mean_motion(h.semi_major_axis, prob.layout().gm_star + gm_from_mass(Grid::m_ref)) * prob.layout().t_ref;
    return h;
}

// Each grid node: one screened circular, coplanar orbit.
Grid screen_grid(const KnownFit& known, const Problem& prob, const Brief& brief, const SolveOptions& o, unsigned threads,
                 const SolveProgress& progress) {
    const ModelSetup& setup = known.setup;
    Grid g;
    g.a = grid_distances(brief, o, prob);
    g.longitudes = static_cast<std::size_t>(std::max(4, o.grid_longitudes));
    g.cells.assign(g.a.size() * g.longitudes, {});
    Eigen::VectorXd r0;
    weighted_residuals(setup, known.run, r0);
    std::atomic<std::size_t> done{0};
    parallel_for(g.cells.size(), threads, [&](std::size_t c) {
        if (progress.cancel && progress.cancel->load()) return;
        const Screened x = screen_orbit(known, prob, r0, cell_orbit(g, c, prob));
        g.cells[c] = {x.chi2, x.alpha};
        if (progress.report)
            progress.report("screening the grid", 0.05 + 0.35 * static_cast<double>(++done) / static_cast<double>(g.cells.size()));
    });
    return g;
}

// Local minima of the grid (longitude wraps), best first, at most `starts` of them.
std::vector<std::size_t> grid_minima(const Grid& g, int starts) {
    std::vector<std::size_t> order;
    const auto na = static_cast<long>(g.a.size());
    const auto nl = static_cast<long>(g.longitudes);
    for (std::size_t c = 0; c < g.cells.size(); ++c) {
        if (!std::isfinite(g.cells[c].chi2)) continue;
        const long ia = static_cast<long>(c) / nl, il = static_cast<long>(c) % nl;
        bool minimum = true;
        for (long da = -1; da <= 1 && minimum; ++da)
            for (long dl = -1; dl <= 1; ++dl) {
                if (!da && !dl) continue;
                const long ja = ia + da;
                if (ja < 0 || ja >= na) continue;
                const long jl = (il + dl + nl) % nl;
                if (g.cells[static_cast<std::size_t>(ja * nl + jl)].chi2 < g.cells[c].chi2) { minimum = false; break; }
            }
        if (minimum) order.push_back(c);
    }
    std::sort(order.begin(), order.end(), [&](std::size_t x, std::size_t y) { return g.cells[x].chi2 < g.cells[y].chi2; });
    if (order.empty()) throw std::runtime_error("the grid search found no hidden body that improves the fit");
    if (order.size() > static_cast<std::size_t>(starts)) order.resize(static_cast<std::size_t>(starts));
    return order;
}

// ---- eccentric and inclined starts about the grid's minima ----
// The grid screens circular orbits in the observer's plane. Where the priors let the orbit be eccentric or
// tilted, each chosen grid minimum is screened again with its shape changed, by the same linear screen (one run
// each): e = 2 sigma_e (at most 0.5) at eight perihelion directions, and a tilt of 2 sigma_i (at most 30 deg) at
// four node directions. Where the best eccentric or the best tilted shape beats the circular one (the priors on
// shape counted), that cell gives one more start with those shapes combined. The solve does this only where the
// circular starts' polished best is a poor fit (chi2 far above its dof with every sigma recorded), a sign of a
// wrong basin: done for every solve, the extra fits made solves 1.3-1.5x dearer on the clean scenarios without
// changing one answer in 32 systems (quick and tutorial), and the screens' chi2 (linear in the mass) cannot be
// compared with a polished fit's to pick the promising shapes.
struct Start {
    std::size_t cell = 0;
    double alpha = 0.0;                   // the screen's mass scale (of Grid::m_ref)
    double k = 0.0, h = 0.0, ix = 0.0, iy = 0.0;  // the start orbit's shape (zero: circular, in the plane)
    bool shaped() const { return k != 0.0 || h != 0.0 || ix != 0.0 || iy != 0.0; }
};

std::vector<Start> shape_starts(const KnownFit& known, const Problem& prob, const Grid& g, const std::vector<std::size_t>& order,
                                unsigned threads, int& screened) {
    const HiddenParameters& l = prob.layout();
    std::vector<HiddenOrbit> shapes;  // k, h, inclination, node of each variant (the rest from the cell)
    if (l.i_k >= 0) {
        const double e = std::min(2.0 * prob.options.eccentricity_prior_sigma, 0.5);
        for (int q = 0; q < 8; ++q) {
            HiddenOrbit v;
            v.k = e * std::cos(q * two_pi / 8);
            v.h = e * std::sin(q * two_pi / 8);
            shapes.push_back(v);
        }
    }
    if (l.i_ix >= 0) {
        const double tilt = std::min(2.0 * prob.options.inclination_prior_rad, 30.0 * deg);
        for (int q = 0; q < 4; ++q) {
            HiddenOrbit v;
            v.inclination = tilt;
            v.node = q * two_pi / 4;
            shapes.push_back(v);
        }
    }
    std::vector<Start> extra;
    if (shapes.empty()) return extra;
    Eigen::VectorXd r0;
    weighted_residuals(known.setup, known.run, r0);
    std::vector<Screened> out(order.size() * shapes.size());
    parallel_for(out.size(), threads, [&](std::size_t j) {
        HiddenOrbit h = cell_orbit(g, order[j / shapes.size()], prob);
        const HiddenOrbit& v = shapes[j % shapes.size()];
        h.k = v.k;
        h.h = v.h;
        h.inclination = v.inclination;
        h.node = v.node;
        out[j] = screen_orbit(known, prob, r0, h);
    });
    screened = static_cast<int>(out.size());
    for (std::size_t s = 0; s < order.size(); ++s) {
        const double circular = g.cells[order[s]].chi2;
        Start start{order[s], g.cells[order[s]].alpha};
        double best_e = circular, best_i = circular;
        for (std::size_t v = 0; v < shapes.size(); ++v) {
            const Screened& x = out[s * shapes.size() + v];
            if (!(x.chi2 < circular)) continue;
            const bool tilted = shapes[v].inclination != 0.0;
            if (!tilted && x.chi2 < best_e) {
                best_e = x.chi2;
                start.k = shapes[v].k;
                start.h = shapes[v].h;
                start.alpha = x.alpha;
            } else if (tilted && x.chi2 < best_i) {
                best_i = x.chi2;
                start.ix = shapes[v].inclination * std::cos(shapes[v].node);
                start.iy = shapes[v].inclination * std::sin(shapes[v].node);
                if (best_e == circular) start.alpha = x.alpha;
            }
        }
        if (start.shaped()) extra.push_back(start);
    }
    return extra;
}

// The index of the lowest finite chi2 among the fits; throws when none could be evaluated.
std::size_t best_of(const std::vector<LeastSquaresResult>& fits) {
    std::size_t best = fits.size();
    for (std::size_t s = 0; s < fits.size(); ++s)
        if (fits[s].evaluated && std::isfinite(fits[s].chi2) && (best == fits.size() || fits[s].chi2 < fits[best].chi2)) best = s;
    if (best == fits.size()) throw std::runtime_error("no fit from any start could be evaluated");
    return best;
}

// ---- Levenberg-Marquardt from each start, with the planets' corrections eliminated ----
// The planets' corrections enter almost linearly, through the Jacobian Jp of the known fit. For given
// hidden-body parameters theta they are solved by Gauss-Newton steps, dp(theta) = -Jp^+ r(p, theta), and
// LM runs on theta alone against the true residual r(p0 + dp(theta), theta) (in the spirit of variable
// projection, Golub & Pereyra 1973). This removes the near-degenerate directions in which planet
// corrections and the hidden body trade off, which otherwise make the joint problem crawl; evaluating the
// true residual (not its linearised projection) keeps every chi2 honest when the corrections are large.
std::vector<LeastSquaresResult> fit_starts(const KnownFit& known, const Problem& prob, const Grid& g,
                                           const std::vector<Start>& order, unsigned threads, const SolveProgress& progress,
                                           double progress_from = 0.4, double progress_span = 0.3) {
    const ModelSetup& setup = known.setup;
    auto cancelled = [&] { return progress.cancel && progress.cancel->load(); };
    const Eigen::VectorXd x_planets = pack_planets(setup, prob.fit.reference, known.state);
    const Eigen::Index n_obs = static_cast<Eigen::Index>(2 * setup.obs.size());
    const Eigen::ColPivHouseholderQR<Eigen::MatrixXd> jp_qr(known.jacobian);
    const auto n_theta = static_cast<Eigen::Index>(prob.layout().names.size());
    const auto n_planet = static_cast<Eigen::Index>(prob.layout().planets);
    // Full parameter vector for theta: the planets' corrections solved for it.
    auto with_planets = [&](const Eigen::VectorXd& theta, Eigen::VectorXd& x) {
        x.resize(n_planet + n_theta);
        x.head(n_planet) = x_planets;
        x.tail(n_theta) = theta;
        // Two Gauss-Newton steps with the fixed Jacobian: the second removes most of what the first leaves
        // when a massive hidden body needs large corrections.
        for (int step = 0; step < 2; ++step) {
            Eigen::VectorXd r;
            if (!prob.evaluate(x, r)) return false;
            x.head(n_planet) += jp_qr.solve(Eigen::VectorXd(-r.head(n_obs)));
        }
        return true;
    };
    const std::vector<Eigen::Index> theta_columns = parameter_columns(static_cast<std::size_t>(n_theta), n_planet);
    std::vector<LeastSquaresResult> fits(order.size());
    std::atomic<std::size_t> fitted{0};
    parallel_for(order.size(), threads, [&](std::size_t s) {
        const std::size_t c = order[s].cell;
        // Each start's problem keeps the full vector of its last evaluation: LM asks for the Jacobian where it
        // has just evaluated, and the planets' corrections need not be solved again for it.
        Eigen::VectorXd last_theta, last_x;
        LeastSquaresProblem reduced;
        reduced.parameters = static_cast<std::size_t>(n_theta);
        reduced.residuals = prob.residual_count();
        reduced.step = prob.layout().steps().tail(n_theta);
        reduced.evaluate = [&](const Eigen::VectorXd& theta, Eigen::VectorXd& r) {
            Eigen::VectorXd x;
            if (!with_planets(theta, x) || !prob.evaluate(x, r)) return false;
            last_theta = theta;
            last_x = x;
            return true;
        };
        if (prob.has_jacobian(theta_columns.size())) {
            // The reduced Jacobian: the hidden body's columns at the corrected planets, less what the planets'
            // corrections take up, (I - Jp Jp^+) J_theta (Kaufman's approximation in variable projection).
            reduced.jacobian = [&](const Eigen::VectorXd& theta, Eigen::MatrixXd& jac) {
                Eigen::VectorXd x;
                if (last_theta.size() == theta.size() && last_theta == theta) x = last_x;
                else if (!with_planets(theta, x)) return false;
                if (!prob.jacobian(x, theta_columns, jac)) return false;
                const Eigen::MatrixXd obs = jac.topRows(n_obs);
                jac.topRows(n_obs) = obs - known.jacobian * jp_qr.solve(obs);
                return jac.allFinite();
            };
        }
        Eigen::VectorXd theta0 = Eigen::VectorXd::Zero(n_theta);
        const HiddenParameters& l = prob.layout();
        theta0[l.i_logm - n_planet] = std::log(std::max(order[s].alpha, 1e-3) * Grid::m_ref);
        if (l.i_a >= 0) theta0[l.i_a - n_planet] = std::log(g.a_of(c));
        theta0[l.i_lon - n_planet] = g.longitude_of(c);
        if (l.i_k >= 0) { theta0[l.i_k - n_planet] = order[s].k; theta0[l.i_h - n_planet] = order[s].h; }
        if (l.i_ix >= 0) { theta0[l.i_ix - n_planet] = order[s].ix; theta0[l.i_iy - n_planet] = order[s].iy; }
        LeastSquaresResult r = levenberg_marquardt(reduced, theta0, 40, cancelled);
        Eigen::VectorXd x;
        if (r.evaluated && with_planets(r.x, x)) {
            r.x = x;
        } else {
            r.evaluated = false;
            r.outcome = FitOutcome::model_failed;
        }
        fits[s] = r;
        if (progress.report)
            progress.report("fitting from " + std::to_string(order.size()) + " starts",
                            progress_from + progress_span * static_cast<double>(++fitted) / static_cast<double>(order.size()));
    });
    return fits;
}

// ---- polish the best with the full Jacobian, re-estimating weights with the complete model ----
LeastSquaresResult polish(ModelSetup& setup, const Problem& prob, const Eigen::VectorXd& start, const std::function<bool()>& cancelled) {
    const LeastSquaresProblem full = as_lsq(prob);
    LeastSquaresResult best = levenberg_marquardt(full, start, 8, cancelled);
    for (int round = 0; round < 3; ++round) {
        const ModelRun run = run_model(setup, prob.state(best.x), setup.t_end);
        if (!update_weights(setup, residuals_arcsec(setup, run))) break;
        best = levenberg_marquardt(full, best.x, 8, cancelled);
    }
    return best;
}

// Every minimum's chi2 with the final weights (so that they compare fairly), duplicates merged, best first.
std::vector<Minimum> collect_minima(const Problem& prob, const Grid& g, const std::vector<Start>& order,
                                    std::vector<LeastSquaresResult>& fits, std::size_t best_start, const LeastSquaresResult& best) {
    for (std::size_t s = 0; s < fits.size(); ++s) {
        if (!fits[s].evaluated) continue;
        if (s == best_start) {
            const bool converged = best.converged() || fits[s].converged();
            fits[s].x = best.x;
            fits[s].chi2 = best.chi2;
            fits[s].outcome = converged ? FitOutcome::converged : best.outcome;
            continue;
        }
        Eigen::VectorXd r;
        fits[s].chi2 = prob.evaluate(fits[s].x, r) ? r.squaredNorm() : INFINITY;
    }
    std::vector<Minimum> minima;
    for (std::size_t s = 0; s < fits.size(); ++s) {
        if (!fits[s].evaluated || !std::isfinite(fits[s].chi2)) continue;
        Minimum m;
        m.orbit = prob.hidden(fits[s].x);
        m.parameters = fits[s].x;
        m.chi2 = fits[s].chi2;
        m.converged = fits[s].converged();
        m.iterations = fits[s].iterations;
        m.start_distance_au = g.a_of(order[s].cell);
        m.start_longitude = g.longitude_of(order[s].cell);
        m.start_eccentricity = std::hypot(order[s].k, order[s].h);
        m.start_tilt = std::hypot(order[s].ix, order[s].iy);
        bool duplicate = false;
        for (Minimum& other : minima) {
            const bool same = std::abs(other.orbit.semi_major_axis - m.orbit.semi_major_axis) < 0.02 * m.orbit.semi_major_axis &&
                              std::abs(wrap_pi(other.orbit.mean_longitude - m.orbit.mean_longitude)) < 2.0 * deg;
            if (same) {
                duplicate = true;
                if (m.chi2 < other.chi2) other = m;
            }
        }
        if (!duplicate) minima.push_back(m);
    }
    std::sort(minima.begin(), minima.end(), [](const Minimum& a, const Minimum& b) { return a.chi2 < b.chi2; });
    return minima;
}

// The fit's degrees of freedom: kept observations' residuals and the priors', less every fitted parameter (the era
// nuisance parameters too); at least 1.
std::size_t fit_dof(const Problem& prob) {
    const ModelSetup& setup = *prob.setup;
    std::size_t kept = 0;
    for (const FitObservation& f : setup.obs) kept += f.rejected ? 0 : 1;
    const std::size_t m_eff = 2 * kept + prob.priors;
    const std::size_t fitted = prob.layout().size() + era_systematic_parameters(setup.era_view());
    return m_eff > fitted ? m_eff - fitted : 1;
}

// ---- covariance: (J^T W J)^-1, scaled by chi2/dof where some era's sigma was estimated ----
void set_covariance(Solution& sol, const Problem& prob, const LeastSquaresResult& best) {
    const ModelSetup& setup = *prob.setup;
    const HiddenParameters& l = prob.layout();
    sol.dof = fit_dof(prob);
    Eigen::MatrixXd C = normal_inverse(best.jacobian);
    sol.covariance_scaled = setup.weights_estimated();
    if (sol.covariance_scaled) C *= sol.chi2 / static_cast<double>(sol.dof);
    const auto hp = static_cast<Eigen::Index>(l.planets);
    const auto hn = static_cast<Eigen::Index>(l.names.size());
    sol.hidden_covariance = C.block(hp, hp, hn, hn);
    sol.parameter_names = l.names;
    sol.mass_sigma = sol.best.mass * std::sqrt(C(l.i_logm, l.i_logm));
    if (l.i_a >= 0) {
        sol.distance_sigma_au = sol.best.semi_major_axis * std::sqrt(C(l.i_a, l.i_a));
        sol.mass_distance_correlation = C(l.i_logm, l.i_a) / std::sqrt(C(l.i_logm, l.i_logm) * C(l.i_a, l.i_a));
    }
    sol.fit.covariance = std::move(C);
}

// ---- is a body demanded at all, and does the model fit (detection.hpp) ----
void check_fit(Solution& sol, const KnownFit& known, const KnownWeights& before, const Problem& prob,
               const LeastSquaresResult& best, const SolveOptions& o) {
    const ModelSetup& setup = *prob.setup;
    Eigen::VectorXd r;
    if (!prob.evaluate(best.x, r)) r = Eigen::VectorXd::Constant(static_cast<Eigen::Index>(prob.residual_count()), INFINITY);
    // The trials: every grid cell is a distinct trial orbit (the starts refine a few of them).
    const int trials = std::max(1, o.grid_distances * o.grid_longitudes);
    sol.detection = detection_test(known, before, setup, r, static_cast<int>(prob.layout().names.size()), trials);
    sol.goodness = goodness_of_fit(sol.chi2, sol.dof, setup.weights_estimated());
    sol.clipping = clipping_change(before, setup);
    // A fit far above its chi2 with every sigma recorded: the stated region must not pretend otherwise.
    if (sol.goodness.poor() && !sol.covariance_scaled) {
        const double f = sol.chi2 / static_cast<double>(sol.dof);
        sol.fit.covariance *= f;
        sol.hidden_covariance *= f;
        sol.mass_sigma *= std::sqrt(f);
        sol.distance_sigma_au *= std::sqrt(f);
        sol.covariance_widened = true;
    }
}

// The chi2/dof scale the solve gave its covariance (1 where every sigma was recorded and the fit is good).
double covariance_scale(const Solution& sol) {
    return sol.covariance_scaled || sol.covariance_widened ? sol.chi2 / static_cast<double>(sol.dof) : 1.0;
}

// ---- every minimum's probability and physical plausibility (minima.hpp) ----
void weigh_minima(Solution& sol, const Problem& prob, const Brief& brief) {
    const double scale = covariance_scale(sol);
    const LeastSquaresProblem lsq = as_lsq(prob);
    std::vector<double> log_weights;
    for (Minimum& m : sol.minima) {
        m.flags = implausibility_flags(m.orbit, brief);
        Eigen::VectorXd r;
        Eigen::MatrixXd J;
        int runs = 0;
        // The tangent map needs no residuals at the point; differences do.
        if (lsq.jacobian) r = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(prob.residual_count()));
        const bool ok = m.parameters.size() == static_cast<Eigen::Index>(prob.layout().size()) &&
                        (lsq.jacobian || prob.evaluate(m.parameters, r)) && problem_jacobian(lsq, m.parameters, r, J, runs);
        log_weights.push_back(ok ? laplace_log_weight(m.chi2, J, scale) : NAN);
        if (ok) m.covariance = normal_inverse(J) * scale;  // its own region, for its own prediction
    }
    const std::vector<double> p = probabilities_from_log_weights(log_weights);
    for (std::size_t i = 0; i < sol.minima.size(); ++i) sol.minima[i].probability = p[i];
}

}  // namespace

PredictOptions prediction_options(const SolveOptions& o) {
    PredictOptions p;
    p.track_years = o.track_years;
    p.track_step_years = o.track_step_years;
    p.samples = o.samples;
    p.seed = o.seed;
    p.threads = o.threads ? o.threads : default_threads();
    return p;
}

Solution solve(const Exercise& ex, const SolveOptions& o, const SolveProgress& progress) {
    auto report = [&](const std::string& stage, double f) { if (progress.report) progress.report(stage, f); };
    const std::function<bool()> cancelled = [&] { return progress.cancel && progress.cancel->load(); };
    const unsigned threads = o.threads ? o.threads : default_threads();
    const double epoch_year = o.epoch_year.value_or(ex.brief.search_epochs_year.front());
    check_epoch(ex, epoch_year);
    validate(o);

    report("known-bodies fit", 0.0);
    auto known = std::make_shared<KnownFit>(fit_known(ex, o.model));
    ModelSetup& setup = known->setup;

    const KnownWeights before = known_weights(setup);  // the solve changes weights and clipping; the tests compare
    Solution sol;
    sol.exercise_sha256 = ex.brief.identity_sha256();
    sol.scenario_name = ex.brief.scenario_name;
    sol.priors = o.describe();
    sol.spacing_rule_au = spacing_rule_next(ex.brief);
    std::atomic<int> runs{known->model_runs};  // every forward-model run, the known-bodies fit's included
    Problem prob = make_problem(setup, ex.brief, o, sol.spacing_rule_au);
    prob.runs = &runs;

    const Grid grid = screen_grid(*known, prob, ex.brief, o, threads, progress);
    if (cancelled()) throw Cancelled();
    std::vector<Start> order;
    std::vector<std::size_t> cells = grid_minima(grid, o.starts);
    for (std::size_t c : cells) order.push_back({c, grid.cells[c].alpha});
    std::vector<LeastSquaresResult> fits = fit_starts(*known, prob, grid, order, threads, progress);
    if (cancelled()) throw Cancelled();
    std::size_t best_start = best_of(fits);
    report("polishing the best minimum", 0.78);
    LeastSquaresResult best = polish(setup, prob, fits[best_start].x, cancelled);
    // A poor fit from the circular starts (chi2 far above its dof with every sigma recorded) is likely a wrong
    // basin: eccentric and tilted starts about the grid minima get their chance, and the best of them replaces
    // the circular one if it fits better (shape_starts above).
    if (o.shape_starts && goodness_of_fit(best.chi2, fit_dof(prob), setup.weights_estimated()).poor()) {
        sol.shape_fallback_chi2 = best.chi2;
        report("screening eccentric and tilted starts", 0.8);
        const std::vector<Start> extra = shape_starts(*known, prob, grid, cells, threads, sol.shape_screens);
        if (!extra.empty()) {
            std::vector<LeastSquaresResult> more = fit_starts(*known, prob, grid, extra, threads, progress, 0.8, 0.05);
            if (cancelled()) throw Cancelled();
            order.insert(order.end(), extra.begin(), extra.end());
            fits.insert(fits.end(), more.begin(), more.end());
            // Each new fit's chi2 with the weights the polish left, so that it compares with the polished best.
            std::size_t candidate = fits.size();
            double candidate_chi2 = best.chi2;
            for (std::size_t s = fits.size() - more.size(); s < fits.size(); ++s) {
                Eigen::VectorXd r;
                if (fits[s].evaluated && prob.evaluate(fits[s].x, r) && r.squaredNorm() < candidate_chi2) {
                    candidate = s;
                    candidate_chi2 = r.squaredNorm();
                }
            }
            if (candidate < fits.size()) {
                // The polish re-weights the setup and re-clips; if the new basin does not end better, the old
                // weights return. Better: a lower chi2 per degree of freedom, since each polish keeps its own set
                // of observations (a basin that sets more aside would win on chi2 alone).
                const ModelSetup weights_before = setup;
                const double per_dof_before = best.chi2 / static_cast<double>(fit_dof(prob));
                LeastSquaresResult other = polish(setup, prob, fits[candidate].x, cancelled);
                if (other.evaluated && other.chi2 / static_cast<double>(fit_dof(prob)) < per_dof_before) {
                    best = std::move(other);
                    best_start = candidate;
                } else {
                    setup = weights_before;
                }
            }
        }
        sol.shape_starts = static_cast<int>(extra.size());
        sol.shape_start_won = best_start >= cells.size();
    }
    sol.starts = static_cast<int>(order.size());
    sol.minima = collect_minima(prob, grid, order, fits, best_start, best);
    sol.best = prob.hidden(best.x);
    sol.chi2 = best.chi2;
    set_covariance(sol, prob, best);
    check_fit(sol, *known, before, prob, best, o);
    weigh_minima(sol, prob, ex.brief);
    sol.fit.reference = prob.fit.reference;
    sol.fit.layout = prob.fit.layout;
    sol.fit.best = best.x;
    // The exact chi2 of a sample, for its importance weight where the map is not linear. The copy of the problem
    // counts no runs (the predictor counts its own) and keeps the setup alive with the solution.
    {
        Problem weigh = prob;
        weigh.runs = nullptr;
        sol.fit.chi2_of = [weigh, keep = known](const Eigen::VectorXd& x, const ModelRun& run, double& chi2) {
            Eigen::VectorXd obs;
            if (!weighted_residuals(*weigh.setup, run, obs)) return false;
            Eigen::VectorXd r(static_cast<Eigen::Index>(weigh.residual_count()));
            r.head(obs.size()) = obs;
            weigh.prior_residuals(x, r);
            chi2 = r.squaredNorm();
            return std::isfinite(chi2);
        };
        // The planets' columns of the best fit's own Jacobian (its final weights): at the best, the step is zero.
        const auto n_obs_rows = static_cast<Eigen::Index>(2 * setup.obs.size());
        const auto jp_qr = std::make_shared<const Eigen::ColPivHouseholderQR<Eigen::MatrixXd>>(
            Eigen::MatrixXd(best.jacobian.topLeftCorner(n_obs_rows, static_cast<Eigen::Index>(prob.layout().planets))));
        sol.fit.profile = [weigh, jp_qr, keep = known](Eigen::VectorXd& x) {
            Eigen::VectorXd r;
            if (!weigh.evaluate(x, r)) return false;
            const auto n_obs = static_cast<Eigen::Index>(2 * weigh.setup->obs.size());
            x.head(jp_qr->cols()) += jp_qr->solve(Eigen::VectorXd(-r.head(n_obs)));
            return x.allFinite();
        };
        sol.fit.profile_gain = jp_qr->solve(Eigen::MatrixXd(best.jacobian.topRightCorner(n_obs_rows, best.jacobian.cols() - jp_qr->cols())));
        sol.fit.chi2_best = sol.chi2;
        sol.fit.chi2_scale = covariance_scale(sol);
    }

    // ---- prediction: the one predictor, at the solve's epoch ----
    PredictHooks hooks;
    hooks.runs = &runs;
    hooks.cancel = progress.cancel;
    if (progress.report) hooks.report = [&](const std::string& stage, double f) { progress.report(stage, 0.82 + 0.18 * f); };
    sol.prediction = predict(setup, sol.fit, {epoch_year}, prediction_options(o), hooks).front();
    // Every other minimum's own prediction at the epoch (position and linear ellipse), so the user sees where
    // each plausible solution would send the telescope.
    for (std::size_t i = 1; i < sol.minima.size(); ++i) {
        Minimum& m = sol.minima[i];
        if (m.covariance.rows() != m.parameters.size() || cancelled()) continue;
        FittedModel other;
        other.reference = sol.fit.reference;
        other.layout = sol.fit.layout;
        other.best = m.parameters;
        other.covariance = m.covariance;
        PredictOptions po = prediction_options(o);
        po.samples = 0;
        po.track_years = 0.0;
        try {
            m.prediction = predict(setup, other, {epoch_year}, po, PredictHooks{nullptr, progress.cancel, &runs}).front();
        } catch (const std::runtime_error&) {
            // A minimum whose orbit cannot be integrated to the epoch has no prediction; the table says so.
        }
    }
    // The map over every plausible minimum: the other minima's virtual bodies join the best's (mixture.hpp).
    mix_other_minima(sol.prediction, sol.minima, o.seed);
    sol.setup = std::shared_ptr<const ModelSetup>(known, &known->setup);
    sol.model_runs = runs.load();
    report("done", 1.0);
    return sol;
}

}  // namespace wayward
