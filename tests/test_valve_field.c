/* Tests of the permanent-magnet fields of the valve model (src/valve/magnet_field.c).
 * Check values: physics reference sec. 11 (IDs M1-M16) and independent paths written here: the
 * closed-form on-axis formulas, a numerical integration of the surface-charge model, a dipole. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>

#include "valve/valve_int.h"

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

#define REL(a, b, tol) assert_true(fabs((a) - (b)) <= (tol) * fabs(b))

static fci_magnet disc(double dia, double len, double br, double cz)
{
  fci_magnet m = {FCI_MAG_CYLINDER, {0.0, 0.0, cz}, {0.0, 0.0, 1.0}, br, 0.5 * dia, len,
                  {0.0, 0.0, 0.0}};
  return m;
}

static void field(const fci_magnet *m, int n, double x, double y, double z, double B[3])
{
  double r[3] = {x, y, z};
  B[0] = B[1] = B[2] = 0.0;
  for (int i = 0; i < n; i++) fci_magnet_add_field(&m[i], r, B);
}

/* Closed-form on-axis fields (physics reference sec. 6; Furlani 2001). */
static double disc_axis(double br, double R, double L, double z)
{
  return 0.5 * br * ((z + L) / sqrt(R * R + (z + L) * (z + L)) - z / sqrt(R * R + z * z));
}

static double block_axis(double br, double A, double B, double L, double z)
{
  double zl = z + L;
  return br / M_PI * (atan(A * B / (2 * z * sqrt(4 * z * z + A * A + B * B))) -
                      atan(A * B / (2 * zl * sqrt(4 * zl * zl + A * A + B * B))));
}

/* cel from its defining integral by composite Gauss-Legendre (independent of Bulirsch). */
static double cel_quad(double kc, double p, double c, double s)
{
  static const double gx[4] = {-0.8611363115940526, -0.3399810435848563, 0.3399810435848563,
                               0.8611363115940526};
  static const double gw[4] = {0.3478548451374538, 0.6521451548625461, 0.6521451548625461,
                               0.3478548451374538};
  int nseg = 400;
  double h = 0.5 * M_PI / nseg, sum = 0.0;
  for (int i = 0; i < nseg; i++)
    for (int k = 0; k < 4; k++) {
      double ph = (i + 0.5 + 0.5 * gx[k]) * h, c2 = cos(ph) * cos(ph), s2 = sin(ph) * sin(ph);
      sum += 0.5 * h * gw[k] * (c * c2 + s * s2) / ((c2 + p * s2) * sqrt(c2 + kc * kc * s2));
    }
  return sum;
}

static void test_cel(void **state)
{
  (void)state;
  double kc = sqrt(0.5);
  REL(fci_cel(kc, 1, 1, 1), 1.854074677, 1e-9);      /* M12: K(m = 0.5), A&S table 17.1 */
  REL(fci_cel(kc, 1, 1, kc * kc), 1.350643881, 1e-9); /* M12: E(m = 0.5) */
  double cases[][4] = {{0.3, 0.49, 1, 0.7}, {0.8, 1, 1, -1}, {0.05, 0.2, 1, 0.45}};
  for (int i = 0; i < 3; i++) /* the defining integral, Bulirsch 1969 */
    REL(fci_cel(cases[i][0], cases[i][1], cases[i][2], cases[i][3]),
        cel_quad(cases[i][0], cases[i][1], cases[i][2], cases[i][3]), 1e-10);
}

static void test_disc_on_axis(void **state)
{
  (void)state;
  fci_magnet m = disc(10e-3, 5e-3, 1.30, -2.5e-3); /* M1: 10 x 5 mm, Br 1.30 T, face at z=0 */
  double zs[] = {0, 0.5e-3, 1e-3, 2e-3, 3e-3, 5e-3, 10e-3};
  double want[] = {0.4596194, 0.4162836, 0.3718683, 0.2875228, 0.2167767, 0.1217583,
                   0.03526647}; /* M1, M2 [D] */
  for (int i = 0; i < 7; i++) {
    double B[3];
    field(&m, 1, 0.0, 0.0, zs[i] + (i == 0 ? 1e-15 : 0.0), B);
    REL(B[2], want[i], 1e-6);
    REL(B[2], disc_axis(1.30, 5e-3, 5e-3, zs[i]), 1e-10);
    assert_true(fabs(B[0]) < 1e-12 && fabs(B[1]) < 1e-12);
  }
  double h = 1e-6, zg[] = {1e-3, 3e-3}, g[] = {-88.464, -62.612}; /* M3 [D] */
  for (int i = 0; i < 2; i++) {
    double Bp[3], Bm[3];
    field(&m, 1, 0, 0, zg[i] + h, Bp);
    field(&m, 1, 0, 0, zg[i] - h, Bm);
    REL((Bp[2] - Bm[2]) / (2 * h), g[i], 1e-4);
  }
}

/* Surface-charge model of an axially magnetised disc (sigma = +-M on the end faces), integrated
 * numerically over both faces in polar coordinates: an independent path to B off axis. */
