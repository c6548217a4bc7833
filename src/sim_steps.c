/* ferrocirc — integrals over each internal step from the integrator's dense output.
 *
 * Why: the report needs, for every element, its net and reverse volume and, for every node, its
 * time-mean pressure. As CVODES quadratures these are 14 vectors per culture chamber on a
 * distribution tree: 4.7 times the state, carried through every BDF history update and error
 * test (docs/performance.md). Here they are integrated step by step instead, by Gauss–Lobatto
 * quadrature on the interpolating polynomial of the step (CVodeGetDky): its end points are the
 * step ends (evaluated anyway) and 1 or 2 interior points are evaluated. The interpolant carries
 * the state's own error-controlled accuracy, and the forcing is held to it by the quadratures
 * that remain in CVODES (flows of valves, sources and reported elements, and the pressure of
 * every imposed node), so the step resolves every integrand here.
 *
 * Rule: with n = m + 2 Lobatto points the rule is exact for polynomials of degree 2n - 3
 * (Abramowitz & Stegun 1964, 25.4.32): m = 1 (Simpson) for BDF orders 1-3, m = 2 (points
 * (1 -+ 1/sqrt 5)/2, weights 1/12, 5/12, 5/12, 1/12) for orders 4-5, so the rule integrates the
 * order-q interpolant exactly. Reverse volume: where an element's flow changes sign inside the
 * step, the negative part of the polynomial through the n values is integrated exactly between
 * its sign changes (found by bisection), so the kink of max(-q, 0) costs no accuracy and, unlike
 * a quadrature, no extra steps. The net volume is the same polynomial's integral. */
#include <math.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "sim_run.h"

#define NEW(ptr, n) ((ptr) = fc_calloc((size_t)(n) > 0 ? (size_t)(n) : 1, sizeof *(ptr)))

int fci_steps_points(int order, double *s)
{
  if (order <= 3) { s[0] = 0.5; return 1; }
  s[0] = 0.5 * (1.0 - 1.0 / sqrt(5.0));
  s[1] = 0.5 * (1.0 + 1.0 / sqrt(5.0));
  return 2;
}

int fci_steps_init(fci_steps *S, int nN, int nE, int ns)
{
  memset(S, 0, sizeof *S);
  int K = FCI_STEPS_MAX;
  if (!NEW(S->pl, nN) || !NEW(S->ql, nE) || !NEW(S->il, ns) || !NEW(S->pm, K * nN) ||
      !NEW(S->qm, K * nE) || !NEW(S->im, K * ns) || !NEW(S->cp, nN) || !NEW(S->cq, nE) ||
      !NEW(S->cb, nE) || !NEW(S->ci, ns) || !NEW(S->tp, nN) || !NEW(S->tq, nE) ||
      !NEW(S->tb, nE) || !NEW(S->ti, ns))
    return FC_ENOMEM;
  return FC_OK;
}

void fci_steps_free(fci_steps *S)
{
  double *v[] = {S->pl, S->ql, S->il, S->pm, S->qm, S->im, S->cp, S->cq, S->cb, S->ci,
                 S->tp, S->tq, S->tb, S->ti};
  for (size_t k = 0; k < sizeof v / sizeof v[0]; k++) fc_free(v[k]);
  memset(S, 0, sizeof *S);
}

/* Copy the evaluation now in the system into the values of one point (left end or interior):
 * all of it, or what the report's lists need (report.statistics "tracked"). */
static void take(const fci_run *R, double *p, double *q, double *in)
{
  const fci_sys *s = R->sys;
  if (R->stats_all) {
    memcpy(p, s->p, (size_t)s->nN * sizeof *p);
    memcpy(q, s->q, (size_t)s->nE * sizeof *q);
    for (int k = 0; k < s->ns; k++) in[k] = s->qin[s->xnode[k]];
    return;
  }
  for (int j = 0; j < R->nst_node; j++) p[R->st_node[j]] = s->p[R->st_node[j]];
  for (int j = 0; j < R->nst_el; j++) q[R->st_el[j]] = s->q[R->st_el[j]];
  for (int j = 0; j < R->nst_store; j++) in[R->st_store[j]] = s->qin[s->xnode[R->st_store[j]]];
}

void fci_steps_left(fci_run *R)
{
  fci_steps *S = &R->steps;
  take(R, S->pl, S->ql, S->il);
}

void fci_steps_point(fci_run *R, int j)
{
  fci_steps *S = &R->steps;
  const fci_sys *s = R->sys;
  take(R, S->pm + (size_t)j * s->nN, S->qm + (size_t)j * s->nE, S->im + (size_t)j * s->ns);
}

/* Monomial coefficients c[0..n-1] of the polynomial through (x[k], y[k]), k < n, x[0] = 0:
 * Newton's divided differences, then the nested Newton form expanded from the inside out. */
