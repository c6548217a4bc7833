/* ferrocirc — water properties (see include/ferrocirc/fluid.h for sources and ranges). */
#include "ferrocirc/fluid.h"

#include <math.h>

double fc_water_density(double T)
{
  /* Tanaka et al. 2001, Metrologia 38:301, eq. (1) and Table 2 (air-free, t in °C). */
  const double a1 = -3.983035, a2 = 301.797, a3 = 522528.9, a4 = 69.34881, a5 = 999.974950;
  double t = T - 273.15;
  return a5 * (1.0 - (t + a1) * (t + a1) * (t + a2) / (a3 * (t + a4)));
}

double fc_water_viscosity(double T, double rho)
{
  /* IAPWS R12-08, eqs. (10)-(12), Tables 1 and 2; reference T* = 647.096 K, rho* = 322 kg/m^3,
   * mu* = 1e-6 Pa s. */
  static const double h0[4] = {1.67752, 2.20462, 0.6366564, -0.241605};
  static const double h1[6][7] = {
    {5.20094e-1, 2.22531e-1, -2.81378e-1, 1.61913e-1, -3.25372e-2, 0.0, 0.0},
    {8.50895e-2, 9.99115e-1, -9.06851e-1, 2.57399e-1, 0.0, 0.0, 0.0},
    {-1.08374, 1.88797, -7.72479e-1, 0.0, 0.0, 0.0, 0.0},
    {-2.89555e-1, 1.26613, -4.89837e-1, 0.0, 6.98452e-2, 0.0, -4.35673e-3},
    {0.0, 0.0, -2.57040e-1, 0.0, 0.0, 8.72102e-3, 0.0},
    {0.0, 1.20573e-1, 0.0, 0.0, 0.0, 0.0, -5.93264e-4},
  };
  double tb = T / 647.096, rb = rho / 322.0;
  double den = 0.0, tp = 1.0;
  for (int i = 0; i < 4; i++, tp *= tb) den += h0[i] / tp;
  double mu0 = 100.0 * sqrt(tb) / den;
  double x = 1.0 / tb - 1.0, y = rb - 1.0, sum = 0.0, xi = 1.0;
  for (int i = 0; i < 6; i++, xi *= x) {
    double yj = 1.0;
    for (int j = 0; j < 7; j++, yj *= y) sum += h1[i][j] * xi * yj;
  }
  return 1e-6 * mu0 * exp(rb * sum);
}

double fc_water_surface_tension(double T)
{
  /* IAPWS R1-76(2014), eq. (1): B = 235.8 mN/m, b = -0.625, mu = 1.256. */
  double tau = 1.0 - T / 647.096;
  if (tau <= 0.0) return 0.0;
  return 235.8e-3 * pow(tau, 1.256) * (1.0 - 0.625 * tau);
}

int fc_water_props(double T, fc_water *out, const char *path, fc_error *err)
{
  if (!isfinite(T) || T < FC_WATER_TMIN || T > FC_WATER_TMAX)
    return fc_fail(err, FC_EPARAM, path, "water properties are available from %.2f to %.2f K "
                   "(0 to 40 degC), got %g K", FC_WATER_TMIN, FC_WATER_TMAX, T);
  out->density = fc_water_density(T);
  out->viscosity = fc_water_viscosity(T, out->density);
  out->tension = fc_water_surface_tension(T);
  return FC_OK;
}
