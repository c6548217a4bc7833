/* Tests of ferrofluid magnetisation and capillarity in the valve model (src/valve/ferrofluid.c,
 * capillary.c). Check values: physics reference sec. 11 (F1-F10, Y1-Y4), closed forms and a
 * numerical quadrature written here. */
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

/* The example fluid of F5: Md = 446 kA/m, d = 10 nm, phi = 0.05, T = 300 K. */
static fci_ferro example_fluid(double *m_out)
{
  double md = 446e3, d = 10e-9, phi = 0.05, T = 300.0;
  double m = md * M_PI * d * d * d / 6.0;
  fci_ferro f = {phi * md, 0.0, FCI_KB * T / (FCI_MU0 * m), 0.0};
  f.chi0 = f.ms / (3.0 * f.hs);
  if (m_out) *m_out = m;
  return f;
}

static void test_langevin(void **state)
{
  (void)state;
  REL(fci_langevin(0.1), 0.03331113, 1e-6); /* F1 [D] */
  REL(fci_lnsinhc(0.1), 0.001666111, 1e-6);
  REL(fci_langevin(1.0), 0.3130353, 1e-6); /* F2 */
  REL(fci_lnsinhc(1.0), 0.1614394, 1e-6);
  REL(fci_langevin(10.0), 0.9000000041, 1e-9); /* F3 */
  REL(fci_lnsinhc(10.0), 7.004268, 1e-6);
  REL(fci_langevin(100.0), 0.99, 1e-8); /* F4 */
  REL(fci_lnsinhc(100.0), 94.701683, 1e-8);
  /* The series and asymptotic branches join the closed forms without a step. */
  double xs[] = {1e-2, 20.0};
  for (int i = 0; i < 2; i++) {
    double a = xs[i] * (1 - 1e-12), b = xs[i] * (1 + 1e-12);
    REL(fci_langevin(a), fci_langevin(b), 1e-10);
    REL(fci_lnsinhc(a), fci_lnsinhc(b), 1e-10);
  }
  REL(fci_langevin(1e-3), 1e-3 / 3.0, 1e-6);      /* small xi: L ~ xi/3 */
  REL(fci_lnsinhc(1e-3), 1e-6 / 6.0, 1e-6);       /* ln(sinh xi/xi) ~ xi^2/6 */
  REL(fci_langevin(-2.0), -fci_langevin(2.0), 1e-15);
}

static void test_example_fluid(void **state)
{
  (void)state;
  double m;
  fci_ferro f = example_fluid(&m);
  REL(m, 2.335251e-19, 1e-6);              /* F5 [D] */
  REL(1.0 / f.hs, 7.084983e-5, 1e-6);
  REL(f.ms, 22300.0, 1e-6);
  REL(f.chi0, 0.5266504, 1e-6);
  double h1 = 0.1 / FCI_MU0, h3 = 0.3 / FCI_MU0;
  REL(h1 / f.hs, 5.638050, 1e-6);          /* F6 */
  REL(fci_ferro_m(&f, h1), 18345.30, 1e-6);
  REL(fci_ferro_phi(&f, h1) / h1, 12717.58, 1e-6);
  REL(FCI_MU0 * fci_ferro_phi(&f, h1), 1271.758, 1e-6);
  REL(h3 / f.hs, 16.91415, 1e-6);          /* F7 */
  REL(fci_ferro_m(&f, h3), 20981.58, 1e-6);
  REL(fci_ferro_phi(&f, h3) / h3, 17657.44, 1e-6);
  REL(FCI_MU0 * fci_ferro_phi(&f, h3), 5297.232, 1e-6);
}

static void test_phi_quadrature(void **state)
{
  (void)state;
  fci_ferro f = example_fluid(NULL);
  double hs[] = {1e3, 3e4, 0.1 / FCI_MU0, 0.7 / FCI_MU0};
  for (int i = 0; i < 4; i++) { /* composite Simpson of M(H') from 0 to H, independent path */
    int n = 20000;
    double h = hs[i], s = 0.0;
    for (int k = 0; k <= n; k++) {
      double w = (k == 0 || k == n) ? 1.0 : (k % 2 ? 4.0 : 2.0);
      s += w * fci_ferro_m(&f, h * k / n);
    }
    s *= h / (3.0 * n);
    REL(fci_ferro_phi(&f, h), s, 1e-10);
  }
}

