/* The fixed-pivot sparse LU of the Newton matrix (src/sys_lu.c). Reference: KLU (SuiteSparse,
 * Davis & Palamadai Natarajan 2010), a general-purpose sparse solver with partial pivoting,
 * called directly here, and the residual of each solve. Matrices: column diagonally dominant
 * with the structure of compliant networks (diag(C) + gamma times an asymmetric, passive
 * conductance pattern) on a tree (no fill-in) and on a grid (fill-in), and the cases the LU
 * must refuse so that the caller pivots: a zero pivot, pivots spanning more than 1e13, and a
 * pattern so dense that its update list would outgrow the factors. */
#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>
#include <klu.h>

#include "ferrocirc/alloc.h"
#include "net.h"
#include "sys.h"
#include "test_rng.h"
#include "test_sim_rec.h"

enum { MAXE = 20000 };

/* Updates allowed per entry: generous, so that the grid's fill-in is exercised here (the
 * system's own bound keeps meshes for KLU; sys_eval.c LU_CAP). */
#define CAP 64.0

typedef struct trip {
  int n, m;
  int r[MAXE], c[MAXE], slot[MAXE];
  double v[MAXE];
} trip;

static void add(trip *t, int r, int c, double v)
{
  assert_true(t->m < MAXE);
  t->r[t->m] = r;
  t->c[t->m] = c;
  t->v[t->m++] = v;
}

/* The one triplet store, emptied for a matrix of order n (tests run one after another). */
static trip *fresh(int n)
{
  static trip t;
  t.n = n;
  t.m = 0;
  return &t;
}

static double uniform(uint64_t *s, double lo, double hi)
{
  return lo + (hi - lo) * (double)(test_rng_next(s) >> 11) * 0x1p-53;
}

/* An element between a and b whose flow rises with the upstream pressure (g1 > 0) and falls
 * with the downstream one (g2 > 0), g1 != g2: columns stay diagonally dominant, the values
 * are not symmetric. */
static void edge(trip *t, uint64_t *s, int a, int b)
{
  double g1 = uniform(s, 0.1, 10), g2 = uniform(s, 0.1, 10);
  add(t, a, a, g1); add(t, b, a, -g1);
  add(t, a, b, -g2); add(t, b, b, g2);
}

static void compliances(trip *t, uint64_t *s)
{
  for (int i = 0; i < t->n; i++) add(t, i, i, uniform(s, 1e-3, 1));
}

/* CSC matrix of the triplets (duplicates summed). */
static void assemble(trip *t, fci_csc *A)
{
  assert_int_equal(fci_csc_build(A, t->n, t->m, t->r, t->c, t->slot), FC_OK);
  for (int k = 0; k < t->m; k++) A->val[t->slot[k]] += t->v[k];
}

/* The fixed-pivot LU of A's pattern, under the test's bound. */
static fci_lu *lu_of(const fci_csc *A)
{
  fci_lu *f = fci_lu_new(A->n, A->colptr, A->rowind, CAP);
  assert_non_null(f);
  return f;
}

/* x = A \ b by KLU, the reference. */
static void klu_reference(const fci_csc *A, double *x)
{
  klu_common c;
  klu_defaults(&c);
  klu_symbolic *S = klu_analyze(A->n, A->colptr, A->rowind, &c);
  assert_non_null(S);
  klu_numeric *N = klu_factor(A->colptr, A->rowind, A->val, S, &c);
  assert_non_null(N);
  assert_true(klu_solve(S, N, A->n, 1, x, &c));
  klu_free_numeric(&N, &c);
  klu_free_symbolic(&S, &c);
}

