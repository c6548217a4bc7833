/* Iterative Newton solves (src/sys_krylov.c): GMRES with ILU(0) on the augmented Newton matrix
 * solves the same system as KLU's direct factorisation (Davis & Palamadai Natarajan 2010; the
 * general-purpose library is the reference here), on a network with every kind of row: store
 * nodes (chambers), algebraic junctions (no compliance), an element with its own state (a
 * channel with inertance) and a check valve, on a 6 x 6 mesh of channels. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include "net.h"
#include "sys.h"
#include "test_rng.h"
#include "test_sim_rec.h"

#define M 6
#define JSON_MAX 32768

/* A 6 x 6 mesh: chamber at every node except the diagonal ones (algebraic junctions), a
 * reservoir feeding (0,0) through a check valve and an inertive inlet, a drain at (5,5). */
static fc_net *mesh(void)
{
  static char json[JSON_MAX];
  size_t n = 0;
  n += (size_t)snprintf(json + n, sizeof json - n,
    "{\"format\":\"ferrocirc-network/1\",\"fluid\":{\"density\":1000,\"viscosity\":0.001},"
    "\"elements\":[{\"id\":\"src\",\"type\":\"reservoir\",\"node\":\"s\",\"pressure\":\"20 mbar\"},"
    "{\"id\":\"inl\",\"type\":\"channel\",\"from\":\"s\",\"to\":\"v\",\"length\":\"20 mm\","
    "\"diameter\":\"0.2 mm\",\"inertance\":true},"
    "{\"id\":\"cv\",\"type\":\"check_valve\",\"from\":\"v\",\"to\":\"n0_0\",\"crack_forward\":\"1 mbar\","
    "\"reseat_forward\":\"0.5 mbar\",\"crack_reverse\":\"1 bar\",\"open_resistance\":1e10},"
    "{\"id\":\"cvv\",\"type\":\"chamber\",\"node\":\"v\",\"compliance\":1e-15},"
    "{\"id\":\"drain\",\"type\":\"reservoir\",\"node\":\"d\",\"pressure\":0},"
    "{\"id\":\"out\",\"type\":\"resistor\",\"from\":\"n5_5\",\"to\":\"d\",\"resistance\":1e12}");
  for (int i = 0; i < M; i++)
    for (int j = 0; j < M; j++) {
      if (i != j)
        n += (size_t)snprintf(json + n, sizeof json - n, ",{\"id\":\"c%d_%d\",\"type\":\"chamber\","
                              "\"node\":\"n%d_%d\",\"compliance\":%g}", i, j, i, j, 1e-15 * (1 + i + j));
      if (i + 1 < M)
        n += (size_t)snprintf(json + n, sizeof json - n, ",{\"id\":\"v%d_%d\",\"type\":\"resistor\","
                              "\"from\":\"n%d_%d\",\"to\":\"n%d_%d\",\"resistance\":%g}", i, j, i, j,
                              i + 1, j, 1e11 * (1 + j));
      if (j + 1 < M)
        n += (size_t)snprintf(json + n, sizeof json - n, ",{\"id\":\"h%d_%d\",\"type\":\"resistor\","
                              "\"from\":\"n%d_%d\",\"to\":\"n%d_%d\",\"resistance\":%g}", i, j, i, j,
                              i, j + 1, 2e11 * (1 + i));
    }
  n += (size_t)snprintf(json + n, sizeof json - n, "],\"simulation\":{\"duration\":1}}");
  assert_true(n < sizeof json);
  fc_net *net = NULL;
  fc_error err = {0};
  int rc = fc_net_load_buffer(json, n, "mesh.json", ".", g_units, &net, &err);
  if (rc) fprintf(stderr, "%s: %s\n", err.path, err.msg);
  assert_int_equal(rc, FC_OK);
  return net;
}

static double uniform(uint64_t *g) { return (double)(test_rng_next(g) >> 11) * 0x1p-53; }