static void disc_charges(double br, double R, double L, const double r[3], double B[3])
{
  static const double gx[4] = {-0.8611363115940526, -0.3399810435848563, 0.3399810435848563,
                               0.8611363115940526};
  static const double gw[4] = {0.3478548451374538, 0.6521451548625461, 0.6521451548625461,
                               0.3478548451374538};
  int nr = 100, nphi = 160;
  B[0] = B[1] = B[2] = 0.0;
  for (int face = 0; face < 2; face++) {
    double zf = face ? 0.5 * L : -0.5 * L, sg = face ? 1.0 : -1.0;
    for (int i = 0; i < nr; i++)
      for (int a = 0; a < 4; a++) {
        double rr = R * (i + 0.5 + 0.5 * gx[a]) / nr, wr = 0.5 * gw[a] * R / nr;
        for (int j = 0; j < nphi; j++)
          for (int b = 0; b < 4; b++) {
            double ph = 2 * M_PI * (j + 0.5 + 0.5 * gx[b]) / nphi;
            double wp = 0.5 * gw[b] * 2 * M_PI / nphi;
            double d[3] = {r[0] - rr * cos(ph), r[1] - rr * sin(ph), r[2] - zf};
            double q = pow(d[0] * d[0] + d[1] * d[1] + d[2] * d[2], 1.5);
            for (int k = 0; k < 3; k++) B[k] += sg * br / (4 * M_PI) * d[k] / q * rr * wr * wp;
          }
      }
  }
}

static void test_disc_off_axis(void **state)
{
  (void)state;
  fci_magnet m = disc(10e-3, 5e-3, 1.30, -2.5e-3);
  double pts[][2] = {{2.5e-3, 1e-3}, {5e-3, 1e-3}, {7.5e-3, 1e-3}, {10e-3, 2e-3}};
  double want[][2] = {{0.1259385, 0.3592507}, {0.2932056, 0.1506556}, {0.1069822, -0.0256113},
                      {0.04023177, -0.01353978}}; /* M5-M8 [D, current loops] */
  for (int i = 0; i < 4; i++) {
    double B[3], Q[3], r[3] = {pts[i][0], 0.0, pts[i][1] + 2.5e-3};
    field(&m, 1, pts[i][0], 0.0, pts[i][1], B);
    REL(B[0], want[i][0], 1e-6);
    REL(B[2], want[i][1], 1e-6);
    disc_charges(1.30, 5e-3, 5e-3, r, Q); /* independent: surface-charge quadrature */
    REL(B[0], Q[0], 1e-6);
    REL(B[2], Q[2], 1e-6);
  }
  fci_magnet s = disc(1e-3, 1e-3, 1.0, 0.0); /* M15: 1 x 1 mm, Br 1 T, point (1,2,3) mm */
  double B[3];
  field(&s, 1, 1e-3, 2e-3, 3e-3, B);
  REL(B[0], 0.7714178e-3, 1e-6);
  REL(B[1], 1.542836e-3, 1e-6);
  REL(B[2], 1.103845e-3, 1e-6);
}

static void test_block(void **state)
{
  (void)state;
  fci_magnet b = {FCI_MAG_BLOCK, {0, 0, -2.5e-3}, {0, 0, 1}, 1.30, 0, 0, {10e-3, 10e-3, 5e-3}};
  double B[3];
  field(&b, 1, 0, 0, 1e-3, B);
  REL(B[2], 0.3601223, 1e-6); /* M4 [D] */
  REL(B[2], block_axis(1.30, 10e-3, 10e-3, 5e-3, 1e-3), 1e-10);
  field(&b, 1, 0, 0, 2e-3, B);
  REL(B[2], 0.2874769, 1e-6); /* M4 */
  field(&b, 1, 3e-3, 4e-3, 2e-3, B); /* M9 [D, quadrature] */
  REL(B[0], 0.08712946, 1e-6);
  REL(B[1], 0.1416942, 1e-6);
  REL(B[2], 0.1837400, 1e-6);
  field(&b, 1, 2.5e-3, 0, 1e-3, B); /* M10 */
  REL(B[0], 0.1135017, 1e-6);
  REL(B[2], 0.3528917, 1e-6);
  assert_true(fabs(B[1]) < 1e-12);
  field(&b, 1, 7.5e-3, 0, 1e-3, B);
  REL(B[0], 0.1311083, 1e-6);
  REL(B[2], -0.0316016, 1e-6);
  fci_magnet in = {FCI_MAG_BLOCK, {0, 0, 0}, {0, 0, 1}, 0.1, 0, 0, {1e-3, 2e-3, 3e-3}};
  field(&in, 1, 0, 0, 0, B);
  REL(B[2], 88.77488e-3, 1e-6); /* M11 [D, ext. code]: inside, Br added */
}