/* Factor and solve with fci_lu; compare with KLU and check the residual. */
static void solve_and_compare(const fci_csc *A, fci_lu *f, uint64_t *s)
{
  int n = A->n;
  double *b = calloc((size_t)n, sizeof *b), *x = calloc((size_t)n, sizeof *x),
         *y = calloc((size_t)n, sizeof *y);
  assert_int_equal(fci_lu_factor(f, A->val, NULL, 0), FC_OK);
  for (int i = 0; i < n; i++) b[i] = x[i] = y[i] = uniform(s, -1, 1);
  fci_lu_solve(f, x);
  klu_reference(A, y);
  double worst = 0, res = 0, scale = 0;
  for (int i = 0; i < n; i++) {
    worst = fmax(worst, fabs(x[i] - y[i]) / (fabs(y[i]) + 1e-300));
    scale = fmax(scale, fabs(b[i]));
  }
  for (int j = 0; j < n; j++)
    for (int p = A->colptr[j]; p < A->colptr[j + 1]; p++) b[A->rowind[p]] -= A->val[p] * x[j];
  for (int i = 0; i < n; i++) res = fmax(res, fabs(b[i]));
  /* Both solvers are backward stable here (a column diagonally dominant matrix has growth
   * factor at most 2: Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., Thm
   * 9.9, the theorem's number from memory), so the residual is a modest multiple of
   * eps |A| |x|: 1e-12 is ~5000 eps. The two solutions then differ by at most the condition
   * number times that; for these values (compliances 1e-3 to 1, conductances 0.1 to 10) it is
   * of order 1e4, an estimate. */
  assert_true(worst < 1e-10);
  assert_true(res < 1e-12 * scale);
  free(b); free(x); free(y);
}

/* New values on the same pattern (off-diagonals scaled by 0.5-2, diagonals by 3, so the
 * columns stay dominant): nothing of the previous factorisation, fill-in included, may survive. */
static void revalue(fci_csc *A, uint64_t *s)
{
  for (int j = 0; j < A->n; j++)
    for (int p = A->colptr[j]; p < A->colptr[j + 1]; p++)
      A->val[p] *= A->rowind[p] == j ? 3 : uniform(s, 0.5, 2);
}

/* Factor t's matrix, solve twice (values renewed in between), return the factors' entries
 * over the matrix's off-diagonal entries (1: no fill-in). */
static double factor_twice(trip *t, uint64_t *s)
{
  compliances(t, s);
  fci_csc A;
  assemble(t, &A);
  fci_lu *f = lu_of(&A);
  double fill = (double)fci_lu_nnz(f) / (A.nnz - A.n);
  solve_and_compare(&A, f, s);
  revalue(&A, s);
  solve_and_compare(&A, f, s);
  fci_lu_free(f);
  fci_csc_free(&A);
  return fill;
}

static void tree_solution_matches_klu(void **state)
{
  (void)state;
  uint64_t s = 0x9e3779b97f4a7c15u;
  trip *t = fresh(1023);
  for (int i = 1; i < t->n; i++) edge(t, &s, (i - 1) / 2, i); /* a binary tree */
  assert_true(factor_twice(t, &s) == 1.0); /* a tree fills in nothing */
}

static void grid_with_fill_in_matches_klu(void **state)
{
  (void)state;
  uint64_t s = 0x2545f4914f6cdd1du;
  int M = 24;
  trip *t = fresh(M * M);
  for (int i = 0; i < M; i++)
    for (int j = 0; j < M; j++) {
      if (j + 1 < M) edge(t, &s, i * M + j, i * M + j + 1);
      if (i + 1 < M) edge(t, &s, i * M + j, (i + 1) * M + j);
    }
  assert_true(factor_twice(t, &s) > 2); /* fill-in is exercised */
}

/* The matrix of a binary tree of n nodes with compliances. */
static void tree_matrix(int n, uint64_t *s, fci_csc *A)
{
  trip *t = fresh(n);
  for (int i = 1; i < t->n; i++) edge(t, s, (i - 1) / 2, i);
  compliances(t, s);
  assemble(t, A);
}

/* val + gamma val1, formed as the factorisation loads it (the affine Newton matrix), gives the
 * factors of the summed matrix. */
static void affine_values_are_summed_as_loaded(void **state)
{
  (void)state;
  uint64_t s = 11;
  fci_csc A;
  tree_matrix(255, &s, &A);
  double *a0 = calloc((size_t)A.nnz, sizeof *a0), *a1 = calloc((size_t)A.nnz, sizeof *a1);
  double x[255], y[255], gamma = 0.37;
  for (int p = 0; p < A.nnz; p++) {
    a0[p] = 0.25 * A.val[p];
    a1[p] = 0.75 * A.val[p] / gamma;
  }
  fci_lu *f = lu_of(&A);
  for (int i = 0; i < A.n; i++) x[i] = y[i] = uniform(&s, -1, 1);
  assert_int_equal(fci_lu_factor(f, a0, a1, gamma), FC_OK);
  fci_lu_solve(f, x);
  klu_reference(&A, y);
  for (int i = 0; i < A.n; i++) assert_true(fabs(x[i] - y[i]) <= 1e-12 * fabs(y[i]));
  fci_lu_free(f);
  fci_csc_free(&A);
  free(a0);
  free(a1);
}

