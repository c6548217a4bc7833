/* ferrocirc — resistance of an open ferrofluid valve: the valve's own channel sections in series.
 *
 * Each section's resistance is the exact rectangular-duct result (Bruus 2008, Ch. 2: R = 12 mu L
 * / (w h^3 F(alpha))), integrated along x for tapers (lubrication approximation: locally fully
 * developed flow, valid for gentle tapers) by composite Simpson's rule on 32 panels. The
 * displaced plug is not counted: while the valve is open its holding pressure is the reseat
 * pressure of the switching law, and a measured open_resistance may override this value. */
#include "ferrocirc/hydraulics.h"
#include "valve_int.h"

static double section_r(const fci_section *s, double mu)
{
  const int n = 32;
  double L = s->x1 - s->x0, sum = 0;
  if (!(L > 0)) return 0;
  for (int k = 0; k <= n; k++) {
    double f = (double)k / n, w = s->w0 + f * (s->w1 - s->w0), h = s->h0 + f * (s->h1 - s->h0);
    double r = fc_hyd_rect_resistance(mu, 1.0, w, h); /* per unit length */
    sum += r * (k == 0 || k == n ? 1 : (k % 2 ? 4 : 2));
  }
  return sum * L / (3.0 * n);
}

double fc_valve_design_open_resistance(const fc_valve_design *d, double viscosity)
{
  double R = 0;
  for (int i = 0; i < d->nSec; i++) R += section_r(&d->sec[i], viscosity);
  return R;
}