static void gmres_matches_klu_on_every_row_kind(void **state)
{
  (void)state;
  fc_net *net = mesh();
  fci_sys *s = NULL;
  fc_error err = {0};
  assert_int_equal(fci_sys_build(net, &s, &err), FC_OK);
  assert_true(s->nz > 0 && s->no > 0 && s->ns > 0); /* all three kinds of row are present */
  assert_int_equal(fci_sys_linear_choice(s, FCI_LS_ITERATIVE), FCI_LS_ITERATIVE);
  const int nx = s->nx;
  double *x = calloc((size_t)nx, sizeof *x), *r = calloc((size_t)nx, sizeof *r),
         *rd = calloc((size_t)nx, sizeof *rd), *w = calloc((size_t)nx, sizeof *w);
  assert_non_null(x); assert_non_null(r); assert_non_null(rd); assert_non_null(w);
  uint64_t g = 12345;
  /* A state with pressures of a few mbar (volume = C p), the inlet flowing. */
  for (int k = 0; k < nx; k++)
    x[k] = k < s->ns ? fci_sys_store_volume(s, 0, k, 100 + 500 * uniform(&g)) : 1e-10;
  net->elem[fc_net_elem_find(net, "cv")].mode = 1; /* the valve open: its row couples */
  fci_sys_invalidate(s);
  const double gammas[] = {1e-5, 1e-3, 1e-1};
  for (size_t gi = 0; gi < sizeof gammas / sizeof *gammas; gi++) {
    double gamma = gammas[gi];
    for (int k = 0; k < nx; k++) {
      r[k] = k < s->ns ? 1e-15 * (uniform(&g) - 0.5) : 1e-12 * uniform(&g);
      rd[k] = r[k];
      w[k] = k < s->ns ? 1 / (1e-6 * fabs(x[k]) + 1e-3 * s->Csum[k]) : 1 / (1e-6 * 1e-10 + 1e-15);
    }
    assert_int_equal(fci_sys_psetup(s, 0.3, x, gamma), 0);
    assert_int_equal(fci_sys_psolve(s, rd), 0);
    assert_int_equal(fci_sys_ksetup(s, 0.3, x, gamma), 0);
    double bn = 0;
    for (int k = 0; k < nx; k++) bn += (w[k] * r[k]) * (w[k] * r[k]);
    int iters = 0;
    assert_int_equal(fci_krylov_solve(s, r, w, 1e-12 * sqrt(bn), &iters), 0);
    double d = rel_diff(nx, r, rd);
    printf("gamma %g: %d GMRES iterations, max relative difference from KLU %.2e\n", gamma, iters, d);
    assert_true(iters > 1);      /* ILU(0) alone is not exact on this mesh */
    assert_true(d < 1e-9);
  }
  free(x); free(r); free(rd); free(w);
  fci_sys_free(s);
  fc_net_free(net);
}

/* A loose tolerance stops early with a residual that meets it: the solve is as inexact as asked,
 * so CVODE's Newton iteration (not the linear solver) carries the accuracy. */
static void gmres_stops_at_the_requested_residual(void **state)
{
  (void)state;
  fc_net *net = mesh();
  fci_sys *s = NULL;
  fc_error err = {0};
  assert_int_equal(fci_sys_build(net, &s, &err), FC_OK);
  assert_int_equal(fci_sys_linear_choice(s, FCI_LS_ITERATIVE), FCI_LS_ITERATIVE);
  const int nx = s->nx;
  double *x = calloc((size_t)nx, sizeof *x), *r = calloc((size_t)nx, sizeof *r),
         *w = calloc((size_t)nx, sizeof *w);
  assert_non_null(x); assert_non_null(r); assert_non_null(w);
  for (int k = 0; k < nx; k++) {
    x[k] = k < s->ns ? fci_sys_store_volume(s, 0, k, 200) : 0;
    r[k] = k < s->ns ? 1e-15 * ((k % 7) - 3) : 1e-12;
    w[k] = k < s->ns ? 1 / (1e-3 * 1e-15) : 1e15;
  }
  double bn = 0;
  for (int k = 0; k < nx; k++) bn += (w[k] * r[k]) * (w[k] * r[k]);
  assert_int_equal(fci_sys_ksetup(s, 0.1, x, 1e-2), 0);
  int loose = 0, tight = 0;
  double *r2 = calloc((size_t)nx, sizeof *r2);
  assert_non_null(r2);
  memcpy(r2, r, (size_t)nx * sizeof *r);
  assert_int_equal(fci_krylov_solve(s, r, w, 1e-2 * sqrt(bn), &loose), 0);
  assert_int_equal(fci_krylov_solve(s, r2, w, 1e-12 * sqrt(bn), &tight), 0);
  printf("iterations: %d to 1e-2 of the residual, %d to 1e-12\n", loose, tight);
  assert_true(loose < tight);
  free(x); free(r); free(r2); free(w);
  fci_sys_free(s);
  fc_net_free(net);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(gmres_matches_klu_on_every_row_kind),
    cmocka_unit_test(gmres_stops_at_the_requested_residual),
  };
  return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
