// How bright a body looks and how likely one exposure is to record it. Absolute magnitude from size and
// geometric albedo, D = 1329 km / sqrt(p) 10^(-H/5) (standard relation); apparent magnitude with the H,G phase
// law of Bowell et al. (1989, in Asteroids II; IAU Commission 20, 1985); atmospheric extinction proportional to
// airmass (about 0.15-0.25 mag per airmass in the visual at a good site, common practice); and a logistic
// detection efficiency around the limit, eta(m) = eta_max / (1 + exp((m - m50) / w)) (common practice in
// characterising surveys of faint moving bodies). Units: magnitudes, au, km, radians.
#pragma once

namespace wayward {

// H from the diameter in km and the geometric albedo.
double absolute_magnitude(double diameter_km, double geometric_albedo);

// Phase angle (radians) at the body from its distances to the star (r), to the observer (delta), and the
// star-observer distance (R), by the cosine rule.
double phase_angle(double r_au, double delta_au, double star_observer_au);

// V = H + 5 log10(r delta) - 2.5 log10((1 - G) Phi1 + G Phi2), Phi_i = exp(-A_i tan(alpha/2)^B_i),
// A = (3.33, 1.87), B = (0.63, 1.22).
double apparent_magnitude(double h, double g, double r_au, double delta_au, double phase);

// The faintest magnitude recorded half the time at an airmass, given the zenith limit (which already includes
// one airmass of extinction) and the extinction coefficient.
double limit_at_airmass(double zenith_limit_mag, double extinction_mag_per_airmass, double airmass);

// Logistic detection efficiency.
double detection_efficiency(double mag, double limit_mag, double width_mag, double eta_max);

}  // namespace wayward
