/* ferrocirc — properties of liquid water as a function of temperature (SI).
 *
 *   density          Tanaka, Girard, Davis, Peuto & Bignell 2001, Metrologia 38:301 (CIPM
 *                    formula, air-free water at 101 325 Pa); valid 0–40 °C.
 *   viscosity        IAPWS R12-08 (2008), mu = mu0(T) mu1(T, rho), without the critical
 *                    enhancement mu2 (which is 1 to better than 1e-6 away from the critical point).
 *   surface tension  IAPWS R1-76(2014): sigma = 235.8 mN/m tau^1.256 (1 - 0.625 tau),
 *                    tau = 1 - T/647.096 K; valid from the triple point to the critical point.
 * The engine's default fluid is water at 37 °C (FC_WATER37_*, produced by these functions). */
#ifndef FERROCIRC_FLUID_H
#define FERROCIRC_FLUID_H

#include "ferrocirc/error.h"

#define FC_WATER_TMIN 273.15   /* [K] lower end of the density formula's range (0 °C) */
#define FC_WATER_TMAX 313.15   /* [K] upper end of the density formula's range (40 °C) */

/* Water at 37 °C = 310.15 K; equal to the functions below to 1e-9 (a test checks). */
#define FC_WATER37_T         310.15           /* [K] */
#define FC_WATER37_DENSITY   993.3289548      /* [kg/m^3] */
#define FC_WATER37_VISCOSITY 0.691303415e-3   /* [Pa s] */
#define FC_WATER37_TENSION   70.0814528e-3    /* [N/m] against air */

typedef struct fc_water {
  double density;    /* [kg/m^3] */
  double viscosity;  /* dynamic viscosity [Pa s] */
  double tension;    /* surface tension against air [N/m] */
} fc_water;

/* Density of air-free water at T [K] (Tanaka 2001); meaningful in [FC_WATER_TMIN, FC_WATER_TMAX]. */
double fc_water_density(double T);

/* Dynamic viscosity [Pa s] of water at T [K] and density rho [kg/m^3] (IAPWS R12-08, no
 * critical enhancement). */
double fc_water_viscosity(double T, double rho);

/* Surface tension of water against air [N/m] at T [K] (IAPWS R1-76(2014)); 0 at and above the
 * critical temperature 647.096 K. */
double fc_water_surface_tension(double T);

/* All three at T [K], with the density of fc_water_density. FC_EPARAM (message naming `path`)
 * if T is not finite or outside [FC_WATER_TMIN, FC_WATER_TMAX]. */
int fc_water_props(double T, fc_water *out, const char *path, fc_error *err);

#endif
