/* ferrocirc — fields of uniformly magnetised permanent magnets, by superposition.
 *
 * Outside a magnet B = mu0 H; the relative permeability of NdFeB (about 1.05) is neglected, so
 * each magnet is a rigid uniform magnetisation M = Br/mu0 and fields add.
 *  - Axially magnetised cylinder, on and off axis: Derby & Olbert 2010, Am. J. Phys. 78:229
 *    (arXiv:0909.3880), in terms of Bulirsch's generalized complete elliptic integral
 *    cel(kc, p, c, s) (Bulirsch 1969, Numer. Math. 13:305). The formula gives B inside too.
 *  - Rectangular block magnetised along an edge: closed form of the surface-charge model
 *    (Furlani 2001, Permanent Magnet and Electromechanical Devices, ch. 4; Camacho & Sosa 2013,
 *    Rev. Mex. Fis. E 59:8); inside the block Br is added to the charge field. Any magnetisation
 *    direction is the sum of the three edge-aligned parts, each by a cyclic relabelling of axes.
 * Units: m, T. */
#include <math.h>

#include "valve_int.h"

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

double fci_cel(double kc, double p, double c, double s)
{
  /* Bulirsch's algorithm as given by Derby & Olbert 2010 (appendix); the AGM-like iteration
   * converges quadratically, so a stop at 1e-8 leaves an error far below double precision. */
  if (kc == 0.0) return NAN;
  const double errtol = 1e-8;
  double k = fabs(kc), pp = p, cc = c, ss = s, em = 1.0, f, g, q;
  if (p > 0.0) {
    pp = sqrt(p);
    ss = s / pp;
  } else {
    f = kc * kc;
    q = 1.0 - f;
    g = 1.0 - pp;
    f = f - pp;
    q = q * (ss - c * pp);
    pp = sqrt(f / g);
    cc = (c - ss) / g;
    ss = -q / (g * g * pp) + cc * pp;
  }
  f = cc;
  cc = cc + ss / pp;
  g = k / pp;
  ss = 2.0 * (ss + f * g);
  pp = g + pp;
  g = em;
  em = k + em;
  double kk = k;
  for (int it = 0; it < 60 && fabs(g - k) > g * errtol; it++) {
    k = 2.0 * sqrt(kk);
    kk = k * em;
    f = cc;
    cc = cc + ss / pp;
    g = kk / pp;
    ss = 2.0 * (ss + f * g);
    pp = g + pp;
    g = em;
    em = k + em;
  }
  return (M_PI / 2.0) * (ss + cc * em) / (em * (em + pp));
}

void fci_cylinder_local(double a, double b, double rho, double z, double br,
                        double *brho, double *bz)
{
  /* Derby & Olbert 2010, eqs. for B_rho and B_z with B0 = mu0 M / pi = Br / pi. Note
   * beta = z / sqrt(z^2 + (rho + a)^2), not z * alpha (which is off by the factor a). */
  double b0 = br / M_PI;
  double zp = z + b, zm = z - b;
  double sp = sqrt(zp * zp + (rho + a) * (rho + a));
  double sm = sqrt(zm * zm + (rho + a) * (rho + a));
  double alp = a / sp, alm = a / sm, bep = zp / sp, bem = zm / sm;
  double gam = (a - rho) / (a + rho);
  double kp = sqrt((zp * zp + (a - rho) * (a - rho)) / (zp * zp + (a + rho) * (a + rho)));
  double km = sqrt((zm * zm + (a - rho) * (a - rho)) / (zm * zm + (a + rho) * (a + rho)));
  *brho = b0 * (alp * fci_cel(kp, 1.0, 1.0, -1.0) - alm * fci_cel(km, 1.0, 1.0, -1.0));
  *bz = b0 * a / (a + rho) *
        (bep * fci_cel(kp, gam * gam, 1.0, gam) - bem * fci_cel(km, gam * gam, 1.0, gam));
}

/* ln(Y2 + R2) - ln(Y1 + R1) for Y1 > Y2 at fixed q = X^2 + Z^2; for Y < 0 the form
 * ln(Y + R) = ln(q) - ln(R - Y) avoids cancellation, and ln(q) drops out of the difference. */
static double ln_pair(double y1, double y2, double q)
{
  double r1 = sqrt(y1 * y1 + q), r2 = sqrt(y2 * y2 + q);
  if (y2 >= 0.0) return log(y2 + r2) - log(y1 + r1);
  if (y1 < 0.0) return log(r1 - y1) - log(r2 - y2);
  return log(q) - log(r2 - y2) - log(y1 + r1);
}

/* atan(X Y / (Z R)) with Z = 0 read as +0 (the limit just above a face plane). */
static double atan_term(double x, double y, double z)
{
  double xy = x * y;
  if (xy == 0.0) return 0.0;
  double r = sqrt(x * x + y * y + z * z);
  if (z == 0.0) return xy > 0.0 ? M_PI / 2.0 : -M_PI / 2.0;
  return atan(xy / (z * r));
}

