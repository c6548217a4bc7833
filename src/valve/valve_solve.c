/* ferrocirc — the public face of the valve model: field, profile and pressures of a design.
 * Forward pressures come from pushing the plug towards +x on the sampled line problem, reverse
 * ones from the mirrored problem (x -> -x), so a mirror-symmetric design gives equal values
 * in both directions by construction of the numbers, not by a special case. */
#include <math.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "valve_int.h"

void fc_valve_field(const fc_valve_design *d, const double r[3], double B[3])
{
  B[0] = B[1] = B[2] = 0.0;
  for (int i = 0; i < d->nMag; i++) fci_magnet_add_field(&d->mag[i], r, B);
}

int fc_valve_design_solve(const fc_valve_design *d, fc_valve_pressures *out, fc_error *err)
{
  fci_line L, M;
  fci_dir_result f, r;
  memset(out, 0, sizeof *out);
  memset(&M, 0, sizeof M);
  int rc = fci_line_build(d, &L, err);
  if (rc) return rc;
  rc = fci_line_mirror(&L, &M, err);
  if (!rc) rc = fci_statics_push(&L, d->volume, &f, err);
  if (!rc) rc = fci_statics_push(&M, d->volume, &r, err);
  if (!rc) {
    out->crack_forward = f.crack;
    out->crack_reverse = r.crack;
    out->reseat_forward = f.reseat;
    out->reseat_reverse = r.reseat;
    out->blowout_forward = f.blowout;
    out->blowout_reverse = r.blowout;
    out->blowout = fmin(f.blowout, r.blowout);
    out->x_rest = f.x_rest;
    out->x_crack_forward = f.x_crack;
    out->x_crack_reverse = -r.x_crack;
    out->expelled_forward = f.expelled;
    out->expelled_reverse = r.expelled;
    out->leak_y_forward = f.path >= 0 ? L.py[f.path] : NAN;
    out->leak_z_forward = f.path >= 0 ? L.pz[f.path] : NAN;
    out->leak_y_reverse = r.path >= 0 ? M.py[r.path] : NAN;
    out->leak_z_reverse = r.path >= 0 ? M.pz[r.path] : NAN;
    out->sealed = f.sealed && r.sealed;
    double pmax = 0.0, pend = 0.0;
    for (int j = 0; j < L.n; j++) pmax = fmax(pmax, L.pbar[j]);
    pend = fmax(fabs(L.pbar[0]), fabs(L.pbar[L.n - 1]));
    out->end_fraction = pmax > 0.0 ? pend / pmax : 0.0;
  }
  fci_line_free(&L);
  fci_line_free(&M);
  return rc;
}

static void profile_node(const fc_valve_design *d, double x, fc_valve_profile_point *p)
{
  int m = d->nPath;
  double w, h, dw, dh, B[3];
  fci_design_shape(d, x, &w, &h, &dw, &dh);
  p->x = x;
  p->width = w;
  p->height = h;
  p->b_min = p->p_min = INFINITY;
  p->b_max = p->p_max = -INFINITY;
  for (int iy = 0; iy < m; iy++)
    for (int iz = 0; iz < m; iz++) {
      double r[3] = {x, 0.5 * w * (-1.0 + 2.0 * iy / (m - 1)), h * iz / (m - 1)};
      fc_valve_field(d, r, B);
      double b = sqrt(B[0] * B[0] + B[1] * B[1] + B[2] * B[2]);
      double ps = fci_ferro_pressure(&d->ff, B);
      double wt = 1.0 / (m * m);
      p->b_min = fmin(p->b_min, b);
      p->b_max = fmax(p->b_max, b);
      p->p_min = fmin(p->p_min, ps);
      p->p_max = fmax(p->p_max, ps);
      p->b_mean += wt * b;
      p->p_mean += wt * ps;
      if (iy == m / 2 && iz == 0) p->b_floor = b;
      if (iy == m / 2 && iz == m / 2) p->b_centre = b;
      if (iy == m / 2 && iz == m - 1) p->b_roof = b;
    }
}

int fc_valve_design_profile(const fc_valve_design *d, fc_valve_profile_point **pts, size_t *n,
                            fc_error *err)
{
  int np = d->nPoint;
  double x0 = d->sec[0].x0, x1 = d->sec[d->nSec - 1].x1;
  fc_valve_profile_point *p = fc_calloc((size_t)np, sizeof *p);
  *pts = NULL;
  *n = 0;
  if (!p) return fc_fail(err, FC_ENOMEM, NULL, "out of memory for the profile");
  for (int j = 0; j < np; j++) profile_node(d, x0 + (x1 - x0) * j / (np - 1), &p[j]);
  *pts = p;
  *n = (size_t)np;
  return FC_OK;
}
