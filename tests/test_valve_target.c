/* Tests of design targets (src/valve/valve_target.c): Brent's method on analytic functions with
 * known roots, and the valve search, which must recover a magnet gap from pressures computed
 * forward at that gap, find every root of a non-monotonic quantity, and say when no value in the
 * range meets the target. Check values: closed forms (sqrt 2, 1/3, 1), SciPy 1.10
 * scipy.optimize.brentq(xtol=1e-15) for the transcendental roots, and the forward model itself
 * (the valve search must invert it). */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "valve/valve_target.h"

#define MMHG 133.322387415 /* Pa per mmHg (conventional, 13.5951 g/cm3 x 9.80665 m/s2) */
#define DESIGN FC_SOURCE_DIR "/networks/valves/one-magnet-step.json"

static fc_units *units;
static fc_valve_design *design;

static int setup(void **state)
{
  (void)state;
  fc_error e;
  if (fc_units_open(&units, &e)) return -1;
  return fc_valve_design_load(DESIGN, units, &design, &e);
}

static int teardown(void **state)
{
  (void)state;
  fc_valve_design_free(design);
  fc_units_free(units);
  return 0;
}

/* ---------------- Brent's method ---------------- */
typedef struct fn { double (*f)(double); int calls; } fn;

static int call(double x, void *ctx, double *fx)
{
  fn *c = ctx;
  c->calls++;
  *fx = c->f(x);
  return FC_OK;
}

static double sq2(double x) { return x * x - 2.0; }
static double dottie(double x) { return cos(x) - x; }
static double wallis(double x) { return x * x * x - 2.0 * x - 5.0; }
static double omega(double x) { return x * exp(x) - 1.0; }
static double expo(double x) { return exp(x) - 10.0 * x; }
static double triple(double x) { return (x - 1.0) * (x - 1.0) * (x - 1.0); }
static double ninth(double x) { return pow(x, 9.0); }
static double step(double x) { return x < 1.0 / 3.0 ? -1.0 : 1.0; }

typedef struct brent_case {
  const char *name;
  double (*f)(double);
  double a, b, root;
  int max_evals;   /* evaluations allowed: superlinear cases few, the rest near bisection */
} brent_case;

static const brent_case cases[] = {
  {"x^2 - 2", sq2, 0.0, 2.0, 1.41421356237309505, 12},             /* sqrt 2 */
  {"cos x - x", dottie, 0.0, 1.0, 0.7390851332151607, 10},         /* SciPy brentq */
  {"x^3 - 2x - 5", wallis, 2.0, 3.0, 2.094551481542327, 10},       /* SciPy brentq (Wallis) */
  {"x e^x - 1", omega, 0.0, 1.0, 0.5671432904097838, 10},          /* SciPy brentq; W(1) */
  {"e^x - 10x", expo, 0.0, 1.0, 0.11183255915896298, 12},          /* SciPy brentq */
  {"(x - 1)^3", triple, 0.0, 3.0, 1.0, 200},                       /* triple root */
  {"x^9", ninth, -1.0, 1.1, 0.0, 200},                             /* flat root (Brent 1973) */
  {"step at 1/3", step, 0.0, 1.0, 1.0 / 3.0, 200},                 /* a jump, found as a root */
};

static void brent_finds_known_roots(void **state)
{
  (void)state;
  for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
    const brent_case *t = &cases[i];
    fn c = {t->f, 0};
    double root, froot;
    int it;
    int rc = fci_brent(call, &c, t->a, t->b, t->f(t->a), t->f(t->b), 1e-13, 200, &root, &froot,
                       &it);
    printf("  %-14s root %.17g (%d evaluations)\n", t->name, root, it);
    assert_int_equal(rc, FC_OK);
    assert_true(fabs(root - t->root) < 1e-12);
    assert_true(it == c.calls && it <= t->max_evals);
    assert_true(froot == t->f(root));
  }
}

static void brent_bisection_bound(void **state)
{
  (void)state;
  /* Brent 1973 ch. 4: never more than about (log2((b - a)/tol) + 1)^2 evaluations. */
  for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
    const brent_case *t = &cases[i];
    fn c = {t->f, 0};
    double root, froot, n = log2((t->b - t->a) / 1e-13) + 1.0;
    int it;
    assert_int_equal(fci_brent(call, &c, t->a, t->b, t->f(t->a), t->f(t->b), 1e-13, 10000, &root,
                               &froot, &it), FC_OK);
    assert_true(it <= n * n);
  }
}

