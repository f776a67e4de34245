// Scoring a prediction against the truth: the great-circle separation (Vincenty's formula), hit or miss
// against the field radius, the normalised (Mahalanobis) error where an ellipse was given, and the luck curve:
// the separation between the predicted and the true position over a window of epochs, with the fraction of the
// window inside the field radius and the epoch of closest agreement. The truth is integrated from the sealed
// answer key, opened only after its SHA-256 has been checked against the brief.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "sim/solve/solve.hpp"
#include "sim/score/truth_ephemeris.hpp"
#include "sim/truth/answer_key.hpp"

namespace wayward {

struct LuckPoint {
    double year = 0.0;
    double separation_arcmin = 0.0;
};

struct Score {
    double epoch_year = 0.0;
    double true_lon = 0.0, true_lat = 0.0;   // radians
    double predicted_lon = 0.0, predicted_lat = 0.0;
    double separation_arcmin = 0.0;
    double field_radius_deg = 0.0;
    bool hit = false;
    std::optional<double> mahalanobis;        // sqrt(d^T Sigma^-1 d) with d = (dlambda cos beta, dbeta)
    // Where the prediction states a region (its 2-D Gaussian): the truth's rank in it, the probability held by the
    // smallest region of the stated distribution that includes the truth, 1 - exp(-d^2 / 2); and the probability
    // the field (a circle of the brief's field radius at the predicted point) covered.
    std::optional<double> truth_rank, field_probability;
    // The same two by the solve's virtual bodies, where they describe the region (samples_describe_region): the
    // map the search and the HEALPix file use, estimated from draws of its density (standard error <= 0.01); or by
    // a stated HEALPix map (Prediction::stated_map), summed exactly over its pixels: the rank is the probability
    // of the pixels strictly denser than the truth's own pixel, the field's share that of the pixels whose centres
    // lie inside the field.
    std::optional<double> map_truth_rank, map_field_probability;
    std::vector<LuckPoint> luck;
    double luck_fraction_inside = 0.0;        // of the window, separation <= field radius
    double closest_year = 0.0, closest_arcmin = 0.0;
    bool luck_from_track = false;             // false: a single point held fixed over the window
    std::string hidden_name;
};

// The probability a centred 2-D Gaussian of covariance (cll, clb, cbb) (arcsec^2) puts inside a circle of radius
// r_arcsec about its centre.
double gaussian_mass_in_circle(double cll, double clb, double cbb, double r_arcsec);

// Scores a prediction (track optional) against the truth. The window defaults to +- 60 years, clipped to the span.
Score score_prediction(const Brief& brief, const AnswerKey& key, const Prediction& prediction, double window_years = 60.0);
// The same against a truth already integrated (integrate_truth), so several predictions share one integration.
Score score_prediction(const Brief& brief, const TruthEphemeris& truth, const Prediction& prediction, double window_years = 60.0);

}  // namespace wayward