static void test_saturated_limit(void **state)
{
  (void)state;
  fci_ferro f = example_fluid(NULL);
  double h3 = 0.3 / FCI_MU0;
  REL(FCI_MU0 * f.ms * h3, 6690.0, 1e-6);   /* F8: saturated estimate mu0 Ms H */
  assert_true(FCI_MU0 * fci_ferro_phi(&f, h3) < FCI_MU0 * f.ms * h3);
  /* Large xi: mu0 Phi -> mu0 Ms [H - hs ln(2 xi)] (physics reference sec. 4), and the
   * difference between two high fields tends to mu0 Ms dH. */
  double h = 50.0 / FCI_MU0, xi = h / f.hs;
  REL(fci_ferro_phi(&f, h), f.ms * (h - f.hs * log(2 * xi)), 1e-12);
  double ha = 20.0 / FCI_MU0, hb = 21.0 / FCI_MU0;
  REL(FCI_MU0 * (fci_ferro_phi(&f, hb) - fci_ferro_phi(&f, ha)), FCI_MU0 * f.ms * (hb - ha),
      1e-3);
  /* Low field: Phi -> chi0 H^2 / 2 */
  REL(fci_ferro_phi(&f, 10.0), 0.5 * f.chi0 * 100.0, 1e-6);
}

static void test_pressure_and_traction(void **state)
{
  (void)state;
  fci_ferro f = example_fluid(NULL);
  double Bz[3] = {0, 0, 0.1}, Bx[3] = {0.1, 0, 0};
  double m = 18345.30; /* F6: M at 0.1 T */
  REL(fci_ferro_pressure(&f, Bz), 1271.758, 1e-6);  /* tangential field: no traction */
  REL(fci_ferro_pressure(&f, Bx) - fci_ferro_pressure(&f, Bz), FCI_MU0 * m * m / 2, 1e-6);
  REL(FCI_MU0 * 22300.0 * 22300.0 / 2, 312.4565, 1e-6); /* F9 */
  REL(FCI_MU0 * 50000.0 * 50000.0 / 2, 1570.796, 1e-6);
  /* F10: ideal burst mu0 Phi(H_max) with the far meniscus at zero field */
  double b1[3] = {0, 0, 0.3845}, b2[3] = {0, 0, 0.7437};
  REL(fci_ferro_pressure(&f, b1), 7083.43, 1e-5);
  REL(fci_ferro_pressure(&f, b2), 14832.66, 1e-5);
}

static void test_demagnetisation(void **state)
{
  (void)state;
  fci_ferro f = example_fluid(NULL);
  f.demag = 0.5;
  double h0 = 0.1 / FCI_MU0, h = fci_ferro_internal(&f, h0);
  REL(h + 0.5 * fci_ferro_m(&f, h), h0, 1e-12); /* H = H0 - N M (physics reference sec. 4) */
  assert_true(h < h0);
  f.demag = 0.0;
  assert_true(fci_ferro_internal(&f, h0) == h0);
}

static void test_young_laplace(void **state)
{
  (void)state;
  double deg = M_PI / 180.0;
  REL(fci_young_laplace(0.0728, 100e-6, 50e-6, 0, 0, 0, 0), 4368.0, 1e-9); /* Y1 [D] */
  double t = 110 * deg;
  REL(fci_young_laplace(0.0728, 100e-6, 50e-6, t, t, t, t), -1493.944, 1e-6); /* Y2 */
  /* Y3: width step 100 -> 200 um, theta = 0: only the width term differs */
  double p1 = fci_young_laplace(0.03, 100e-6, 50e-6, 0, 0, 0, 0);
  double p2 = fci_young_laplace(0.03, 200e-6, 50e-6, 0, 0, 0, 0);
  REL(p1 - p2, 300.0, 1e-9);
  /* Y4: hysteresis threshold gamma (2/h + 2/w)(cos th_r - cos th_a), 80/60 deg, 50 x 100 um */
  double ta = 80 * deg, tr = 60 * deg;
  REL(fci_young_laplace(0.03, 100e-6, 50e-6, tr, tr, tr, tr) -
      fci_young_laplace(0.03, 100e-6, 50e-6, ta, ta, ta, ta), 587.433, 1e-6);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(test_langevin),           cmocka_unit_test(test_example_fluid),
    cmocka_unit_test(test_phi_quadrature),     cmocka_unit_test(test_saturated_limit),
    cmocka_unit_test(test_pressure_and_traction), cmocka_unit_test(test_demagnetisation),
    cmocka_unit_test(test_young_laplace),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