static void brent_root_at_an_end(void **state)
{
  (void)state;
  fn c = {sq2, 0};
  double root, froot;
  int it;
  assert_int_equal(fci_brent(call, &c, -3.0, sqrt(2.0), 7.0, 0.0, 1e-13, 50, &root, &froot, &it),
                   FC_OK);
  assert_true(root == sqrt(2.0) && it == 0 && c.calls == 0);
}

static void brent_rejects_no_bracket(void **state)
{
  (void)state;
  fn c = {sq2, 0};
  double root = 0, froot = 0;
  int it;
  assert_int_equal(fci_brent(call, &c, 2.0, 3.0, sq2(2.0), sq2(3.0), 1e-13, 50, &root, &froot, &it),
                   FC_EPARAM);
  assert_int_equal(c.calls, 0);
}

static void brent_iteration_limit(void **state)
{
  (void)state;
  fn c = {step, 0};
  double root, froot;
  int it;
  /* bisection of a jump needs ~43 halvings to reach 1e-13; 5 are not enough */
  assert_int_equal(fci_brent(call, &c, 0.0, 1.0, -1.0, 1.0, 1e-13, 5, &root, &froot, &it),
                   FC_ESOLVE);
  assert_int_equal(it, 5);
  assert_true(root >= 0.0 && root <= 1.0);
}

static int failing(double x, void *ctx, double *fx)
{
  (void)ctx;
  *fx = x;
  return FC_EIO;
}

static void brent_passes_errors_on(void **state)
{
  (void)state;
  double root, froot;
  int it;
  assert_int_equal(fci_brent(failing, NULL, -1.0, 3.0, -1.0, 3.0, 1e-13, 50, &root, &froot, &it),
                   FC_EIO);
  assert_int_equal(it, 1);
}

/* ---------------- The valve search ---------------- */
static void pressures_at(double gap_mm, fc_valve_pressures *p)
{
  char val[64];
  fc_valve_design *d = NULL;
  fc_error e;
  snprintf(val, sizeof val, "%.17g mm", gap_mm);
  assert_int_equal(fc_valve_design_set(design, "magnets[0].gap", val, units, &d, &e), FC_OK);
  assert_int_equal(fc_valve_design_solve(d, p, &e), FC_OK);
  fc_valve_design_free(d);
}

static fci_target_spec gap_spec(int q, double value)
{
  fci_target_spec s = {.quantity = q, .value = value, .key = "magnets[0].gap", .unit = "mm",
                       .lo = 0.2, .hi = 5.0, .steps = 21};
  return s;
}

static void target_recovers_forward_gap(void **state)
{
  (void)state;
  fc_valve_pressures p;
  pressures_at(1.7, &p);
  int qs[] = {FCI_TQ_CRACK_REVERSE, FCI_TQ_CRACK_FORWARD, FCI_TQ_RESEAT_REVERSE, FCI_TQ_BLOWOUT,
              FCI_TQ_DIFFERENTIAL};
  for (size_t i = 0; i < sizeof qs / sizeof qs[0]; i++) {
    fci_target_spec s = gap_spec(qs[i], fci_target_value(&p, qs[i]));
    fci_target_result r;
    fc_error e;
    assert_int_equal(fci_valve_target_solve(design, units, &s, &r, &e), FC_OK);
    printf("  %-14s = %.6g Pa -> gap %.12g mm (%d evaluations)\n", fci_target_quantity_name(qs[i]),
           s.value, r.root[0].x, r.root[0].iters);
    assert_int_equal(r.nroot, 1);
    assert_true(fabs(r.root[0].x - 1.7) < 1e-6);
    assert_true(fabs(r.root[0].p.crack_forward - p.crack_forward) < 1e-6 * p.crack_forward);
    assert_true(fabs(r.root[0].p.reseat_reverse - p.reseat_reverse) < 1e-6 * p.reseat_reverse);
  }
}

static void target_finds_both_ratio_roots(void **state)
{
  (void)state;
  /* the ratio rises to a maximum near 2.2 mm and falls again: two gaps give the 1 mm ratio */
  fc_valve_pressures p;
  pressures_at(1.0, &p);
  fci_target_spec s = gap_spec(FCI_TQ_RATIO, fci_target_value(&p, FCI_TQ_RATIO));
  fci_target_result r;
  fc_error e;
  assert_int_equal(fci_valve_target_solve(design, units, &s, &r, &e), FC_OK);
  assert_int_equal(r.nroot, 2);
  assert_true(fabs(r.root[0].x - 1.0) < 1e-6);
  assert_true(r.root[1].x > 2.2 && r.root[1].x < 5.0);
  fc_valve_pressures p2;
  pressures_at(r.root[1].x, &p2);
  assert_true(fabs(fci_target_value(&p2, FCI_TQ_RATIO) - s.value) < 1e-6 * s.value);
}