static void zero_pivot_is_refused(void **state)
{
  (void)state;
  trip *t = fresh(2);
  add(t, 0, 0, 0.0); add(t, 1, 0, 1.0); add(t, 0, 1, 1.0); add(t, 1, 1, 1.0);
  fci_csc A;
  assemble(t, &A);
  fci_lu *f = lu_of(&A);
  assert_int_equal(fci_lu_factor(f, A.val, NULL, 0), FC_ESOLVE); /* KLU would swap the rows */
  A.val[0] = NAN;
  assert_int_equal(fci_lu_factor(f, A.val, NULL, 0), FC_ESOLVE);
  fci_lu_free(f);
  fci_csc_free(&A);
}

/* The bound of src/sys_lu.c, the one KLU's refactorisation path applies to its condition
 * estimate min |u_jj| / max |u_jj| (src/sys_sparse.c): 1e-14 spans beyond it, 1e-12 within. */
static void pivots_spanning_1e13_are_refused(void **state)
{
  (void)state;
  trip *t = fresh(3);
  add(t, 0, 0, 1.0); add(t, 1, 1, 1.0); add(t, 2, 2, 1e-14); add(t, 1, 2, 0.0);
  fci_csc A;
  assemble(t, &A);
  fci_lu *f = lu_of(&A);
  assert_int_equal(fci_lu_factor(f, A.val, NULL, 0), FC_ESOLVE);
  A.val[A.colptr[2] + 1] = 1e-12; /* within the bound: accepted */
  assert_int_equal(fci_lu_factor(f, A.val, NULL, 0), FC_OK);
  fci_lu_free(f);
  fci_csc_free(&A);
}

/* A dense pattern needs about n/3 updates per entry: refused at one per entry (the system's
 * bound), taken without a bound. */
static void fill_beyond_the_bound_is_refused(void **state)
{
  (void)state;
  trip *t = fresh(140);
  for (int i = 0; i < t->n; i++)
    for (int j = 0; j < t->n; j++) add(t, i, j, i == j ? t->n : 1.0 / (1 + i + j));
  fci_csc A;
  assemble(t, &A);
  assert_null(fci_lu_new(A.n, A.colptr, A.rowind, 1.0));
  fci_lu *f = fci_lu_new(A.n, A.colptr, A.rowind, 1e9); /* the bound alone refused it */
  assert_non_null(f);
  fci_lu_free(f);
  fci_csc_free(&A);
}

static void every_failed_allocation_unwinds(void **state)
{
  (void)state;
  uint64_t s = 7;
  fci_csc A;
  tree_matrix(63, &s, &A);
  fci_lu *f = NULL;
  int k = 0;
  for (; !f && k < 100; k++) {
    fc_alloc_fail_after(k);
    f = fci_lu_new(A.n, A.colptr, A.rowind, CAP);
    fc_alloc_fail_after(-1);
  }
  assert_non_null(f);
  assert_true(k > 10); /* the loop did meet failures on its way (leaks: the ASan run) */
  solve_and_compare(&A, f, &s);
  fci_lu_free(f);
  fci_csc_free(&A);
}

/* A network from JSON text, loaded and assembled. */
static fci_sys *load_sys(const char *json, size_t len, fc_net **net)
{
  fc_error err = {0};
  fci_sys *s = NULL;
  assert_int_equal(fc_net_load_buffer(json, len, "net.json", ".", g_units, net, &err), FC_OK);
  assert_int_equal(fci_sys_build(*net, &s, &err), FC_OK);
  return s;
}

/* A valve-fed tree whose every node has compliance (two levels of junctions, four leaves):
 * the system takes the fixed-pivot LU, and its Newton solves equal KLU's (through the system's
 * own KLU path) in both valve modes and over nine decades of gamma. */
