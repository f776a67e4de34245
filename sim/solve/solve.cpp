// The inverse problem and the prediction; see solve.hpp for the method.
#include "sim/solve/solve.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <sstream>

#include <toml++/toml.h>

#include "sim/base/errors.hpp"
#include "sim/base/parallel.hpp"
#include "sim/base/random.hpp"
#include "sim/io/toml_reader.hpp"
#include "sim/base/units.hpp"

namespace wayward {

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
    return s.str();
}

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

// Layout of the parameter vector: the observed planets' scaled states, then the hidden body's parameters.
struct Layout {
    std::size_t planets = 0;  // 6 x observed planets
    std::vector<std::string> names;
    int i_logm = -1, i_a = -1, i_k = -1, i_h = -1, i_lon = -1, i_ix = -1, i_iy = -1;
    std::size_t size() const { return planets + names.size(); }
    int add(const std::string& n) { names.push_back(n); return static_cast<int>(planets + names.size() - 1); }
};

Layout make_layout(const ModelSetup& setup, const SolveOptions& o) {
    Layout l;
    l.planets = 6 * setup.planets.size();
    l.i_logm = l.add("log_mass");
    if (o.distance != DistancePrior::fixed) l.i_a = l.add("log_a");  // log a: the mass-distance valley is straight in logs
    if (!o.circular) { l.i_k = l.add("e_cos_varpi"); l.i_h = l.add("e_sin_varpi"); }
    l.i_lon = l.add("mean_longitude_rad");
    if (!o.coplanar) { l.i_ix = l.add("tilt_x_rad"); l.i_iy = l.add("tilt_y_rad"); }
    return l;
}

struct Problem {
    const ModelSetup* setup = nullptr;
    const ModelState* reference = nullptr;
    Layout layout;
    SolveOptions options;
    double prior_a = 0.0, prior_a_sigma = 0.0;  // Gaussian prior on a (sigma 0: none)
    double fixed_a = 0.0;
    // The mean longitude is fitted at a reference time in the middle of the data, not at epoch 0: there the
    // data fix it almost independently of the distance, which keeps the problem's valley nearly straight.
    double t_ref = 0.0;
    double gm_star = 0.0;
    std::size_t priors = 0;
    std::atomic<int>* runs = nullptr;

    HiddenOrbit hidden(const Eigen::VectorXd& x) const {
        HiddenOrbit h;
        h.mass = std::exp(x[layout.i_logm]);
        h.semi_major_axis = layout.i_a >= 0 ? std::exp(x[layout.i_a]) : fixed_a;
        if (layout.i_k >= 0) { h.k = x[layout.i_k]; h.h = x[layout.i_h]; }
        h.mean_longitude = x[layout.i_lon] - mean_motion(h.semi_major_axis, gm_star + gm_from_mass(h.mass)) * t_ref;
        if (layout.i_ix >= 0) {
            h.inclination = std::hypot(x[layout.i_ix], x[layout.i_iy]);
            h.node = std::atan2(x[layout.i_iy], x[layout.i_ix]);
        }
        return h;
    }
    ModelState state(const Eigen::VectorXd& x) const {
        ModelState s = *reference;
        unpack_planets(*setup, *reference, x.head(static_cast<Eigen::Index>(layout.planets)), s);
        s.hidden = hidden(x);
        return s;
    }
    std::size_t residual_count() const { return 2 * setup->obs.size() + priors; }
    void prior_residuals(const Eigen::VectorXd& x, Eigen::VectorXd& r) const {
        Eigen::Index k = static_cast<Eigen::Index>(2 * setup->obs.size());
        if (prior_a_sigma > 0.0) r[k++] = (std::exp(x[layout.i_a]) - prior_a) / prior_a_sigma;
        if (layout.i_k >= 0) {
            r[k++] = x[layout.i_k] / options.eccentricity_prior_sigma;
            r[k++] = x[layout.i_h] / options.eccentricity_prior_sigma;
        }
        if (layout.i_ix >= 0) {
            r[k++] = x[layout.i_ix] / options.inclination_prior_rad;
            r[k++] = x[layout.i_iy] / options.inclination_prior_rad;
        }
    }
    bool evaluate(const Eigen::VectorXd& x, Eigen::VectorXd& r) const {
        if (runs) ++*runs;
        const ModelRun run = run_model(*setup, state(x), setup->t_end);
        Eigen::VectorXd obs;
        if (!weighted_residuals(*setup, run, obs)) return false;
        r.resize(static_cast<Eigen::Index>(residual_count()));
        r.head(obs.size()) = obs;
        prior_residuals(x, r);
        return r.allFinite();
    }
    Eigen::VectorXd steps() const {
        Eigen::VectorXd s = Eigen::VectorXd::Ones(static_cast<Eigen::Index>(layout.size()));
        s[layout.i_logm] = 0.01;
        if (layout.i_a >= 0) s[layout.i_a] = 1e-3;
        if (layout.i_k >= 0) s[layout.i_k] = s[layout.i_h] = 1e-3;
        s[layout.i_lon] = 1e-3;
        if (layout.i_ix >= 0) s[layout.i_ix] = s[layout.i_iy] = 1e-3;
        return s;
    }
};