static void test_orientation(void **state)
{
  (void)state;
  /* The same disc with its axis along +x must give the z-axis field relabelled. */
  fci_magnet z = disc(10e-3, 5e-3, 1.30, 0.0), x = z;
  x.n[0] = 1.0;
  x.n[2] = 0.0;
  double Bz[3], Bx[3];
  field(&z, 1, 1e-3, 2e-3, 6e-3, Bz);
  field(&x, 1, 6e-3, 1e-3, 2e-3, Bx);
  REL(Bx[0], Bz[2], 1e-12);
  REL(Bx[1], Bz[0], 1e-12);
  REL(Bx[2], Bz[1], 1e-12);
  /* A block magnetised along y equals the z-magnetised block with axes relabelled cyclically. */
  fci_magnet bz = {FCI_MAG_BLOCK, {0, 0, 0}, {0, 0, 1}, 1.2, 0, 0, {2e-3, 3e-3, 4e-3}};
  fci_magnet by = {FCI_MAG_BLOCK, {0, 0, 0}, {0, 1, 0}, 1.2, 0, 0, {3e-3, 4e-3, 2e-3}};
  double B1[3], B2[3];
  field(&bz, 1, 1e-3, 2e-3, 5e-3, B1);
  field(&by, 1, 2e-3, 5e-3, 1e-3, B2); /* z-case (x, y, z) is the y-case (z, x, y) */
  REL(B2[1], B1[2], 1e-12);
  REL(B2[0], B1[1], 1e-12);
  REL(B2[2], B1[0], 1e-12);
}

static void dipole(double m, const double r[3], double B[3])
{
  /* Point dipole m along z: B = mu0/(4 pi) (3 (m.r) r / r^5 - m / r^3). */
  double rr = sqrt(r[0] * r[0] + r[1] * r[1] + r[2] * r[2]), k = FCI_MU0 / (4 * M_PI);
  for (int i = 0; i < 3; i++)
    B[i] = k * (3 * m * r[2] * r[i] / pow(rr, 5) - (i == 2 ? m / pow(rr, 3) : 0.0));
}

static void test_far_field(void **state)
{
  (void)state;
  fci_magnet c = disc(10e-3, 5e-3, 1.30, 0.0);
  fci_magnet b = {FCI_MAG_BLOCK, {0, 0, 0}, {0, 0, 1}, 1.30, 0, 0, {10e-3, 10e-3, 5e-3}};
  double vc = M_PI * 25e-6 * 5e-3, vb = 10e-3 * 10e-3 * 5e-3;
  double r[3] = {0.3, 0.2, 0.4}, B[3], D[3]; /* |r| = 0.54 m, 54 diameters: (a/r)^2 ~ 1e-4 */
  field(&c, 1, r[0], r[1], r[2], B);
  dipole(1.30 / FCI_MU0 * vc, r, D);
  for (int i = 0; i < 3; i++) assert_true(fabs(B[i] - D[i]) < 2e-4 * fabs(D[2]));
  field(&b, 1, r[0], r[1], r[2], B);
  dipole(1.30 / FCI_MU0 * vb, r, D);
  for (int i = 0; i < 3; i++) assert_true(fabs(B[i] - D[i]) < 2e-4 * fabs(D[2]));
}

static void test_superposition(void **state)
{
  (void)state;
  fci_magnet st[2] = {disc(10e-3, 5e-3, 1.30, -2.5e-3), disc(10e-3, 5e-3, 1.30, -7.5e-3)};
  double B[3];
  field(st, 2, 0, 0, 1e-3, B);
  REL(B[2], 0.4642627, 1e-6); /* M13 stacked */
  field(st, 2, 0, 0, 2e-3, B);
  REL(B[2], 0.3585961, 1e-6);
  double gaps[] = {2e-3, 3e-3, 4e-3}, want[] = {0.7437367, 0.6568589, 0.5750456}; /* M14 */
  for (int i = 0; i < 3; i++) {
    double g = gaps[i];
    fci_magnet sw[2] = {disc(10e-3, 5e-3, 1.30, -0.5 * g - 2.5e-3),
                        disc(10e-3, 5e-3, 1.30, 0.5 * g + 2.5e-3)};
    field(sw, 2, 0, 0, 0, B);
    REL(B[2], want[i], 1e-6);
    field(sw, 2, 3e-3, 0, 0, B); /* attracting sandwich: mid-gap B_rho cancels */
    assert_true(fabs(B[0]) < 1e-12);
  }
  fci_magnet m = disc(10e-3, 5e-3, 1.30, -2.5e-3); /* M16: 0.5 mT contour on the axis */
  double lo = 0.01, hi = 0.2;
  for (int i = 0; i < 100; i++) {
    double mid = 0.5 * (lo + hi);
    field(&m, 1, 0, 0, mid, B);
    if (B[2] > 0.5e-3) lo = mid;
    else hi = mid;
  }
  REL(lo, 51.92e-3, 1e-3);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(test_cel),           cmocka_unit_test(test_disc_on_axis),
    cmocka_unit_test(test_disc_off_axis), cmocka_unit_test(test_block),
    cmocka_unit_test(test_orientation),   cmocka_unit_test(test_far_field),
    cmocka_unit_test(test_superposition),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