#define LEAF(k, R) "{\"id\":\"l" #k "\",\"type\":\"resistor\",\"from\":\"h" #k "\",\"to\":\"out\"," \
  "\"resistance\":" #R "},{\"id\":\"c" #k "\",\"type\":\"chamber\",\"node\":\"h" #k "\",\"compliance\":3e-15},"
#define SPLIT(a, b, R) "{\"id\":\"s" #a #b "\",\"type\":\"resistor\",\"from\":\"" #a "\",\"to\":\"" #b "\"," \
  "\"resistance\":" #R "},"
static const char NET[] =
  "{\"format\":\"ferrocirc-network/1\",\"fluid\":{\"density\":1000,\"viscosity\":0.001},"
  "\"elements\":["
  "{\"id\":\"feed\",\"type\":\"reservoir\",\"node\":\"in\",\"pressure\":\"12 mbar\"},"
  "{\"id\":\"pre\",\"type\":\"resistor\",\"from\":\"in\",\"to\":\"up\",\"resistance\":5e11},"
  "{\"id\":\"cup\",\"type\":\"chamber\",\"node\":\"up\",\"compliance\":4e-16},"
  "{\"id\":\"chk\",\"type\":\"check_valve\",\"from\":\"up\",\"to\":\"r\",\"crack_forward\":\"2 mbar\","
  "\"reseat_forward\":\"1 mbar\",\"crack_reverse\":\"1 bar\",\"open_resistance\":3e10},"
  "{\"id\":\"cr\",\"type\":\"chamber\",\"node\":\"r\",\"compliance\":2e-16},"
  SPLIT(r, m0, 1e11) SPLIT(r, m1, 2e11)
  "{\"id\":\"cm0\",\"type\":\"chamber\",\"node\":\"m0\",\"compliance\":1e-16},"
  "{\"id\":\"cm1\",\"type\":\"chamber\",\"node\":\"m1\",\"compliance\":1e-16},"
  SPLIT(m0, h0, 4e11) SPLIT(m0, h1, 6e11) SPLIT(m1, h2, 5e11) SPLIT(m1, h3, 7e11)
  LEAF(0, 2e12) LEAF(1, 3e12) LEAF(2, 4e12) LEAF(3, 5e12)
  "{\"id\":\"waste\",\"type\":\"reservoir\",\"node\":\"out\",\"pressure\":0}],"
  "\"simulation\":{\"duration\":1}}";

static void newton_solves_equal_klu_in_both_valve_modes(void **state)
{
  (void)state;
  fc_net *net = NULL;
  fci_sys *s = load_sys(NET, sizeof NET - 1, &net);
  assert_int_equal(s->lu_want, 1);
  double x[16] = {0}, r1[16], r2[16];
  assert_int_equal(s->nx, 8); /* up, r, m0, m1 and the four leaves */
  for (int mode = 0; mode < 2; mode++) {
    for (int i = 0; i < net->nElem; i++)
      if (net->elem[i].nRoot) { net->elem[i].mode = mode; fci_sys_invalidate(s); }
    for (int k = 0; k < s->nx; k++) x[k] = 1e-12 * (k + 1);
    for (double g = 1e-6; g < 2; g *= 37) {
      for (int k = 0; k < s->nx; k++) r1[k] = r2[k] = sin(1.0 + k) * 1e-13;
      assert_int_equal(fci_sys_psetup(s, 0.1, x, g), 0);
      assert_int_equal(s->lu_on, 1);
      assert_int_equal(fci_sys_psolve(s, r1), 0);
      s->lu_want = 0;
      assert_int_equal(fci_sys_psetup(s, 0.1, x, g), 0);
      assert_int_equal(s->lu_on, 0);
      assert_int_equal(fci_sys_psolve(s, r2), 0);
      s->lu_want = 1;
      for (int k = 0; k < s->nx; k++) assert_true(fabs(r1[k] - r2[k]) <= 1e-12 * fabs(r2[k]));
    }
  }
  fci_sys_free(s);
  fc_net_free(net);
}

/* A mesh of compliant nodes (an 8 x 8 grid of resistors, a chamber at every node): its
 * factors fill in, and the system leaves it to KLU, whose solves stay right. */