LeastSquaresProblem as_lsq(const Problem& p) {
    LeastSquaresProblem q;
    q.parameters = p.layout.size();
    q.residuals = p.residual_count();
    q.step = p.steps();
    q.evaluate = [&p](const Eigen::VectorXd& x, Eigen::VectorXd& r) { return p.evaluate(x, r); };
    return q;
}

// Inverse of J^T J by the SVD of J (stable for ill-conditioned long-arc problems).
Eigen::MatrixXd normal_inverse(const Eigen::MatrixXd& J) {
    Eigen::JacobiSVD<Eigen::MatrixXd> svd(J, Eigen::ComputeThinV);
    const Eigen::VectorXd s = svd.singularValues();
    Eigen::VectorXd inv(s.size());
    for (Eigen::Index k = 0; k < s.size(); ++k) inv[k] = s[k] > 1e-12 * s[0] ? 1.0 / (s[k] * s[k]) : 0.0;
    return svd.matrixV() * inv.asDiagonal() * svd.matrixV().transpose();
}

double epoch_days(const Brief& b, double year) { return days_from_year(b.epoch0_year, year); }

void check_epoch(const Exercise& ex, double year) {
    const double lo = ex.brief.epoch0_year, hi = ex.brief.epoch0_year + ex.brief.span_years;
    if (!(year >= lo && year <= hi))
        throw InputError("", 0, "--epoch", "the epoch " + std::to_string(year) + " lies outside the exercise's integrable span (" +
                                             std::to_string(lo) + " to " + std::to_string(hi) + ")");
}

}  // namespace

void ellipse_axes(double cll, double clb, double cbb, double& major, double& minor, double& orientation_deg) {
    Eigen::Matrix2d c;
    c << cll, clb, clb, cbb;
    Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> es(c);
    const Eigen::Vector2d ev = es.eigenvalues().cwiseMax(0.0);
    major = std::sqrt(ev[1]);
    minor = std::sqrt(ev[0]);
    const Eigen::Vector2d u = es.eigenvectors().col(1);
    double ang = std::atan2(u[1], u[0]) / deg;
    if (ang < 0) ang += 180.0;
    if (ang >= 180.0) ang -= 180.0;
    orientation_deg = ang;
}

Prediction predict_position(const ModelSetup& setup, const ModelState& state, double epoch_year, double track_years,
                            double track_step_years) {
    Prediction p;
    p.epoch_year = epoch_year;
    const Brief& b = setup.brief;
    const double span_end = b.span_years * julian_year_days;
    const double t = epoch_days(b, epoch_year);
    const double lo = std::max(0.0, t - track_years * julian_year_days);
    const double hi = std::min(span_end, t + track_years * julian_year_days);
    const ModelRun run = run_model(setup, state, std::max(hi, t));
    if (!run.ok || !run.hidden_index) throw std::runtime_error("prediction: the model could not be integrated: " + run.problem);
    const SkyPosition sky = model_apparent(setup, run, *run.hidden_index, t);
    p.lon = sky.lon;
    p.lat = sky.lat;
    p.distance_au = sky.distance;
    const double step = track_step_years * julian_year_days;
    for (double tt = lo; tt <= hi + 1e-9; tt += step) {
        const SkyPosition s = model_apparent(setup, run, *run.hidden_index, tt);
        p.track.push_back({decimal_year(b.epoch0_year, tt), s.lon, s.lat});
    }
    return p;
}