static void monomial(int n, const double *x, const double *y, double *c)
{
  double d[FCI_STEPS_MAX + 2] = {0};
  for (int k = 0; k < n; k++) d[k] = y[k];
  for (int j = 1; j < n; j++)
    for (int k = n - 1; k >= j; k--) d[k] = (d[k] - d[k - 1]) / (x[k] - x[k - j]);
  for (int k = 0; k < n; k++) c[k] = 0;
  c[0] = d[n - 1];
  for (int k = n - 2; k >= 0; k--) { /* c <- c (t - x[k]) + d[k] */
    for (int j = n - 1; j >= 1; j--) c[j] = c[j - 1] - x[k] * c[j];
    c[0] = d[k] - x[k] * c[0];
  }
}

static double horner(int n, const double *c, double t)
{
  double v = c[n - 1];
  for (int k = n - 2; k >= 0; k--) v = v * t + c[k];
  return v;
}

/* Antiderivative of the polynomial c, zero at t = 0. */
static double antider(int n, const double *c, double t)
{
  double v = c[n - 1] / n;
  for (int k = n - 2; k >= 0; k--) v = v * t + c[k] / (k + 1);
  return v * t;
}

/* Integral over [0, 1] of max(-P, 0), P the polynomial (degree <= 3) through (x[k], y[k]),
 * x[0] = 0, x[n-1] = 1, with at least one sign change among the y. Each sign change between
 * neighbouring points is located by bisection (to 2^-40 of the step: the integral then errs by
 * |P'| 2^-80, far below rounding), and the pieces where P < 0 are integrated exactly. */
static double negative_part(int n, const double *x, const double *y)
{
  double c[FCI_STEPS_MAX + 2], cut[FCI_STEPS_MAX + 3];
  monomial(n, x, y, c);
  int nc = 0;
  cut[nc++] = 0;
  for (int k = 0; k + 1 < n; k++) {
    if ((y[k] < 0) == (y[k + 1] < 0)) continue;
    double a = x[k], b = x[k + 1];
    int neg_a = y[k] < 0;
    for (int it = 0; it < 40; it++) {
      double m = 0.5 * (a + b);
      if ((horner(n, c, m) < 0) == neg_a) a = m; else b = m;
    }
    cut[nc++] = 0.5 * (a + b);
  }
  cut[nc++] = 1;
  double sum = 0;
  for (int k = 0; k + 1 < nc; k++) {
    double a = cut[k], b = cut[k + 1];
    if (!(b > a) || horner(n, c, 0.5 * (a + b)) >= 0) continue;
    sum -= antider(n, c, b) - antider(n, c, a);
  }
  return sum > 0 ? sum : 0;
}

void fci_steps_integrate(fci_run *R, double h, int m, const double *s_in)
{
  fci_steps *S = &R->steps;
  const fci_sys *s = R->sys;
  const int nN = s->nN, nE = s->nE, ns = s->ns, n = m + 2;
  double x[FCI_STEPS_MAX + 2], w[FCI_STEPS_MAX + 2], y[FCI_STEPS_MAX + 2];
  x[0] = 0;
  x[n - 1] = 1;
  for (int j = 0; j < m; j++) x[j + 1] = s_in[j];
  if (m == 1) { w[0] = w[2] = 1.0 / 6; w[1] = 4.0 / 6; }
  else { w[0] = w[3] = 1.0 / 12; w[1] = w[2] = 5.0 / 12; }
  for (int k = 0; k < n; k++) w[k] *= h;
  const double *pm = S->pm, *qm = S->qm, *im = S->im;
  for (int l = 0; l < R->nst_node; l++) {
    int i = R->st_node[l];
    double v = w[0] * S->pl[i] + w[n - 1] * s->p[i];
    for (int j = 0; j < m; j++) v += w[j + 1] * pm[(size_t)j * nN + i];
    S->cp[i] += v;
  }
  for (int l = 0; l < R->nst_store; l++) {
    int k = R->st_store[l];
    double v = w[0] * S->il[k] + w[n - 1] * s->qin[s->xnode[k]];
    for (int j = 0; j < m; j++) v += w[j + 1] * im[(size_t)j * ns + k];
    S->ci[k] += v;
  }
  for (int l = 0; l < R->nst_el; l++) {
    int i = R->st_el[l];
    y[0] = S->ql[i];
    y[n - 1] = s->q[i];
    for (int j = 0; j < m; j++) y[j + 1] = qm[(size_t)j * nE + i];
    double v = 0, lo = y[0], hi = y[0];
    for (int k = 0; k < n; k++) {
      v += w[k] * y[k];
      if (y[k] < lo) lo = y[k];
      if (y[k] > hi) hi = y[k];
    }
    S->cq[i] += v;
    if (hi <= 0) S->cb[i] -= v;
    else if (lo < 0) S->cb[i] += h * negative_part(n, x, y);
  }
}

void fci_steps_close_cycle(fci_steps *S, int nN, int nE, int ns)
{
  for (int i = 0; i < nN; i++) { S->tp[i] += S->cp[i]; S->cp[i] = 0; }
  for (int i = 0; i < nE; i++) {
    S->tq[i] += S->cq[i];
    S->tb[i] += S->cb[i];
    S->cq[i] = S->cb[i] = 0;
  }
  for (int k = 0; k < ns; k++) { S->ti[k] += S->ci[k]; S->ci[k] = 0; }
}
