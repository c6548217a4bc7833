/* ferrocirc — a design sampled onto a line problem along the channel.
 *
 * The plug statics (plug_statics.c) need, at every grid node along x: the channel volume up to
 * the node, the meniscus potential Psi = mu0 Phi(H) + mu0 Mn^2/2 - (rho_ff - rho_carrier) g z
 * along each path through the cross-section and its cross-section mean, and the Young-Laplace
 * jump of a meniscus there. Paths sit on an np x np grid in normalised coordinates
 * (y/(w/2) in [-1, 1], z/h in [0, 1]), walls and corners included, so they follow steps and
 * tapers; the mean uses Simpson's rule on the same grid (exact for the linear gravity term).
 * Tapered walls tilt the apparent contact angle by the wall angle beta: theta - beta for a
 * meniscus with the plug on its +x side where the channel widens towards +x, theta + beta with
 * the plug on its -x side (the classic diverging-capillary correction). Units: SI. */
#include <math.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "valve_int.h"

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

static double section_volume(const fci_section *s, double x)
{
  /* int_0^L (w0 + a u)(h0 + b u) du, exact for linear tapers of width and height. */
  double L = x - s->x0, len = s->x1 - s->x0;
  double a = (s->w1 - s->w0) / len, b = (s->h1 - s->h0) / len;
  return s->w0 * s->h0 * L + 0.5 * (s->w0 * b + s->h0 * a) * L * L + a * b * L * L * L / 3.0;
}

static double volume_to(const fc_valve_design *d, double x)
{
  double v = 0.0;
  for (int i = 0; i < d->nSec; i++) {
    const fci_section *s = &d->sec[i];
    if (x >= s->x1) v += section_volume(s, s->x1);
    else {
      if (x > s->x0) v += section_volume(s, x);
      break;
    }
  }
  return v;
}

static double clamp_angle(double t)
{
  return t < 0.0 ? 0.0 : (t > M_PI ? M_PI : t);
}

/* Pi for a meniscus in a section of shape (w, h, dw/dx, dh/dx): side = +1 plug on its +x side,
 * -1 on its -x side. */
static double cap_at(const fc_valve_design *d, const double shape[4], double theta, int side)
{
  double bw = atan(0.5 * shape[2]), bh = atan(shape[3]);
  double tw = clamp_angle(theta - side * bw), th = clamp_angle(theta - side * bh);
  return fci_young_laplace(d->gamma, shape[0], shape[1], th, theta, tw, tw);
}

/* Section shape (w, h, dw/dx, dh/dx) at x; at a node exactly on a section boundary both sides
 * are returned and averaged by the caller, so that a mirrored design samples mirrored values. */
static int node_shapes(const fc_valve_design *d, double x, const fci_section *sec[2],
                       double shape[2][4])
{
  int n = 0;
  for (int i = 0; i < d->nSec && n < 2; i++) {
    const fci_section *s = &d->sec[i];
    double tol = 1e-12 * (fabs(s->x0) + fabs(s->x1));
    if (x < s->x0 - tol || x > s->x1 + tol) continue;
    double len = s->x1 - s->x0, u = fmin(1.0, fmax(0.0, (x - s->x0) / len));
    sec[n] = s;
    shape[n][0] = s->w0 + u * (s->w1 - s->w0);
    shape[n][1] = s->h0 + u * (s->h1 - s->h0);
    shape[n][2] = (s->w1 - s->w0) / len;
    shape[n][3] = (s->h1 - s->h0) / len;
    n++;
  }
  return n;
}

static int line_alloc(fci_line *L, int n, int np)
{
  memset(L, 0, sizeof *L);
  L->n = n;
  L->np = np;
  size_t nn = (size_t)n;
  L->x = fc_calloc(nn, sizeof(double));
  L->vol = fc_calloc(nn, sizeof(double));
  L->pbar = fc_calloc(nn, sizeof(double));
  L->ppath = fc_calloc(nn * (size_t)np, sizeof(double));
  L->py = fc_calloc((size_t)np, sizeof(double));
  L->pz = fc_calloc((size_t)np, sizeof(double));
  int ok = L->x && L->vol && L->pbar && L->ppath && L->py && L->pz;
  for (int k = 0; k < 3; k++) {
    L->c1[k] = fc_calloc(nn, sizeof(double));
    L->c2[k] = fc_calloc(nn, sizeof(double));
    ok = ok && L->c1[k] && L->c2[k];
  }
  return ok;
}