Solution solve(const Exercise& ex, const SolveOptions& o, const SolveProgress& progress) {
    auto report = [&](const std::string& stage, double f) { if (progress.report) progress.report(stage, f); };
    auto cancelled = [&] { return progress.cancel && progress.cancel->load(); };
    const unsigned threads = o.threads ? o.threads : default_threads();
    const double epoch_year = o.epoch_year.value_or(ex.brief.search_epochs_year.front());
    check_epoch(ex, epoch_year);
    if (o.distance == DistancePrior::fixed && !(o.distance_au > 0.0)) throw InputError("", 0, "--distance", "a fixed distance must be positive");
    if (o.distance == DistancePrior::gaussian && !(o.distance_au > 0.0 && o.distance_sigma_au > 0.0))
        throw InputError("", 0, "--distance", "a Gaussian distance prior needs a positive mean and sigma");

    report("known-bodies fit", 0.0);
    KnownFit known = fit_known(ex, o.model);
    ModelSetup& setup = known.setup;
    const ModelState reference = initial_state(setup);

    Solution sol;
    sol.exercise_sha256 = ex.brief.answer_key_sha256;
    sol.scenario_name = ex.brief.scenario_name;
    sol.priors = o.describe();
    sol.spacing_rule_au = spacing_rule_next(ex.brief);
    std::atomic<int> runs{0};

    Problem prob;
    prob.setup = &setup;
    prob.reference = &reference;
    prob.options = o;
    prob.layout = make_layout(setup, o);
    prob.runs = &runs;
    prob.gm_star = setup.known.gm[0];
    {
        double sum = 0.0, weight = 0.0;
        for (const FitObservation& f : setup.obs) {
            if (f.rejected) continue;
            const double w = 1.0 / (f.sigma_lon_arcsec * f.sigma_lon_arcsec);
            sum += w * f.time_days;
            weight += w;
        }
        prob.t_ref = weight > 0 ? sum / weight : 0.0;
    }
    double a_outer = 0.0;
    for (const BriefPlanet& p : ex.brief.planets) a_outer = std::max(a_outer, p.elements.semi_major_axis);
    switch (o.distance) {
        case DistancePrior::free: break;
        case DistancePrior::fixed: prob.fixed_a = o.distance_au; break;
        case DistancePrior::gaussian: prob.prior_a = o.distance_au; prob.prior_a_sigma = o.distance_sigma_au; break;
        case DistancePrior::spacing:
            if (!(sol.spacing_rule_au > 0.0)) throw InputError(ex.brief.file, 0, "planet", "the spacing rule needs at least two known planets");
            prob.prior_a = sol.spacing_rule_au;
            prob.prior_a_sigma = o.spacing_sigma_fraction * sol.spacing_rule_au;
            break;
    }
    prob.priors = (prob.prior_a_sigma > 0 ? 1 : 0) + (o.circular ? 0 : 2) + (o.coplanar ? 0 : 2);

    // ---- grid screening, linear in the mass ----
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
    const int nl = std::max(4, o.grid_longitudes);
    const Eigen::VectorXd x_planets = pack_planets(setup, reference, known.state);
    Eigen::VectorXd r0;
    weighted_residuals(setup, known.run, r0);
    const double m_ref = 1e-5;
    const Eigen::MatrixXd& Jp = known.jacobian;
    struct Cell { double chi2 = INFINITY; double alpha = 0.0; Eigen::VectorXd dp; };
    std::vector<Cell> cells(grid_a.size() * static_cast<std::size_t>(nl));
    std::atomic<std::size_t> done{0};
    parallel_for(cells.size(), threads, [&](std::size_t c) {
        if (cancelled()) return;
        const double a = grid_a[c / static_cast<std::size_t>(nl)];
        const double lon_ref = two_pi * static_cast<double>(c % static_cast<std::size_t>(nl)) / nl;
        ModelState s = known.state;
        HiddenOrbit h;
        h.mass = m_ref;
        h.semi_major_axis = a;
        h.mean_longitude = lon_ref - mean_motion(a, prob.gm_star + gm_from_mass(m_ref)) * prob.t_ref;
        s.hidden = h;
        ++runs;
        Eigen::VectorXd rh;
        if (!weighted_residuals(setup, run_model(setup, s, setup.t_end), rh)) return;
        Eigen::MatrixXd M(Jp.rows(), Jp.cols() + 1);
        M.leftCols(Jp.cols()) = Jp;
        M.col(Jp.cols()) = rh - r0;
        const Eigen::VectorXd sol_lin = M.colPivHouseholderQr().solve(-r0);
        Cell cell;
        cell.alpha = sol_lin[Jp.cols()];
        cell.dp = sol_lin.head(Jp.cols());
        const double prior = prob.prior_a_sigma > 0 ? std::pow((a - prob.prior_a) / prob.prior_a_sigma, 2) : 0.0;
        cell.chi2 = cell.alpha > 0 ? (r0 + M * sol_lin).squaredNorm() + prior : INFINITY;
        cells[c] = cell;
        report("screening the grid", 0.05 + 0.35 * static_cast<double>(++done) / static_cast<double>(cells.size()));
    });
    if (cancelled()) throw std::runtime_error("cancelled");

    // Local minima of the grid (longitude wraps), best first.
    std::vector<std::size_t> order;
    const auto na = static_cast<long>(grid_a.size());
    for (std::size_t c = 0; c < cells.size(); ++c) {
        if (!std::isfinite(cells[c].chi2)) continue;
        const long ia = static_cast<long>(c) / nl, il = static_cast<long>(c) % nl;
        bool minimum = true;
        for (long da = -1; da <= 1 && minimum; ++da)
            for (long dl = -1; dl <= 1; ++dl) {
                if (!da && !dl) continue;
                const long ja = ia + da;
                if (ja < 0 || ja >= na) continue;
                const long jl = (il + dl + nl) % nl;
                if (cells[static_cast<std::size_t>(ja * nl + jl)].chi2 < cells[c].chi2) { minimum = false; break; }
            }
        if (minimum) order.push_back(c);
    }
    std::sort(order.begin(), order.end(), [&](std::size_t x, std::size_t y) { return cells[x].chi2 < cells[y].chi2; });
    if (order.empty()) throw std::runtime_error("the grid search found no hidden body that improves the fit");
    if (order.size() > static_cast<std::size_t>(o.starts)) order.resize(static_cast<std::size_t>(o.starts));

    // ---- Levenberg-Marquardt from each start, with the planets' corrections eliminated ----
    // The planets' corrections enter almost linearly, through the Jacobian Jp of the known fit. For given
    // hidden-body parameters theta they are solved by Gauss-Newton steps, dp(theta) = -Jp^+ r(p, theta), and
    // LM runs on theta alone against the true residual r(p0 + dp(theta), theta) (in the spirit of variable
    // projection, Golub & Pereyra 1973). This removes the near-degenerate directions in which planet
    // corrections and the hidden body trade off, which otherwise make the joint problem crawl; evaluating the
    // true residual (not its linearised projection) keeps every chi2 honest when the corrections are large.
    // The best minimum is then polished with all parameters free.
    const Eigen::Index n_obs = static_cast<Eigen::Index>(2 * setup.obs.size());
    const Eigen::ColPivHouseholderQR<Eigen::MatrixXd> jp_qr(Jp);
    const auto n_theta = static_cast<Eigen::Index>(prob.layout.names.size());
    const auto n_planet = static_cast<Eigen::Index>(prob.layout.planets);
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
    LeastSquaresProblem reduced;
    reduced.parameters = static_cast<std::size_t>(n_theta);
    reduced.residuals = prob.residual_count();
    reduced.step = prob.steps().tail(n_theta);
    reduced.evaluate = [&](const Eigen::VectorXd& theta, Eigen::VectorXd& r) {
        Eigen::VectorXd x;
        return with_planets(theta, x) && prob.evaluate(x, r);
    };
    std::vector<LeastSquaresResult> fits(order.size());
    std::atomic<std::size_t> fitted{0};
    parallel_for(order.size(), threads, [&](std::size_t s) {
        const std::size_t c = order[s];
        Eigen::VectorXd theta0 = Eigen::VectorXd::Zero(n_theta);
        theta0[prob.layout.i_logm - n_planet] = std::log(std::max(cells[c].alpha, 1e-3) * m_ref);
        if (prob.layout.i_a >= 0) theta0[prob.layout.i_a - n_planet] = std::log(grid_a[c / static_cast<std::size_t>(nl)]);
        theta0[prob.layout.i_lon - n_planet] = two_pi * static_cast<double>(c % static_cast<std::size_t>(nl)) / nl;
        LeastSquaresResult r = levenberg_marquardt(reduced, theta0, 40, cancelled);
        Eigen::VectorXd x;
        if (r.evaluations > 0 && with_planets(r.x, x)) r.x = x; else r.evaluations = 0;
        fits[s] = r;
        report("fitting from " + std::to_string(order.size()) + " starts",
               0.4 + 0.35 * static_cast<double>(++fitted) / static_cast<double>(order.size()));
    });
    if (cancelled()) throw std::runtime_error("cancelled");

    std::size_t best_start = fits.size();
    for (std::size_t s = 0; s < fits.size(); ++s)
        if (fits[s].evaluations > 0 && std::isfinite(fits[s].chi2) && (best_start == fits.size() || fits[s].chi2 < fits[best_start].chi2))
            best_start = s;
    if (best_start == fits.size()) throw std::runtime_error("no fit from any start could be evaluated");

    // ---- polish the best with the full Jacobian, re-estimating weights with the complete model ----
    report("polishing the best minimum", 0.78);
    const LeastSquaresProblem full = as_lsq(prob);
    LeastSquaresResult best = levenberg_marquardt(full, fits[best_start].x, 8, cancelled);
    for (int round = 0; round < 3; ++round) {
        const ModelRun run = run_model(setup, prob.state(best.x), setup.t_end);
        if (!update_weights(setup, residuals_arcsec(setup, run))) break;
        best = levenberg_marquardt(full, best.x, 8, cancelled);
    }
    // Every minimum's chi2 with the final weights, so that they compare fairly.
    for (std::size_t s = 0; s < fits.size(); ++s) {
        if (fits[s].evaluations == 0) continue;
        if (s == best_start) {
            fits[s].x = best.x;
            fits[s].chi2 = best.chi2;
            fits[s].converged = best.converged || fits[s].converged;
            continue;
        }
        Eigen::VectorXd r;
        fits[s].chi2 = prob.evaluate(fits[s].x, r) ? r.squaredNorm() : INFINITY;
    }
    for (std::size_t s = 0; s < fits.size(); ++s) {
        if (fits[s].evaluations == 0 || !std::isfinite(fits[s].chi2)) continue;
        Minimum m;
        m.orbit = prob.hidden(fits[s].x);
        m.chi2 = fits[s].chi2;
        m.converged = fits[s].converged;
        m.iterations = fits[s].iterations;
        const std::size_t c = order[s];
        m.start_distance_au = grid_a[c / static_cast<std::size_t>(nl)];
        m.start_longitude = two_pi * static_cast<double>(c % static_cast<std::size_t>(nl)) / nl;
        bool duplicate = false;
        for (Minimum& other : sol.minima) {
            const bool same = std::abs(other.orbit.semi_major_axis - m.orbit.semi_major_axis) < 0.02 * m.orbit.semi_major_axis &&
                              std::abs(wrap_pi(other.orbit.mean_longitude - m.orbit.mean_longitude)) < 2.0 * deg;
            if (same) {
                duplicate = true;
                if (m.chi2 < other.chi2) other = m;
            }
        }
        if (!duplicate) sol.minima.push_back(m);
    }
    std::sort(sol.minima.begin(), sol.minima.end(), [](const Minimum& a, const Minimum& b) { return a.chi2 < b.chi2; });
    sol.best = prob.hidden(best.x);
    sol.chi2 = best.chi2;
    std::size_t kept = 0;
    for (const FitObservation& f : setup.obs) kept += f.rejected ? 0 : 1;
    const std::size_t m_eff = 2 * kept + prob.priors;
    sol.dof = m_eff > prob.layout.size() ? m_eff - prob.layout.size() : 1;

    // ---- covariance ----
    Eigen::MatrixXd C = normal_inverse(best.jacobian);
    sol.covariance_scaled = setup.weights_estimated();
    if (sol.covariance_scaled) C *= sol.chi2 / static_cast<double>(sol.dof);
    const auto hp = static_cast<Eigen::Index>(prob.layout.planets);
    const auto hn = static_cast<Eigen::Index>(prob.layout.names.size());
    sol.hidden_covariance = C.block(hp, hp, hn, hn);
    sol.parameter_names = prob.layout.names;
    sol.mass_sigma = sol.best.mass * std::sqrt(C(prob.layout.i_logm, prob.layout.i_logm));
    if (prob.layout.i_a >= 0) {
        sol.distance_sigma_au = sol.best.semi_major_axis * std::sqrt(C(prob.layout.i_a, prob.layout.i_a));
        sol.mass_distance_correlation = C(prob.layout.i_logm, prob.layout.i_a) /
                                        std::sqrt(C(prob.layout.i_logm, prob.layout.i_logm) * C(prob.layout.i_a, prob.layout.i_a));
    }

    // ---- prediction: linear propagation ----
    report("predicting the position", 0.82);
    const ModelState best_state = prob.state(best.x);
    sol.prediction = predict_position(setup, best_state, epoch_year, o.track_years, o.track_step_years);
    Prediction& pr = sol.prediction;
    const double t_epoch = epoch_days(ex.brief, epoch_year);
    auto sky_at = [&](const Eigen::VectorXd& x, SkyPosition& out) {
        ++runs;
        const ModelRun run = run_model(setup, prob.state(x), t_epoch);
        if (!run.ok || !run.hidden_index) return false;
        out = model_apparent(setup, run, *run.hidden_index, t_epoch);
        return true;
    };
    const Eigen::VectorXd steps = prob.steps();
    Eigen::MatrixXd G(2, static_cast<Eigen::Index>(prob.layout.size()));
    for (Eigen::Index j = 0; j < G.cols(); ++j) {
        Eigen::VectorXd xp = best.x;
        xp[j] += steps[j];
        SkyPosition s;
        if (!sky_at(xp, s)) { G.col(j).setZero(); continue; }
        G(0, j) = wrap_pi(s.lon - pr.lon) * std::cos(pr.lat) / arcsec / steps[j];
        G(1, j) = (s.lat - pr.lat) / arcsec / steps[j];
    }
    const Eigen::Matrix2d sky_cov = G * C * G.transpose();
    pr.cov_ll = sky_cov(0, 0);
    pr.cov_lb = sky_cov(0, 1);
    pr.cov_bb = sky_cov(1, 1);
    ellipse_axes(pr.cov_ll, pr.cov_lb, pr.cov_bb, pr.semi_major_arcsec, pr.semi_minor_arcsec, pr.orientation_deg);

    // ---- prediction: sampling the covariance ----
    report("sampling the covariance", 0.86);
    Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> es(C);
    const Eigen::MatrixXd L = es.eigenvectors() * es.eigenvalues().cwiseMax(0.0).cwiseSqrt().asDiagonal();
    Rng rng = make_rng(o.seed, "solve-samples");
    std::vector<Eigen::VectorXd> xs;
    for (int k = 0; k < o.samples; ++k) {
        Eigen::VectorXd z(C.rows());
        for (Eigen::Index j = 0; j < z.size(); ++j) z[j] = normal(rng);
        xs.push_back(best.x + L * z);
    }
    std::vector<std::array<double, 2>> offsets(xs.size(), {NAN, NAN});
    std::atomic<std::size_t> sampled{0};
    parallel_for(xs.size(), threads, [&](std::size_t k) {
        if (cancelled()) return;
        SkyPosition s;
        if (sky_at(xs[k], s)) offsets[k] = {wrap_pi(s.lon - pr.lon) * std::cos(pr.lat) / arcsec, (s.lat - pr.lat) / arcsec};
        report("sampling the covariance", 0.86 + 0.14 * static_cast<double>(++sampled) / static_cast<double>(xs.size()));
    });
    if (cancelled()) throw std::runtime_error("cancelled");
    std::vector<double> radii;
    double sll = 0, slb = 0, sbb = 0;
    for (const auto& d : offsets) {
        if (!std::isfinite(d[0]) || !std::isfinite(d[1])) continue;
        radii.push_back(std::hypot(d[0], d[1]));
        sll += d[0] * d[0]; slb += d[0] * d[1]; sbb += d[1] * d[1];
    }
    pr.samples_used = static_cast<int>(radii.size());
    if (!radii.empty()) {
        std::sort(radii.begin(), radii.end());
        pr.radius90_arcsec = radii[std::min(radii.size() - 1, static_cast<std::size_t>(std::ceil(0.9 * static_cast<double>(radii.size()))) - 1)];
        const double n = static_cast<double>(radii.size());
        double o_unused = 0;
        ellipse_axes(sll / n, slb / n, sbb / n, pr.sampled_semi_major_arcsec, pr.sampled_semi_minor_arcsec, o_unused);
    }
    sol.model_runs = runs.load();
    report("done", 1.0);
    return sol;
}

