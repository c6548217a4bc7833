/* Shared by tests/test_sim*.c: load a network from a JSON string, run it, and record every
 * sample (t, node pressures, element flows) for comparison with an outside reference.
 * Header-only (static functions) because each test file is its own executable. */
#ifndef FC_TEST_SIM_REC_H
#define FC_TEST_SIM_REC_H

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/network.h"
#include "ferrocirc/sim.h"
#include "ferrocirc/units.h"

typedef struct rec {
  int nN, nE;
  size_t n, cap;  /* samples recorded, capacity */
  double *t;      /* n */
  double *p;      /* n x nN [Pa] */
  double *q;      /* n x nE [m^3/s] */
} rec;

static inline int rec_sample(void *ctx, double t, const double *p, const double *q, const int *mode)
{
  rec *r = ctx;
  (void)mode;
  if (r->n == r->cap) {
    size_t cap = r->cap ? 2 * r->cap : 256;
    double *nt = realloc(r->t, cap * sizeof *nt);
    if (!nt) return 1;
    r->t = nt;
    double *np = realloc(r->p, cap * (size_t)r->nN * sizeof *np);
    if (!np) return 1;
    r->p = np;
    double *nq = realloc(r->q, cap * (size_t)r->nE * sizeof *nq);
    if (!nq) return 1;
    r->q = nq;
    r->cap = cap;
  }
  r->t[r->n] = t;
  memcpy(r->p + r->n * (size_t)r->nN, p, (size_t)r->nN * sizeof *p);
  memcpy(r->q + r->n * (size_t)r->nE, q, (size_t)r->nE * sizeof *q);
  r->n++;
  return 0;
}

static inline void rec_free(rec *r)
{
  free(r->t);
  free(r->p);
  free(r->q);
  memset(r, 0, sizeof *r);
}

/* Pressure of node `name` at sample k, flow of element `id` at sample k. */
static inline double rec_p(const rec *r, const fc_net *net, size_t k, const char *name)
{
  int n = fc_net_node_find(net, name);
  if (n < 0) { fprintf(stderr, "no node %s\n", name); abort(); }
  return r->p[k * (size_t)r->nN + (size_t)n];
}

static inline double rec_q(const rec *r, const fc_net *net, size_t k, const char *id)
{
  int i = fc_net_elem_find(net, id);
  if (i < 0) { fprintf(stderr, "no element %s\n", id); abort(); }
  return r->q[k * (size_t)r->nE + (size_t)i];
}

/* One run: the network text, its loaded net, recorded samples and results. */
typedef struct run {
  fc_net *net;
  rec r;
  fc_sim_result *res;
  fc_error err;
  int rc_load, rc_sim;
} run;

static fc_units *g_units; /* opened once per test executable (UDUNITS takes ~9 ms) */

static inline int units_setup(void **state)
{
  fc_error err = {0};
  (void)state;
  return fc_units_open(&g_units, &err);
}

static inline int units_teardown(void **state)
{
  (void)state;
  fc_units_free(g_units);
  g_units = NULL;
  return 0;
}

/* Load and run `json`; on a load error rc_load is set and nothing is run. Prints the error so
 * that a failing assertion is explained in the test log. */
static inline void run_json(run *R, const char *json)
{
  memset(R, 0, sizeof *R);
  R->rc_load = fc_net_load_buffer(json, strlen(json), "test.json", "", g_units, &R->net, &R->err);
  if (R->rc_load) {
    fprintf(stderr, "load: %s: %s (%s)\n", R->err.path, R->err.msg, fc_error_name(R->rc_load));
    return;
  }
  R->r.nN = fc_net_node_count(R->net);
  R->r.nE = fc_net_elem_count(R->net);
  fc_sim_sink sink = {&R->r, rec_sample, NULL, NULL, NULL};
  R->rc_sim = fc_sim_run(R->net, &sink, &R->res, &R->err);
  if (R->rc_sim)
    fprintf(stderr, "run: %s: %s (%s)\n", R->err.path, R->err.msg, fc_error_name(R->rc_sim));
}

/* Largest |a[k] - b[k]| relative to max |b[k]|, k < n. */
static inline double rel_diff(int n, const double *a, const double *b)
{
  double d = 0, m = 0;
  for (int k = 0; k < n; k++) {
    if (fabs(a[k] - b[k]) > d) d = fabs(a[k] - b[k]);
    if (fabs(b[k]) > m) m = fabs(b[k]);
  }
  return d / m;
}

static inline void run_free(run *R)
{
  fc_sim_result_free(R->res);
  fc_net_free(R->net);
  rec_free(&R->r);
}

/* |got - want| <= tol * scale, with a message naming what failed and by how much. */
#define CHECK_CLOSE(got, want, tol, scale, what)                                               \
  do {                                                                                         \
    double g_ = (got), w_ = (want), s_ = (scale);                                              \
    if (!(fabs(g_ - w_) <= (tol) * s_)) {                                                      \
      print_error("%s: got %.12g, want %.12g, error %.3g of scale %.3g (tol %.1g)\n", (what),  \
                  g_, w_, fabs(g_ - w_) / s_, s_, (double)(tol));                              \
      fail();                                                                                  \
    }                                                                                          \
  } while (0)

#endif
