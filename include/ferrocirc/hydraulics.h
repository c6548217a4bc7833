/* ferrocirc — steady laminar hydraulics of channels, tubes and gas pockets (pure functions, SI).
 *
 * Every function is a closed formula or a converged series of a published result; the source is
 * named at each declaration. Assumptions throughout: Newtonian liquid, fully developed laminar
 * flow (Re well below ~100), no slip, rigid walls unless a compliance is asked for. Arguments must
 * be finite and > 0 where a length, viscosity, modulus or volume is meant (checked by assert: the
 * element parsers validate user input before calling). Units: m, Pa, Pa s, m^3/s, kg/m^3, Hz. */
#ifndef FERROCIRC_HYDRAULICS_H
#define FERROCIRC_HYDRAULICS_H

/* ---- Circular tube (Hagen–Poiseuille) ---- */

/* Resistance R = 8 mu L / (pi r^4) [Pa s/m^3] of a tube of radius r, length L. */
double fc_hyd_circle_resistance(double mu, double L, double r);
/* Wall shear stress tau_w = 4 mu Q / (pi r^3) [Pa] at flow Q. */
double fc_hyd_circle_shear(double mu, double Q, double r);

/* ---- Rectangular channel w x h (Bruus 2008, Theoretical Microfluidics, Ch. 2) ---- */

/* Aspect ratio alpha = min(w,h)/max(w,h), in (0, 1]. */
double fc_hyd_rect_alpha(double w, double h);
/* F(alpha) = 1 - (192 alpha/pi^5) sum_{n odd} tanh(n pi/(2 alpha))/n^5, summed until the tail
 * bound is below 1e-15. alpha > 1 is read as 1/alpha (the formula assumes h <= w). */
double fc_hyd_rect_F(double alpha);
/* Exact resistance R = 12 mu L / (w h^3 F(alpha)) with h the smaller side (swapped if needed). */
double fc_hyd_rect_resistance(double mu, double L, double w, double h);
/* Fanning friction factor times Reynolds number, fF Re = 24 / ((1+alpha)^2 F(alpha)). */
double fc_hyd_rect_fRe(double alpha);
/* Hydraulic diameter Dh = 4A/P = 2wh/(w+h) [m]. */
double fc_hyd_rect_dh(double w, double h);

/* Wall shear of a wide channel (parallel plates), tau_w = 6 mu Q / (w h^2), h the smaller side. */
double fc_hyd_plates_shear(double mu, double Q, double w, double h);
/* Factor by which the shear at the centre of the wide wall of a finite rectangle exceeds the
 * parallel-plate value: 8 S(alpha) / (pi^2 F(alpha)), S = sum_{n odd} (1 - sech(n pi/(2 alpha)))/n^2
 * (from the series velocity profile, Bruus 2008 Ch. 2). -> 1 as alpha -> 0. */
double fc_hyd_rect_centre_shear_factor(double alpha);

/* ---- Inertance (O(omega) term of the unsteady impedance) ---- */

#define FC_HYD_BETA_CIRCLE (4.0 / 3.0) /* beta of the Poiseuille parabola (exact) */

/* beta = A * integral(u^2 dA) / Q^2 of the steady rectangular profile, from its double Fourier
 * sine series with the inner sum in closed form; 6/5 as alpha -> 0, 1.378419 at alpha = 1. */
double fc_hyd_rect_beta(double alpha);
/* Inertance Lh = beta rho L / A [Pa s^2/m^3]. */
double fc_hyd_inertance(double beta, double rho, double L, double A);

/* ---- Compliances C = dV/dp [m^3/Pa] ---- */

/* Thick-walled tube, inner radius a, outer b, open ends (Lame; Timoshenko & Goodier, Theory of
 * Elasticity): C = (2 pi a^2 L / E) [(b^2 + a^2)/(b^2 - a^2) + nu]. Requires b > a. */
double fc_hyd_tube_compliance_thick(double a, double b, double E, double nu, double L);
/* Thin-walled tube, radius r, wall t << r, Poisson effect neglected: C = 2 pi r^3 L / (E t). */
double fc_hyd_tube_compliance_thin(double r, double t, double E, double L);

/* Isothermal ideal-gas pocket holding V0 at absolute pressure p0abs (Boyle): gas volume at the
 * absolute pressure pabs, V = V0 p0abs / pabs, and its compliance C = -dV/dp = V0 p0abs/pabs^2. */
double fc_hyd_gas_volume(double V0, double p0abs, double pabs);
double fc_hyd_gas_compliance(double V0, double p0abs, double pabs);
/* Liquid volume taken up as the gauge pressure rises from 0 to p with ambient pamb (absolute):
 * V_gas(pamb) - V_gas(p + pamb) = V0 p0abs p / (pamb (pamb + p)), written without cancellation;
 * its derivative in p is fc_hyd_gas_compliance at p + pamb. */
double fc_hyd_gas_stored(double V0, double p0abs, double pamb, double p);

/* ---- Dimensionless numbers ---- */

/* Womersley number alpha_W = r sqrt(omega rho / mu), omega = 2 pi f (Womersley 1955, J. Physiol.
 * 127:553); use r = Dh/2 for non-circular sections. */
double fc_hyd_womersley(double r, double f, double rho, double mu);

#endif