// ---------------------------------------------------------------------------------------------------------
std::string solution_toml(const Solution& s) {
    toml::table root;
    toml::table head;
    head.insert("exercise_sha256", s.exercise_sha256);
    head.insert("scenario", s.scenario_name);
    head.insert("priors", s.priors);
    head.insert("chi2", s.chi2);
    head.insert("dof", static_cast<int64_t>(s.dof));
    head.insert("covariance_scaled", s.covariance_scaled);
    head.insert("spacing_rule_au", s.spacing_rule_au);
    head.insert("model_runs", static_cast<int64_t>(s.model_runs));
    root.insert("solution", head);
    toml::table h;
    const Elements el = s.best.elements();
    h.insert("mass", s.best.mass);
    h.insert("mass_sigma", s.mass_sigma);
    h.insert("a_au", s.best.semi_major_axis);
    h.insert("a_sigma_au", s.distance_sigma_au);
    h.insert("e", el.eccentricity);
    h.insert("varpi_deg", wrap_two_pi(el.ascending_node + el.arg_periapsis) / deg);
    h.insert("mean_longitude_deg", wrap_two_pi(s.best.mean_longitude) / deg);
    h.insert("i_deg", el.inclination / deg);
    h.insert("node_deg", el.ascending_node / deg);
    h.insert("mass_distance_correlation", s.mass_distance_correlation);
    root.insert("hidden", h);
    const Prediction& p = s.prediction;
    toml::table pt;
    pt.insert("epoch_year", p.epoch_year);
    pt.insert("lon_deg", p.lon / deg);
    pt.insert("lat_deg", p.lat / deg);
    pt.insert("distance_au", p.distance_au);
    pt.insert("cov_lon_lon_arcsec2", p.cov_ll);
    pt.insert("cov_lon_lat_arcsec2", p.cov_lb);
    pt.insert("cov_lat_lat_arcsec2", p.cov_bb);
    pt.insert("semi_major_arcmin", p.semi_major_arcsec / 60.0);
    pt.insert("semi_minor_arcmin", p.semi_minor_arcsec / 60.0);
    pt.insert("orientation_deg", p.orientation_deg);
    pt.insert("sampled_semi_major_arcmin", p.sampled_semi_major_arcsec / 60.0);
    pt.insert("sampled_semi_minor_arcmin", p.sampled_semi_minor_arcsec / 60.0);
    pt.insert("radius90_arcmin", p.radius90_arcsec / 60.0);
    pt.insert("samples", static_cast<int64_t>(p.samples_used));
    toml::array years, lons, lats;
    for (const TrackPoint& t : p.track) {
        years.push_back(t.year);
        lons.push_back(t.lon / deg);
        lats.push_back(t.lat / deg);
    }
    pt.insert("track_year", years);
    pt.insert("track_lon_deg", lons);
    pt.insert("track_lat_deg", lats);
    root.insert("prediction", pt);
    toml::array mins;
    for (const Minimum& m : s.minima) {
        toml::table t;
        t.insert("a_au", m.orbit.semi_major_axis);
        t.insert("mean_longitude_deg", wrap_two_pi(m.orbit.mean_longitude) / deg);
        t.insert("mass", m.orbit.mass);
        t.insert("e", std::hypot(m.orbit.k, m.orbit.h));
        t.insert("chi2", m.chi2);
        t.insert("converged", m.converged);
        mins.push_back(t);
    }
    root.insert("minimum", mins);
    std::ostringstream ss;
    ss << "# Wayward solution: the hidden body inferred from the observations, and its predicted place.\n" << root << "\n";
    return ss.str();
}

