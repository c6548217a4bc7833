/* ferrocirc — equilibrium magnetisation of a ferrofluid (Langevin) and its field integral.
 *
 * Rosensweig 1985, Ferrohydrodynamics, ch. 2: M = Ms L(xi), L = coth xi - 1/xi,
 * xi = mu0 m H/(kB T) = H/hs. From measured Ms and initial susceptibility chi0 the effective
 * particle moment gives hs = kB T/(mu0 m) = Ms/(3 chi0) (chi0 = mu0 m Ms/(3 kB T)).
 * Phi(H) = int_0^H M dH' = Ms hs ln(sinh xi/xi), since d/dxi ln(sinh xi/xi) = L(xi).
 * Numerics (physics reference, section 4): series below xi = 1e-2, the asymptotic form with
 * log1p above xi = 20, so that neither cancels. Units: A/m, Pa. */
#include <math.h>

#include "valve_int.h"

double fci_langevin(double xi)
{
  double a = fabs(xi);
  if (a < 1e-2) {
    double x2 = xi * xi; /* xi/3 - xi^3/45 + 2 xi^5/945 */
    return xi * (1.0 / 3.0 - x2 / 45.0 + 2.0 * x2 * x2 / 945.0);
  }
  return 1.0 / tanh(xi) - 1.0 / xi;
}

double fci_lnsinhc(double xi)
{
  double a = fabs(xi);
  if (a < 1e-2) {
    double x2 = a * a; /* xi^2/6 - xi^4/180 + xi^6/2835 */
    return x2 * (1.0 / 6.0 - x2 / 180.0 + x2 * x2 / 2835.0);
  }
  if (a > 20.0) return a - log(2.0) - log(a) + log1p(-exp(-2.0 * a));
  return log(sinh(a) / a);
}

double fci_ferro_m(const fci_ferro *f, double h)
{
  return f->ms * fci_langevin(h / f->hs);
}

double fci_ferro_phi(const fci_ferro *f, double h)
{
  return f->ms * f->hs * fci_lnsinhc(h / f->hs);
}

double fci_ferro_internal(const fci_ferro *f, double h0)
{
  /* H + N M(H) = h0 has one root in [h0 - N Ms, h0] because the left side increases with H;
   * bisection is slow but cannot fail, and N = 0 (the default) skips it. */
  if (f->demag <= 0.0 || h0 <= 0.0) return h0;
  double lo = fmax(0.0, h0 - f->demag * f->ms), hi = h0;
  for (int it = 0; it < 80 && hi - lo > 1e-13 * h0; it++) {
    double mid = 0.5 * (lo + hi);
    if (mid + f->demag * fci_ferro_m(f, mid) > h0) hi = mid;
    else lo = mid;
  }
  return 0.5 * (lo + hi);
}

double fci_ferro_pressure(const fci_ferro *f, const double B[3])
{
  /* Ferrohydrodynamic Bernoulli equation and the magnetic normal traction at an interface
   * (Neuringer & Rosensweig 1964; Rosensweig 1985, ch. 5): the meniscus sees
   * mu0 Phi(H) + mu0 Mn^2/2, with M parallel to H and the meniscus normal along x. */
  double b = sqrt(B[0] * B[0] + B[1] * B[1] + B[2] * B[2]);
  if (b == 0.0) return 0.0;
  double h = fci_ferro_internal(f, b / FCI_MU0);
  double mn = fci_ferro_m(f, h) * fabs(B[0]) / b;
  return FCI_MU0 * (fci_ferro_phi(f, h) + 0.5 * mn * mn);
}