void fci_block_z(const double h[3], const double p[3], double br, double B[3])
{
  /* Sum over the eight corners, s = (-1)^(i+j+k): Bx = -(Br/4pi) sum s ln(Y + R),
   * By = -(Br/4pi) sum s ln(X + R), Bz = (Br/4pi) sum s atan(X Y / (Z R)). */
  double X[2] = {p[0] + h[0], p[0] - h[0]}, Y[2] = {p[1] + h[1], p[1] - h[1]};
  double Z[2] = {p[2] + h[2], p[2] - h[2]};
  double sx = 0.0, sy = 0.0, sz = 0.0;
  for (int i = 0; i < 2; i++)
    for (int k = 0; k < 2; k++) {
      double s = ((i + k) % 2) ? -1.0 : 1.0;
      sx += s * ln_pair(Y[0], Y[1], X[i] * X[i] + Z[k] * Z[k]);
    }
  for (int j = 0; j < 2; j++)
    for (int k = 0; k < 2; k++) {
      double s = ((j + k) % 2) ? -1.0 : 1.0;
      sy += s * ln_pair(X[0], X[1], Y[j] * Y[j] + Z[k] * Z[k]);
    }
  for (int i = 0; i < 2; i++)
    for (int j = 0; j < 2; j++)
      for (int k = 0; k < 2; k++) {
        double s = ((i + j + k) % 2) ? -1.0 : 1.0;
        sz += s * atan_term(X[i], Y[j], Z[k]);
      }
  /* With 0-based corner indices the corner sign (-1)^(i+j+k) of the 1-based formula is
   * -(-1)^(i0+j0+k0); ln_pair(Y1, Y2) = ln(Y2+R2) - ln(Y1+R1) carries the j sign itself. */
  double c = br / (4.0 * M_PI);
  B[0] -= c * sx;
  B[1] -= c * sy;
  B[2] -= c * sz;
  if (fabs(p[0]) < h[0] && fabs(p[1]) < h[1] && fabs(p[2]) < h[2]) B[2] += br;
}

static void add_cylinder(const fci_magnet *m, const double r[3], double B[3])
{
  double d[3] = {r[0] - m->c[0], r[1] - m->c[1], r[2] - m->c[2]};
  double z = d[0] * m->n[0] + d[1] * m->n[1] + d[2] * m->n[2];
  double e[3] = {d[0] - z * m->n[0], d[1] - z * m->n[1], d[2] - z * m->n[2]};
  double rho = sqrt(e[0] * e[0] + e[1] * e[1] + e[2] * e[2]);
  double brho, bz;
  fci_cylinder_local(m->radius, 0.5 * m->length, rho, z, m->br, &brho, &bz);
  for (int i = 0; i < 3; i++) B[i] += bz * m->n[i] + (rho > 0.0 ? brho * e[i] / rho : 0.0);
}

static void add_block(const fci_magnet *m, const double r[3], double B[3])
{
  double d[3] = {r[0] - m->c[0], r[1] - m->c[1], r[2] - m->c[2]};
  for (int a = 0; a < 3; a++) {
    if (m->n[a] == 0.0) continue;
    int a1 = (a + 1) % 3, a2 = (a + 2) % 3; /* cyclic relabelling keeps the frame right-handed */
    double h[3] = {0.5 * m->size[a1], 0.5 * m->size[a2], 0.5 * m->size[a]};
    double p[3] = {d[a1], d[a2], d[a]}, b[3] = {0.0, 0.0, 0.0};
    fci_block_z(h, p, m->br * m->n[a], b);
    B[a1] += b[0];
    B[a2] += b[1];
    B[a] += b[2];
  }
}

void fci_magnet_add_field(const fci_magnet *m, const double r[3], double B[3])
{
  if (m->shape == FCI_MAG_CYLINDER) add_cylinder(m, r, B);
  else add_block(m, r, B);
}

double fci_magnet_half_z(const fci_magnet *m)
{
  if (m->shape == FCI_MAG_BLOCK) return 0.5 * m->size[2];
  double nz = fabs(m->n[2]);
  return 0.5 * m->length * nz + m->radius * sqrt(fmax(0.0, 1.0 - nz * nz));
}

void fci_magnet_box(const fci_magnet *m, double lo[3], double hi[3])
{
  for (int i = 0; i < 3; i++) {
    double half;
    if (m->shape == FCI_MAG_BLOCK) half = 0.5 * m->size[i];
    else {
      double ni = fabs(m->n[i]);
      half = 0.5 * m->length * ni + m->radius * sqrt(fmax(0.0, 1.0 - ni * ni));
    }
    lo[i] = m->c[i] - half;
    hi[i] = m->c[i] + half;
  }
}