static void a_mesh_is_left_to_klu(void **state)
{
  (void)state;
  enum { M = 8 };
  static char js[40000];
  int o = snprintf(js, sizeof js, "{\"format\":\"ferrocirc-network/1\",\"fluid\":{\"density\":1000,"
                   "\"viscosity\":0.001},\"elements\":[{\"id\":\"feed\",\"type\":\"reservoir\","
                   "\"node\":\"n0_0\",\"pressure\":\"5 mbar\"},{\"id\":\"sink\",\"type\":\"reservoir\","
                   "\"node\":\"n%d_%d\",\"pressure\":0}", M - 1, M - 1);
  for (int i = 0; i < M; i++)
    for (int j = 0; j < M; j++) {
      if ((i || j) && (i < M - 1 || j < M - 1))
        o += snprintf(js + o, sizeof js - (size_t)o, ",{\"id\":\"c%d_%d\",\"type\":\"chamber\","
                      "\"node\":\"n%d_%d\",\"compliance\":1e-15}", i, j, i, j);
      if (j + 1 < M)
        o += snprintf(js + o, sizeof js - (size_t)o, ",{\"id\":\"h%d_%d\",\"type\":\"resistor\","
                      "\"from\":\"n%d_%d\",\"to\":\"n%d_%d\",\"resistance\":1e11}", i, j, i, j, i, j + 1);
      if (i + 1 < M)
        o += snprintf(js + o, sizeof js - (size_t)o, ",{\"id\":\"v%d_%d\",\"type\":\"resistor\","
                      "\"from\":\"n%d_%d\",\"to\":\"n%d_%d\",\"resistance\":2e11}", i, j, i, j, i + 1, j);
    }
  o += snprintf(js + o, sizeof js - (size_t)o, "],\"simulation\":{\"duration\":1}}");
  assert_true(o < (int)sizeof js);
  fc_net *net = NULL;
  fci_sys *s = load_sys(js, (size_t)o, &net);
  assert_int_equal(s->nx, M * M - 2);
  double x[M * M] = {0}, r[M * M], b[M * M];
  for (int k = 0; k < s->nx; k++) x[k] = 1e-15 * k;
  assert_int_equal(fci_sys_psetup(s, 0.1, x, 1e-3), 0);
  assert_int_equal(s->lu_want, 0);
  assert_int_equal(s->lu_on, 0);
  for (int k = 0; k < s->nx; k++) r[k] = b[k] = cos(k);
  assert_int_equal(fci_sys_psolve(s, r), 0);
  /* r solves (I - gamma J) r = b with J = dxdot/dx: check against the residual, the
   * right-hand side differenced along r (linear network: exact to rounding). |b| <= 1 and the
   * differenced terms round at about 1e-16 of their size, so 1e-9 is a loose bound; a solve
   * with a wrong matrix misses it by the size of gamma J r, not by rounding */
  double f0[M * M], f1[M * M], x1[M * M], worst = 0;
  assert_int_equal(fci_sys_eval(s, 0.1, x), 0);
  assert_int_equal(fci_sys_rhs_from_eval(s, 0.1, x, f0), 0);
  for (int k = 0; k < s->nx; k++) x1[k] = x[k] + r[k];
  assert_int_equal(fci_sys_eval(s, 0.1, x1), 0);
  assert_int_equal(fci_sys_rhs_from_eval(s, 0.1, x1, f1), 0);
  for (int k = 0; k < s->nx; k++) worst = fmax(worst, fabs(r[k] - 1e-3 * (f1[k] - f0[k]) - b[k]));
  assert_true(worst < 1e-9);
  fci_sys_free(s);
  fc_net_free(net);
}

/* Junctions without compliance (algebraic nodes) eliminated through the conservation matrix G:
 * its pivots are fixed too, and the junction pressures equal those of KLU's solve. */