void fci_line_free(fci_line *L)
{
  if (!L) return;
  fc_free(L->x);
  fc_free(L->vol);
  fc_free(L->pbar);
  fc_free(L->ppath);
  fc_free(L->py);
  fc_free(L->pz);
  for (int k = 0; k < 3; k++) {
    fc_free(L->c1[k]);
    fc_free(L->c2[k]);
  }
  memset(L, 0, sizeof *L);
}

/* Simpson weight of node i of m (odd), normalised so the weights sum to 1. */
static double simpson_w(int i, int m)
{
  double w = (i == 0 || i == m - 1) ? 1.0 : (i % 2 ? 4.0 : 2.0);
  return w / (3.0 * (m - 1));
}

static void fill_node(const fc_valve_design *d, fci_line *L, int j)
{
  const fci_section *sec[2];
  double shape[2][4], drho = d->rho_ff - d->rho_carrier, mean = 0.0;
  int m = d->nPath, ns = node_shapes(d, L->x[j], sec, shape);
  for (int p = 0; p < L->np; p++) L->ppath[(size_t)p * (size_t)L->n + (size_t)j] = 0.0;
  for (int k = 0; k < 3; k++) L->c1[k][j] = L->c2[k][j] = 0.0;
  for (int s = 0; s < ns; s++) {
    for (int iy = 0; iy < m; iy++)
      for (int iz = 0; iz < m; iz++) {
        int p = iy * m + iz;
        double r[3] = {L->x[j], 0.5 * shape[s][0] * L->py[p], shape[s][1] * L->pz[p]}, B[3];
        fc_valve_field(d, r, B);
        double psi = (fci_ferro_pressure(&d->ff, B) - drho * FCI_GN * r[2]) / ns;
        L->ppath[(size_t)p * (size_t)L->n + (size_t)j] += psi;
        mean += simpson_w(iy, m) * simpson_w(iz, m) * psi;
      }
    double c = 0.5 * (cos(sec[s]->th_rec) + cos(sec[s]->th_adv));
    double th[3] = {sec[s]->th_rec, sec[s]->th_adv, acos(c)};
    for (int k = 0; k < 3; k++) {
      L->c1[k][j] += cap_at(d, shape[s], th[k], +1) / ns;
      L->c2[k][j] += cap_at(d, shape[s], th[k], -1) / ns;
    }
  }
  L->pbar[j] = mean;
}

int fci_line_build(const fc_valve_design *d, fci_line *L, fc_error *err)
{
  int n = d->nPoint, m = d->nPath;
  if (!line_alloc(L, n, m * m)) {
    fci_line_free(L);
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory for the valve grid");
  }
  double x0 = d->sec[0].x0, x1 = d->sec[d->nSec - 1].x1;
  double mid = 0.5 * (x0 + x1), dx = (x1 - x0) / (n - 1);
  for (int iy = 0; iy < m; iy++)
    for (int iz = 0; iz < m; iz++) {
      L->py[iy * m + iz] = -1.0 + 2.0 * iy / (m - 1);
      L->pz[iy * m + iz] = (double)iz / (m - 1);
    }
  for (int j = 0; j < n; j++) {
    /* Nodes symmetric about the channel middle, so a mirror-symmetric design samples
     * mirror-symmetric values. */
    L->x[j] = (j == 0) ? x0 : (j == n - 1) ? x1 : mid + (j - 0.5 * (n - 1)) * dx;
    L->vol[j] = volume_to(d, L->x[j]);
    fill_node(d, L, j);
  }
  return FC_OK;
}

int fci_line_mirror(const fci_line *L, fci_line *out, fc_error *err)
{
  int n = L->n, np = L->np;
  if (!line_alloc(out, n, np)) {
    fci_line_free(out);
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory for the valve grid");
  }
  memcpy(out->py, L->py, (size_t)np * sizeof(double));
  memcpy(out->pz, L->pz, (size_t)np * sizeof(double));
  for (int j = 0; j < n; j++) {
    int r = n - 1 - j;
    out->x[j] = -L->x[r];
    out->vol[j] = L->vol[n - 1] - L->vol[r];
    out->pbar[j] = L->pbar[r];
    for (int p = 0; p < np; p++)
      out->ppath[(size_t)p * (size_t)n + (size_t)j] = L->ppath[(size_t)p * (size_t)n + (size_t)r];
    for (int k = 0; k < 3; k++) {
      out->c1[k][j] = L->c2[k][r]; /* the plug side of each meniscus flips with x */
      out->c2[k][j] = L->c1[k][r];
    }
  }
  return FC_OK;
}