Solution load_solution(const std::string& path) {
    const toml::table root_t = detail::parse_toml(detail::read_text_file(path), path);
    detail::TableReader root(root_t, path, "");
    Solution s;
    const toml::table* head = root.table("solution");
    if (!head) throw InputError(path, 1, "solution", "the [solution] table is missing: is this a Wayward solution?");
    {
        detail::TableReader r(*head, path, "solution");
        s.exercise_sha256 = r.required_string("exercise_sha256");
        s.scenario_name = r.string("scenario").value_or("");
        s.priors = r.string("priors").value_or("");
        s.chi2 = r.number_or("chi2", 0.0);
        s.dof = static_cast<std::size_t>(r.integer_in("dof", 0, 1LL << 40).value_or(0));
        s.covariance_scaled = r.boolean("covariance_scaled").value_or(false);
        s.spacing_rule_au = r.number_or("spacing_rule_au", 0.0);
        s.model_runs = static_cast<int>(r.integer_in("model_runs", 0, 1LL << 30).value_or(0));
        r.finish();
    }
    if (const toml::table* h = root.table("hidden")) {
        detail::TableReader r(*h, path, "hidden");
        s.best.mass = r.number_or("mass", 0.0);
        s.mass_sigma = r.number_or("mass_sigma", 0.0);
        s.best.semi_major_axis = r.number_or("a_au", 0.0);
        s.distance_sigma_au = r.number_or("a_sigma_au", 0.0);
        const double e = r.number_or("e", 0.0), varpi = r.number_or("varpi_deg", 0.0) * deg;
        s.best.k = e * std::cos(varpi);
        s.best.h = e * std::sin(varpi);
        s.best.mean_longitude = r.number_or("mean_longitude_deg", 0.0) * deg;
        s.best.inclination = r.number_or("i_deg", 0.0) * deg;
        s.best.node = r.number_or("node_deg", 0.0) * deg;
        s.mass_distance_correlation = r.number_or("mass_distance_correlation", 0.0);
        r.finish();
    }
    const toml::table* pt = root.table("prediction");
    if (!pt) throw InputError(path, 1, "prediction", "the [prediction] table is missing");
    {
        detail::TableReader r(*pt, path, "prediction");
        Prediction& p = s.prediction;
        p.epoch_year = r.required_number("epoch_year");
        if (!(std::abs(p.epoch_year) <= 1e6)) r.fail("epoch_year", "must be a year within a million years of 0");
        p.lon = r.required_number("lon_deg") * deg;
        p.lat = r.required_number("lat_deg") * deg;
        if (!(p.lat >= -pi / 2 && p.lat <= pi / 2)) r.fail("lat_deg", "must be in [-90, 90]");
        p.distance_au = r.number_or("distance_au", 0.0);
        p.cov_ll = r.number_or("cov_lon_lon_arcsec2", 0.0);
        p.cov_lb = r.number_or("cov_lon_lat_arcsec2", 0.0);
        p.cov_bb = r.number_or("cov_lat_lat_arcsec2", 0.0);
        p.semi_major_arcsec = r.number_or("semi_major_arcmin", 0.0) * 60.0;
        p.semi_minor_arcsec = r.number_or("semi_minor_arcmin", 0.0) * 60.0;
        p.orientation_deg = r.number_or("orientation_deg", 0.0);
        p.sampled_semi_major_arcsec = r.number_or("sampled_semi_major_arcmin", 0.0) * 60.0;
        p.sampled_semi_minor_arcsec = r.number_or("sampled_semi_minor_arcmin", 0.0) * 60.0;
        p.radius90_arcsec = r.number_or("radius90_arcmin", 0.0) * 60.0;
        p.samples_used = static_cast<int>(r.integer_in("samples", 0, 1LL << 30).value_or(0));
        const auto ys = r.numbers("track_year").value_or(std::vector<double>{});
        const auto ls = r.numbers("track_lon_deg").value_or(std::vector<double>{});
        const auto bs = r.numbers("track_lat_deg").value_or(std::vector<double>{});
        if (ys.size() != ls.size() || ys.size() != bs.size()) r.fail("track_year", "the track arrays differ in length");
        // The luck curve steps along the track: years must rise by at least a thousandth of a year (the solver
        // writes quarter years), or scoring would loop without end; the length is bounded for the same reason.
        constexpr std::size_t max_track_points = 100000;
        if (ys.size() > max_track_points) r.fail("track_year", "holds more than " + std::to_string(max_track_points) + " points");
        for (std::size_t k = 1; k < ys.size(); ++k)
            if (!(ys[k] >= ys[k - 1] + 1e-3))
                r.fail("track_year", "the track's years must increase (by at least 0.001 year); entry " + std::to_string(k + 1) +
                                         " does not");
        for (std::size_t k = 0; k < ys.size(); ++k) {
            if (!(std::abs(ys[k]) <= 1e6)) r.fail("track_year", "holds a year more than a million years from 0");
            if (!(bs[k] >= -90.0 && bs[k] <= 90.0)) r.fail("track_lat_deg", "must be in [-90, 90]");
            p.track.push_back({ys[k], ls[k] * deg, bs[k] * deg});
        }
        r.finish();
    }
    for (const toml::table* t : root.tables("minimum")) {
        detail::TableReader r(*t, path, "minimum");
        Minimum m;
        m.orbit.semi_major_axis = r.number_or("a_au", 0.0);
        m.orbit.mean_longitude = r.number_or("mean_longitude_deg", 0.0) * deg;
        m.orbit.mass = r.number_or("mass", 0.0);
        const double e = r.number_or("e", 0.0);
        m.orbit.k = e;
        m.chi2 = r.number_or("chi2", 0.0);
        m.converged = r.boolean("converged").value_or(false);
        r.finish();
        s.minima.push_back(m);
    }
    root.finish();
    return s;
}

}  // namespace wayward