static const char JUNCTIONS[] =
  "{\"format\":\"ferrocirc-network/1\",\"fluid\":{\"density\":1000,\"viscosity\":0.001},"
  "\"elements\":["
  "{\"id\":\"feed\",\"type\":\"reservoir\",\"node\":\"in\",\"pressure\":\"9 mbar\"},"
  "{\"id\":\"r0\",\"type\":\"resistor\",\"from\":\"in\",\"to\":\"j1\",\"resistance\":3e11},"
  "{\"id\":\"r1\",\"type\":\"resistor\",\"from\":\"j1\",\"to\":\"j2\",\"resistance\":2e11},"
  "{\"id\":\"r2\",\"type\":\"resistor\",\"from\":\"j1\",\"to\":\"c1\",\"resistance\":7e11},"
  "{\"id\":\"r3\",\"type\":\"resistor\",\"from\":\"j2\",\"to\":\"c2\",\"resistance\":5e11},"
  "{\"id\":\"r4\",\"type\":\"resistor\",\"from\":\"j2\",\"to\":\"c3\",\"resistance\":9e11},"
  "{\"id\":\"k1\",\"type\":\"chamber\",\"node\":\"c1\",\"compliance\":2e-15},"
  "{\"id\":\"k2\",\"type\":\"chamber\",\"node\":\"c2\",\"compliance\":3e-15},"
  "{\"id\":\"k3\",\"type\":\"chamber\",\"node\":\"c3\",\"compliance\":4e-15},"
  "{\"id\":\"d1\",\"type\":\"resistor\",\"from\":\"c1\",\"to\":\"out\",\"resistance\":2e12},"
  "{\"id\":\"d2\",\"type\":\"resistor\",\"from\":\"c2\",\"to\":\"out\",\"resistance\":3e12},"
  "{\"id\":\"d3\",\"type\":\"resistor\",\"from\":\"c3\",\"to\":\"out\",\"resistance\":4e12},"
  "{\"id\":\"waste\",\"type\":\"reservoir\",\"node\":\"out\",\"pressure\":0}],"
  "\"simulation\":{\"duration\":1}}";

static void junction_pressures_equal_klu(void **state)
{
  (void)state;
  fc_net *net = NULL;
  fci_sys *s = load_sys(JUNCTIONS, sizeof JUNCTIONS - 1, &net);
  assert_int_equal(s->nz, 2);
  double x[3] = {4e-13, 1e-13, 9e-13}, p1[2], p2[2];
  assert_int_equal(fci_sys_eval(s, 0.1, x), 0);
  assert_int_equal(s->glu_on, 1);
  for (int i = 0; i < 2; i++) p1[i] = s->p[s->znode[i]];
  s->glu_want = 0;
  fci_sys_invalidate(s);
  assert_int_equal(fci_sys_eval(s, 0.1, x), 0);
  assert_int_equal(s->glu_on, 0);
  for (int i = 0; i < 2; i++) p2[i] = s->p[s->znode[i]];
  for (int i = 0; i < 2; i++) {
    assert_true(p2[i] > 33 && p2[i] < 900); /* the feed is at 900 Pa, the chambers at 33-225 Pa */
    assert_true(fabs(p1[i] - p2[i]) <= 1e-12 * fabs(p2[i]));
  }
  fci_sys_free(s);
  fc_net_free(net);
}

/* A run counts its factorisations by path: the valve-fed tree's all with fixed pivots, the
 * junction network's conservation matrix with fixed pivots and its augmented Newton matrix
 * (rows of two units) by KLU. */
static void runs_report_which_factorisations_had_fixed_pivots(void **state)
{
  (void)state;
  run R;
  run_json(&R, NET);
  assert_int_equal(R.rc_sim, FC_OK);
  const fc_sim_stats *st = &R.res->stats;
  assert_true(st->factorizations > 10);
  assert_int_equal(st->fixed_pivot, st->factorizations);
  run_free(&R);
  run_json(&R, JUNCTIONS);
  assert_int_equal(R.rc_sim, FC_OK);
  st = &R.res->stats;
  assert_true(st->fixed_pivot >= 1);
  assert_true(st->fixed_pivot < st->factorizations);
  run_free(&R);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(tree_solution_matches_klu),
    cmocka_unit_test(grid_with_fill_in_matches_klu),
    cmocka_unit_test(affine_values_are_summed_as_loaded),
    cmocka_unit_test(zero_pivot_is_refused),
    cmocka_unit_test(pivots_spanning_1e13_are_refused),
    cmocka_unit_test(fill_beyond_the_bound_is_refused),
    cmocka_unit_test(every_failed_allocation_unwinds),
    cmocka_unit_test(newton_solves_equal_klu_in_both_valve_modes),
    cmocka_unit_test(a_mesh_is_left_to_klu),
    cmocka_unit_test(junction_pressures_equal_klu),
    cmocka_unit_test(runs_report_which_factorisations_had_fixed_pivots),
  };
  return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