static void target_out_of_reach(void **state)
{
  (void)state;
  /* 60 mmHg reverse crack: the closest gap allowed (0.2 mm) gives far less */
  fci_target_spec s = gap_spec(FCI_TQ_CRACK_REVERSE, 60.0 * MMHG);
  fci_target_result r;
  fc_error e;
  fc_valve_pressures p;
  assert_int_equal(fci_valve_target_solve(design, units, &s, &r, &e), FC_OK);
  assert_int_equal(r.nroot, 0);
  assert_int_equal(r.njump, 0);
  pressures_at(0.2, &p);
  assert_true(r.closest.x == 0.2);
  assert_true(fabs(r.closest.q - p.crack_reverse) < 1e-9 * p.crack_reverse);
  assert_true(r.qmax == r.closest.q && r.qmax < 60.0 * MMHG);
}

static void target_across_a_jump_is_not_met(void **state)
{
  (void)state;
  /* between 4.18 and 4.2 mm the plug stops sealing and the reverse crack drops from ~0.08 mmHg
   * to 0: 0.05 mmHg lies inside the jump */
  fci_target_spec s = gap_spec(FCI_TQ_CRACK_REVERSE, 0.05 * MMHG);
  fci_target_result r;
  fc_error e;
  assert_int_equal(fci_valve_target_solve(design, units, &s, &r, &e), FC_OK);
  assert_int_equal(r.nroot, 0);
  assert_int_equal(r.njump, 1);
  assert_true(r.jump_x > 4.0 && r.jump_x < 4.2);
  assert_true(r.nunsealed > 0);
  assert_true(r.closest.q > 0.05 * MMHG && r.closest.q < 0.09 * MMHG);
}

static void target_bad_key_names_it(void **state)
{
  (void)state;
  fci_target_spec s = gap_spec(FCI_TQ_CRACK_REVERSE, 8.0 * MMHG);
  fci_target_result r;
  fc_error e;
  s.key = "magnets[0].gapp";
  assert_int_equal(fci_valve_target_solve(design, units, &s, &r, &e), FC_EPARAM);
  assert_non_null(strstr(e.path, "gapp"));
  double v;
  char unit[32];
  assert_int_equal(fci_valve_design_value(design, "magnets[0].gap", &v, unit, sizeof unit, &e),
                   FC_OK);
  assert_true(v == 1.0 && !strcmp(unit, "mm"));
  assert_int_equal(fci_valve_design_value(design, "magnets[2].gap", &v, unit, sizeof unit, &e),
                   FC_EPARAM);
}

static void target_cli_exit_status(void **state)
{
  (void)state;
  char *met[] = {"valve", DESIGN, "--target", "crack_reverse=8mmHg", "--adjust", "magnets[0].gap",
                 "--json", NULL};
  char *unmet[] = {"valve", DESIGN, "--target", "crack_reverse=60mmHg", "--adjust",
                   "magnets[0].gap", "--range", "0.2mm..5mm", "--json", NULL};
  char *badq[] = {"valve", DESIGN, "--target", "crack=8mmHg", "--adjust", "magnets[0].gap", NULL};
  char *nounit[] = {"valve", DESIGN, "--target", "crack_reverse=8", "--adjust", "magnets[0].gap",
                    NULL};
  char *noadj[] = {"valve", DESIGN, "--target", "crack_reverse=8mmHg", NULL};
  char *badrange[] = {"valve", DESIGN, "--target", "crack_reverse=8mmHg", "--adjust",
                      "magnets[0].gap", "--range", "5mm..1mm", NULL};
  assert_int_equal(fc_valve_cli(7, met), 0);
  assert_int_equal(fc_valve_cli(9, unmet), 1);
  assert_int_equal(fc_valve_cli(6, badq), 2);
  assert_int_equal(fc_valve_cli(6, nounit), 2);
  assert_int_equal(fc_valve_cli(4, noadj), 2);
  assert_int_equal(fc_valve_cli(8, badrange), 2);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(brent_finds_known_roots),
    cmocka_unit_test(brent_bisection_bound),
    cmocka_unit_test(brent_root_at_an_end),
    cmocka_unit_test(brent_rejects_no_bracket),
    cmocka_unit_test(brent_iteration_limit),
    cmocka_unit_test(brent_passes_errors_on),
    cmocka_unit_test(target_recovers_forward_gap),
    cmocka_unit_test(target_finds_both_ratio_roots),
    cmocka_unit_test(target_out_of_reach),
    cmocka_unit_test(target_across_a_jump_is_not_met),
    cmocka_unit_test(target_bad_key_names_it),
    cmocka_unit_test(target_cli_exit_status),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
