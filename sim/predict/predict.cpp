// The one predictor; see predict.hpp for the method.
#include "sim/predict/predict.hpp"

#include <algorithm>
#include <array>
#include <cmath>

#include "sim/base/errors.hpp"
#include "sim/base/parallel.hpp"
#include "sim/base/random.hpp"
#include "sim/base/units.hpp"

namespace wayward {

HiddenParameters HiddenParameters::make(std::size_t observed_planets, bool fitted_distance, bool eccentric, bool inclined) {
    HiddenParameters l;
    l.planets = 6 * observed_planets;
    auto add = [&l](const std::string& n) {
        l.names.push_back(n);
        return static_cast<int>(l.planets + l.names.size() - 1);
    };
    l.i_logm = add("log_mass");
    if (fitted_distance) l.i_a = add("log_a");  // log a: the mass-distance valley is straight in logs
    if (eccentric) { l.i_k = add("e_cos_varpi"); l.i_h = add("e_sin_varpi"); }
    l.i_lon = add("mean_longitude_rad");
    if (inclined) { l.i_ix = add("tilt_x_rad"); l.i_iy = add("tilt_y_rad"); }
    return l;
}

HiddenOrbit HiddenParameters::hidden(const Eigen::VectorXd& x) const {
    HiddenOrbit h;
    h.mass = std::exp(x[i_logm]);
    h.semi_major_axis = i_a >= 0 ? std::exp(x[i_a]) : fixed_a;
    if (i_k >= 0) { h.k = x[i_k]; h.h = x[i_h]; }
    h.mean_longitude = x[i_lon] - mean_motion(h.semi_major_axis, gm_star + gm_from_mass(h.mass)) * t_ref;
    if (i_ix >= 0) {
        h.inclination = std::hypot(x[i_ix], x[i_iy]);
        h.node = std::atan2(x[i_iy], x[i_ix]);
    }
    return h;
}

Eigen::VectorXd HiddenParameters::steps() const {
    Eigen::VectorXd s = Eigen::VectorXd::Ones(static_cast<Eigen::Index>(size()));
    s[i_logm] = 0.01;
    if (i_a >= 0) s[i_a] = 1e-3;
    if (i_k >= 0) s[i_k] = s[i_h] = 1e-3;
    s[i_lon] = 1e-3;
    if (i_ix >= 0) s[i_ix] = s[i_iy] = 1e-3;
    return s;
}

Eigen::VectorXd HiddenParameters::seed_steps() const {
    Eigen::VectorXd s = steps();
    s.tail(static_cast<Eigen::Index>(names.size())) *= 0.01;
    return s;
}

ModelState FittedModel::state(const ModelSetup& setup, const Eigen::VectorXd& x) const {
    ModelState s = reference;
    unpack_planets(setup, reference, x.head(static_cast<Eigen::Index>(layout.planets)), s);
    s.hidden = layout.hidden(x);
    return s;
}

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

namespace {

using Offset = std::array<double, 2>;  // arcsec, in lambda cos(beta) and beta, from the best fit

struct Epochs {
    std::vector<double> t;       // days from epoch 0
    double t_last = 0.0;         // latest epoch
    double t_track = 0.0;        // latest time any track reaches
};

Epochs epoch_times(const Brief& b, const std::vector<double>& epochs_year, double track_years) {
    const double span_end = b.span_years * julian_year_days;
    Epochs e;
    for (double y : epochs_year) {
        if (!(y >= b.epoch0_year && y <= b.epoch0_year + b.span_years))
            throw InputError("", 0, "epoch_year", "the epoch " + std::to_string(y) + " lies outside the exercise's integrable span (" +
                                                      std::to_string(b.epoch0_year) + " to " + std::to_string(b.epoch0_year + b.span_years) + ")");
        const double t = days_from_year(b.epoch0_year, y);
        e.t.push_back(t);
        e.t_last = std::max(e.t_last, t);
        e.t_track = std::max(e.t_track, std::max(t, std::min(span_end, t + track_years * julian_year_days)));
    }
    return e;
}

// Position, distance and track at each epoch from one model run that reaches every track's end.
void fill_positions(const ModelSetup& setup, const ModelRun& run, const std::vector<double>& epochs_year, const Epochs& e,
                    double track_years, double track_step_years, std::vector<Prediction>& out) {
    const Brief& b = setup.brief;
    const double span_end = b.span_years * julian_year_days;
    const double step = track_step_years * julian_year_days;
    for (std::size_t k = 0; k < out.size(); ++k) {
        Prediction& p = out[k];
        p.epoch_year = epochs_year[k];
        const double t = e.t[k];
        const SkyPosition sky = model_apparent(setup, run, *run.hidden_index, t);
        p.lon = sky.lon;
        p.lat = sky.lat;
        p.distance_au = sky.distance;
        const double lo = std::max(0.0, t - track_years * julian_year_days);
        const double hi = std::min(span_end, t + track_years * julian_year_days);
        for (double tt = lo; tt <= hi + 1e-9; tt += step) {
            const SkyPosition s = model_apparent(setup, run, *run.hidden_index, tt);
            p.track.push_back({decimal_year(b.epoch0_year, tt), s.lon, s.lat});
        }
    }
}

ModelRun run_best(const ModelSetup& setup, const ModelState& state, double t_end) {
    ModelRun run = run_model(setup, state, t_end);
    if (!run.ok() || !run.hidden_index) throw std::runtime_error("prediction: the model could not be integrated: " + run.problem());
    return run;
}

// Offsets of one parameter vector's sky positions at every epoch from the predictions. False if the run failed.
// With chi2 set and the fit able to weigh (FittedModel::chi2_of), the sample's chi2 from the same run too.
bool offsets_of(const ModelSetup& setup, const FittedModel& fit, const Eigen::VectorXd& x, const Epochs& e,
                const std::vector<Prediction>& at, std::vector<Offset>& d, const PredictHooks& hooks, double* chi2 = nullptr) {
    if (hooks.runs) ++*hooks.runs;
    d.assign(at.size(), {NAN, NAN});
    const bool weigh = chi2 && fit.chi2_of;
    const ModelRun r = run_model(setup, fit.state(setup, x), weigh ? std::max(e.t_last, setup.t_end) : e.t_last);
    if (!r.ok() || !r.hidden_index) return false;
    if (weigh && !fit.chi2_of(x, r, *chi2)) *chi2 = NAN;
    for (std::size_t k = 0; k < at.size(); ++k) {
        const SkyPosition s = model_apparent(setup, r, *r.hidden_index, e.t[k]);
        d[k] = {wrap_pi(s.lon - at[k].lon) * std::cos(at[k].lat) / arcsec, (s.lat - at[k].lat) / arcsec};
    }
    return true;
}

// G = d(sky)/d(parameters) at every epoch from the model's tangent map (one run). False if the run failed.
bool tangent_sky_jacobians(const ModelSetup& setup, const FittedModel& fit, const Epochs& e, const std::vector<Prediction>& at,
                           std::vector<Eigen::MatrixXd>& G, const PredictHooks& hooks) {
    if (hooks.runs) ++*hooks.runs;
    const std::vector<Eigen::Index> all = parameter_columns(static_cast<std::size_t>(fit.best.size()));
    const StateOf state_of = [&](const Eigen::VectorXd& x) { return fit.state(setup, x); };
    const ModelRun r = run_model_tangent(setup, state_of, fit.best, all, fit.layout.seed_steps(), e.t_last);
    if (!r.ok() || !r.hidden_index) return false;
    for (std::size_t k = 0; k < at.size(); ++k) {
        const SkyTangent d = apparent_tangent(setup, r, *r.hidden_index, e.t[k], setup.observer_helio_at(e.t[k]));
        // The offsets of offsets_of: (lon - lon0) cos(lat0) and lat - lat0, in arcsec.
        G[k].row(0) = d.d_lon * (std::cos(at[k].lat) / arcsec);
        G[k].row(1) = d.d_lat / arcsec;
    }
    return true;
}

// Linear propagation: G = d(sky)/d(parameters) by the tangent map (or forward differences where the model has
// none), then G C G^T at every epoch.
std::vector<Eigen::MatrixXd> propagate_linearly(const ModelSetup& setup, const FittedModel& fit, const Epochs& e,
                                                std::vector<Prediction>& out, const PredictHooks& hooks) {
    const Eigen::VectorXd steps = fit.layout.steps();
    const auto n = static_cast<Eigen::Index>(fit.best.size());
    std::vector<Eigen::MatrixXd> G(out.size(), Eigen::MatrixXd::Zero(2, n));
    const bool tangent = has_tangent_map(setup, static_cast<std::size_t>(n)) && tangent_sky_jacobians(setup, fit, e, out, G, hooks);
    for (Eigen::Index j = 0; j < n && !tangent; ++j) {
        Eigen::VectorXd xp = fit.best;
        xp[j] += steps[j];
        std::vector<Offset> d;
        if (!offsets_of(setup, fit, xp, e, out, d, hooks)) continue;
        for (std::size_t k = 0; k < out.size(); ++k) {
            G[k](0, j) = d[k][0] / steps[j];
            G[k](1, j) = d[k][1] / steps[j];
        }
    }
    for (std::size_t k = 0; k < out.size(); ++k) {
        const Eigen::Matrix2d cov = G[k] * fit.covariance * G[k].transpose();
        Prediction& p = out[k];
        p.cov_ll = cov(0, 0);
        p.cov_lb = cov(0, 1);
        p.cov_bb = cov(1, 1);
        ellipse_axes(p.cov_ll, p.cov_lb, p.cov_bb, p.semi_major_arcsec, p.semi_minor_arcsec, p.orientation_deg);
    }
    return G;
}

// The sampled ellipse and the 90 % radius of one epoch's sample offsets, each sample with its weight (the
// importance weights of sample_covariance; all equal where the map is linear).
void summarise_samples(const std::vector<std::vector<Offset>>& d, const std::vector<double>& weight, std::size_t k, Prediction& p) {
    std::vector<std::pair<double, double>> radii;  // (radius, weight)
    double sll = 0, slb = 0, sbb = 0, total = 0;
    for (std::size_t s = 0; s < d.size(); ++s) {
        const auto& dk = d[s];
        if (dk.size() <= k) continue;
        const Offset& v = dk[k];
        if (!std::isfinite(v[0]) || !std::isfinite(v[1]) || !(weight[s] >= 0.0)) continue;
        const double w = weight[s];
        radii.push_back({std::hypot(v[0], v[1]), w});
        // The exact inverse of offsets_of's offsets: the sample's own position.
        p.sample_lon.push_back(wrap_two_pi(p.lon + v[0] * arcsec / std::cos(p.lat)));
        p.sample_lat.push_back(p.lat + v[1] * arcsec);
        p.sample_weight.push_back(w);
        sll += w * v[0] * v[0]; slb += w * v[0] * v[1]; sbb += w * v[1] * v[1];
        total += w;
    }
    p.samples_used = static_cast<int>(radii.size());
    if (radii.empty() || !(total > 0.0)) return;
    for (double& w : p.sample_weight) w /= total;
    std::sort(radii.begin(), radii.end());
    // The smallest radius holding 90 % of the weight (with equal weights: the ceil(0.9 n)-th smallest radius).
    double acc = 0.0;
    p.radius90_arcsec = radii.back().first;
    for (const auto& [r, w] : radii) {
        acc += w / total;
        if (acc >= 0.9 - 1e-12) {
            p.radius90_arcsec = r;
            break;
        }
    }
    double unused = 0.0;
    ellipse_axes(sll / total, slb / total, sbb / total, p.sampled_semi_major_arcsec, p.sampled_semi_minor_arcsec, unused);
}

bool cancelled(const PredictHooks& hooks) { return hooks.cancel && hooks.cancel->load(); }

// The covariance samples' sky offsets. A pilot of the first samples is always run in full; where every pilot
// sample lies within linear_tolerance of the semi-minor axis of where G puts it, at every epoch, the map from
// parameters to sky is linear over the region the samples cover, and the rest are propagated by G (a matrix
// product instead of a model run each), all with equal weight. Otherwise all are run in full and weighted.
//
// Where the fit can profile (FittedModel::profile and chi2_of), the samples run in full are drawn in the hidden
// body's parameters theta alone, from their marginal Gaussian, with the planets' corrections solved for each
// (profile likelihood); each carries the importance weight exp(-(chi2 - chi2_best) / 2s + |z_theta|^2 / 2), the
// profile posterior over the proposal, which is one for every sample where the problem is linear. The planets'
// initial states enter very non-linearly over a long record (a change of 1e-5 in a velocity shifts a planet by
// degrees after a hundred orbits), so drawing them from the joint Gaussian gives samples the data rule out by
// thousands in chi2; profiling keeps the samples on the valley the data allow.
void sample_covariance(const ModelSetup& setup, const FittedModel& fit, const Epochs& e, const PredictOptions& o,
                       const std::vector<Eigen::MatrixXd>& G, std::vector<Prediction>& out, const PredictHooks& hooks) {
    const Eigen::MatrixXd& C = fit.covariance;
    Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> es(C);
    const Eigen::MatrixXd L = es.eigenvectors() * es.eigenvalues().cwiseMax(0.0).cwiseSqrt().asDiagonal();
    const bool profiled = static_cast<bool>(fit.profile) && static_cast<bool>(fit.chi2_of);
    const auto np = static_cast<Eigen::Index>(fit.layout.planets), nt = C.rows() - np;
    Eigen::MatrixXd Lt;
    if (profiled) {
        Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> et(C.bottomRightCorner(nt, nt));
        Lt = et.eigenvectors() * et.eigenvalues().cwiseMax(0.0).cwiseSqrt().asDiagonal();
    }
    Rng rng = make_rng(o.seed, "solve-samples");
    std::vector<Eigen::VectorXd> xs, zs;
    for (int k = 0; k < o.samples; ++k) {
        Eigen::VectorXd z(C.rows());
        for (Eigen::Index j = 0; j < z.size(); ++j) z[j] = normal(rng);
        xs.push_back(fit.best + L * z);
        zs.push_back(z);
    }
    std::vector<Eigen::VectorXd> run_x(xs.size());  // the vector each sample run in full was run at
    // Where the fit profiles, the linear picture of sample s is the same theta draw with the planets' corrections
    // linearised, dp = -K dtheta (K = Jp^+ J_theta): the same draws whether a sample is run or propagated.
    const bool linear_profile = profiled && fit.profile_gain.rows() == np && fit.profile_gain.cols() == nt;
    auto linear = [&](std::size_t s, std::vector<Offset>& d) {
        d.resize(out.size());
        Eigen::VectorXd x = run_x[s].size() ? run_x[s] : xs[s];
        if (!run_x[s].size() && linear_profile) {
            const Eigen::VectorXd dt = Lt * zs[s].tail(nt);
            x = fit.best;
            x.tail(nt) += dt;
            x.head(np) -= fit.profile_gain * dt;
        }
        for (std::size_t k = 0; k < out.size(); ++k) {
            const Eigen::Vector2d v = G[k] * (x - fit.best);
            d[k] = {v[0], v[1]};
        }
    };
    std::vector<std::vector<Offset>> d(xs.size());
    std::vector<double> chi2(xs.size(), NAN);
    std::atomic<std::size_t> sampled{0};
    auto run_in_full = [&](std::size_t from, std::size_t to) {
        parallel_for(to - from, o.threads ? o.threads : 1, [&](std::size_t i) {
            if (cancelled(hooks)) return;
            const std::size_t s = from + i;
            Eigen::VectorXd x = xs[s];
            if (profiled) {
                x = fit.best;
                x.tail(nt) += Lt * zs[s].tail(nt);
                if (hooks.runs) ++*hooks.runs;
                if (!fit.profile(x)) {
                    d[s].assign(out.size(), {NAN, NAN});
                    return;
                }
            }
            run_x[s] = x;
            offsets_of(setup, fit, x, e, out, d[s], hooks, &chi2[s]);
            if (hooks.report)
                hooks.report("sampling the covariance", 0.2 + 0.8 * static_cast<double>(++sampled) / static_cast<double>(xs.size()));
        });
        if (cancelled(hooks)) throw Cancelled();
    };
    const std::size_t pilot = o.linear_tolerance > 0.0 ? std::min(xs.size(), static_cast<std::size_t>(std::max(0, o.pilot_samples))) : xs.size();
    run_in_full(0, pilot);
    double worst = 0.0;  // the pilot's largest departure from linear, in units of the semi-minor axis
    bool complete = true;
    for (std::size_t s = 0; s < pilot; ++s) {
        std::vector<Offset> lin;
        linear(s, lin);
        for (std::size_t k = 0; k < out.size(); ++k) {
            if (d[s].size() <= k || !std::isfinite(d[s][k][0]) || !std::isfinite(d[s][k][1])) {
                complete = false;  // a run that failed is itself a sign the region is not a small linear patch
                continue;
            }
            const double minor = std::max(out[k].semi_minor_arcsec, 1e-9);
            worst = std::max(worst, std::hypot(d[s][k][0] - lin[k][0], d[s][k][1] - lin[k][1]) / minor);
        }
    }
    const bool linear_holds = pilot < xs.size() && complete && worst <= o.linear_tolerance;
    std::vector<double> weight(xs.size(), 1.0);
    if (linear_holds) {
        for (std::size_t s = pilot; s < xs.size(); ++s) linear(s, d[s]);
    } else {
        run_in_full(pilot, xs.size());
        if (fit.chi2_of) {
            std::vector<double> lw(xs.size(), -INFINITY);
            double top = -INFINITY;
            for (std::size_t s = 0; s < xs.size(); ++s) {
                if (!std::isfinite(chi2[s])) continue;  // a sample the model could not run: no weight
                const double z2 = profiled ? zs[s].tail(nt).squaredNorm() : zs[s].squaredNorm();
                lw[s] = -0.5 * (chi2[s] - fit.chi2_best) / fit.chi2_scale + 0.5 * z2;
                top = std::max(top, lw[s]);
            }
            double sum = 0.0, sum2 = 0.0;
            for (std::size_t s = 0; s < xs.size(); ++s) {
                weight[s] = std::isfinite(top) && std::isfinite(lw[s]) ? std::exp(lw[s] - top) : 0.0;
                sum += weight[s];
                sum2 += weight[s] * weight[s];
            }
            const double ess = sum2 > 0.0 ? sum * sum / sum2 : 0.0;
            for (Prediction& p : out) p.effective_samples = ess;
        }
    }
    for (std::size_t k = 0; k < out.size(); ++k) {
        summarise_samples(d, weight, k, out[k]);
        out[k].samples_in_full = static_cast<int>(linear_holds ? pilot : xs.size());
        out[k].pilot_departure = pilot > 0 ? worst : NAN;
    }
}

}  // namespace

std::vector<Prediction> predict(const ModelSetup& setup, const FittedModel& fit, const std::vector<double>& epochs_year,
                                const PredictOptions& o, const PredictHooks& hooks) {
    if (epochs_year.empty()) return {};
    if (fit.covariance.rows() != fit.best.size() || fit.covariance.cols() != fit.best.size() ||
        fit.best.size() != static_cast<Eigen::Index>(fit.layout.size()))
        throw std::runtime_error("predict: the fitted model's covariance does not match its parameters");
    const Epochs e = epoch_times(setup.brief, epochs_year, o.track_years);
    if (hooks.report) hooks.report("predicting the position", 0.0);
    std::vector<Prediction> out(epochs_year.size());
    fill_positions(setup, run_best(setup, fit.state(setup, fit.best), e.t_track), epochs_year, e, o.track_years,
                   o.track_step_years, out);
    const std::vector<Eigen::MatrixXd> G = propagate_linearly(setup, fit, e, out, hooks);
    if (o.samples > 0) {
        if (hooks.report) hooks.report("sampling the covariance", 0.2);
        sample_covariance(setup, fit, e, o, G, out, hooks);
    }
    return out;
}

Prediction predict_position(const ModelSetup& setup, const ModelState& state, double epoch_year, double track_years,
                            double track_step_years) {
    const std::vector<double> years{epoch_year};
    const Epochs e = epoch_times(setup.brief, years, track_years);
    std::vector<Prediction> out(1);
    fill_positions(setup, run_best(setup, state, e.t_track), years, e, track_years, track_step_years, out);
    return out.front();
}

}  // namespace wayward
