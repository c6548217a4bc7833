/* ferrocirc — design targets: the value of one design parameter at which a valve quantity
 * (crack, reseat, blowout, differential or ratio) meets a target.
 *
 * The quantities are smooth in a parameter such as a magnet gap while the plug seals, but they
 * need not be monotonic (the forward/reverse ratio has a maximum), they jump where the plug stops
 * sealing, and the statics may have no solution at all for some values. So the allowed range is
 * first scanned on a grid; each sign change of q(x) - target between two solved neighbours is a
 * bracket, refined by Brent's method, and a refined point is accepted as a root only when q
 * there meets the target to 1e-6 of the quantity's scale (otherwise the sign change was a jump).
 * With no root, the nearest achievable value is the grid point closest to the target, refined by
 * golden-section search (Kiefer 1953) between its neighbours when it lies inside the range.
 *
 * Brent's method is written here (Brent 1973, Algorithms for Minimization without Derivatives,
 * Prentice-Hall, ch. 4, procedure zero): inverse quadratic interpolation or secant steps, kept
 * inside the bracket, with bisection whenever they would converge slowly, so it never needs more
 * than about (log2((b - a)/xtol))^2 evaluations and usually far fewer. No library with a
 * permissive licence packaged in Debian 12 offers a bracketing scalar root finder in C (GSL's
 * gsl_root_fsolver_brent is GPL; cminpack solves systems without a bracket), hence our own. */
#include <cjson/cJSON.h>
#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "valve_target.h"

int fci_brent(fci_root_fn f, void *ctx, double a, double b, double fa, double fb, double xtol,
              int maxit, double *root, double *froot, int *iters)
{
  *iters = 0;
  if (fa == 0.0 || fb == 0.0) {
    *root = fa == 0.0 ? a : b;
    *froot = 0.0;
    return FC_OK;
  }
  if ((fa > 0.0) == (fb > 0.0) || isnan(fa) || isnan(fb))
    return fc_fail(NULL, FC_EPARAM, NULL, "not a bracket");
  double c = a, fc = fa, d = b - a, e = d;
  for (;;) {
    if ((fb > 0.0) == (fc > 0.0)) { c = a; fc = fa; d = e = b - a; } /* keep the root in [b, c] */
    if (fabs(fc) < fabs(fb)) { a = b; b = c; c = a; fa = fb; fb = fc; fc = fa; }
    double tol = 2.0 * DBL_EPSILON * fabs(b) + 0.5 * xtol, m = 0.5 * (c - b);
    *root = b;
    *froot = fb;
    if (fabs(m) <= tol || fb == 0.0) return FC_OK;
    if (*iters >= maxit) return FC_ESOLVE;
    if (fabs(e) < tol || fabs(fa) <= fabs(fb)) d = e = m; /* the last step did not help: bisect */
    else {
      double s = fb / fa, p, q, r;
      if (a == c) { p = 2.0 * m * s; q = 1.0 - s; }       /* secant */
      else {                                              /* inverse quadratic interpolation */
        q = fa / fc;
        r = fb / fc;
        p = s * (2.0 * m * q * (q - r) - (b - a) * (r - 1.0));
        q = (q - 1.0) * (r - 1.0) * (s - 1.0);
      }
      if (p > 0.0) q = -q; else p = -p;
      /* Accept the step only if it lands well inside the bracket and shrinks faster than the
       * step before last; otherwise bisect (Brent's safeguard). */
      if (2.0 * p < fmin(3.0 * m * q - fabs(tol * q), fabs(e * q))) { e = d; d = p / q; }
      else d = e = m;
    }
    a = b;
    fa = fb;
    b += fabs(d) > tol ? d : (m > 0.0 ? tol : -tol);
    int rc = f(b, ctx, &fb);
    (*iters)++;
    if (rc) return rc;
  }
}

static const char *qname[FCI_TQ_COUNT] = {"crack_forward", "crack_reverse", "reseat_forward",
                                          "reseat_reverse", "blowout", "differential", "ratio"};

int fci_target_quantity(const char *name)
{
  for (int q = 0; q < FCI_TQ_COUNT; q++) if (!strcmp(name, qname[q])) return q;
  return -1;
}

const char *fci_target_quantity_name(int q) { return q >= 0 && q < FCI_TQ_COUNT ? qname[q] : "?"; }

const char *fci_target_quantity_names(void)
{
  return "crack_forward, crack_reverse, reseat_forward, reseat_reverse, blowout, differential, "
         "ratio";
}

int fci_target_is_pressure(int q) { return q != FCI_TQ_RATIO; }

double fci_target_value(const fc_valve_pressures *p, int q)
{
  switch (q) {
  case FCI_TQ_CRACK_FORWARD: return p->crack_forward;
  case FCI_TQ_CRACK_REVERSE: return p->crack_reverse;
  case FCI_TQ_RESEAT_FORWARD: return p->reseat_forward;
  case FCI_TQ_RESEAT_REVERSE: return p->reseat_reverse;
  case FCI_TQ_BLOWOUT: return p->blowout;
  case FCI_TQ_DIFFERENTIAL: return p->crack_reverse - p->crack_forward;
  case FCI_TQ_RATIO: return p->crack_forward > 0.0 ? p->crack_reverse / p->crack_forward : NAN;
  default: return NAN;
  }
}

/* "magnets[0].gap" or "$.magnets[0].gap" in the design tree; NULL if absent. */
static const cJSON *lookup(const cJSON *j, const char *s)
{
  if (*s == '$') s++;
  if (*s == '.') s++;
  while (j && *s) {
    if (*s == '[') {
      char *end;
      long i = strtol(s + 1, &end, 10);
      if (*end != ']' || i < 0 || i > 1000000) return NULL;
      j = cJSON_IsArray(j) ? cJSON_GetArrayItem(j, (int)i) : NULL;
      s = end + 1;
    } else {
      char name[128];
      size_t n = strcspn(s, ".[");
      if (!n || n >= sizeof name) return NULL;
      memcpy(name, s, n);
      name[n] = '\0';
      j = cJSON_IsObject(j) ? cJSON_GetObjectItemCaseSensitive(j, name) : NULL;
      s += n;
    }
    if (*s == '.') s++;
  }
  return j;
}

int fci_valve_design_value(const fc_valve_design *d, const char *key, double *v, char *unit,
                           size_t nunit, fc_error *err)
{
  const cJSON *j = lookup(d->tree, key);
  if (cJSON_IsObject(j)) j = cJSON_GetObjectItemCaseSensitive(j, "value"); /* toleranced */
  unit[0] = '\0';
  if (cJSON_IsNumber(j)) return *v = j->valuedouble, FC_OK;
  if (cJSON_IsString(j)) {
    char *end;
    *v = strtod(j->valuestring, &end);
    while (*end == ' ') end++;
    if (end != j->valuestring && isfinite(*v)) return snprintf(unit, nunit, "%s", end), FC_OK;
  }
  return fc_fail(err, FC_EPARAM, key, j ? "is not a number or quantity" : "no such value in "
                 "the design");
}

typedef struct evalctx {
  const fc_valve_design *d;
  const fc_units *u;
  const fci_target_spec *s;
  fc_valve_pressures p;   /* pressures of the last solved point */
  fc_error *err;          /* a hard error (bad key or value) lands here */
  char fail[300];         /* message of the first point without a solution */
} evalctx;

/* Solve the design at x; *ok = 0 if its statics have no solution or q is undefined there. */
static int solve_at(evalctx *c, double x, int *ok)
{
  char val[96];
  fc_valve_design *dv = NULL;
  fc_error e;
  snprintf(val, sizeof val, "%.17g%s%s", x, c->s->unit[0] ? " " : "", c->s->unit);
  int rc = fc_valve_design_set(c->d, c->s->key, val, c->u, &dv, c->err);
  if (rc) return rc;
  fc_error_clear(&e);
  rc = fc_valve_design_solve(dv, &c->p, &e);
  fc_valve_design_free(dv);
  *ok = rc == FC_OK && !isnan(fci_target_value(&c->p, c->s->quantity));
  /* The design parsed, so a failed solve (no rest position, plug too large for the channel)
   * is a property of this value: the point has no solution, the search goes on. */
  if (*ok) return FC_OK;
  if (rc != FC_ENOMEM) {
    if (!c->fail[0])
      snprintf(c->fail, sizeof c->fail, "%.80s = %.40s: %.160s", c->s->key, val, rc ? e.msg :
               "the ratio is undefined (no forward crack)");
    return FC_OK;
  }
  *c->err = e;
  return rc;
}

/* Brent's callback: the mismatch q(x) - target; a point without a solution stops the bracket. */
static int mismatch(double x, void *ctx, double *fx)
{
  evalctx *c = ctx;
  int ok = 0, rc = solve_at(c, x, &ok);
  if (rc) return rc;
  if (!ok) return FC_ESOLVE;
  *fx = fci_target_value(&c->p, c->s->quantity) - c->s->value;
  return FC_OK;
}

static int point_at(evalctx *c, double x, int iters, fci_target_point *pt, int *ok)
{
  int rc = solve_at(c, x, ok);
  pt->x = x;
  pt->iters = iters;
  pt->p = c->p;
  pt->q = *ok ? fci_target_value(&c->p, c->s->quantity) : NAN;
  return rc;
}

/* Golden-section search for the x in [a, b] whose q is closest to the target. */
static int nearest(evalctx *c, double a, double b, fci_target_point *best)
{
  const double g = 0.6180339887498949; /* (sqrt 5 - 1)/2 */
  double tol = 1e-7 * (c->s->hi - c->s->lo), x1 = b - g * (b - a), x2 = a + g * (b - a);
  fci_target_point p1, p2;
  int ok1, ok2, rc = point_at(c, x1, 0, &p1, &ok1) || point_at(c, x2, 0, &p2, &ok2);
  for (int it = 0; !rc && it < 200 && b - a > tol; it++) {
    double m1 = ok1 ? fabs(p1.q - c->s->value) : INFINITY;
    double m2 = ok2 ? fabs(p2.q - c->s->value) : INFINITY;
    if (m1 <= m2) { /* the nearest value lies in [a, x2] */
      b = x2; x2 = x1; p2 = p1; ok2 = ok1;
      x1 = b - g * (b - a);
      rc = point_at(c, x1, 0, &p1, &ok1);
    } else {
      a = x1; x1 = x2; p1 = p2; ok1 = ok2;
      x2 = a + g * (b - a);
      rc = point_at(c, x2, 0, &p2, &ok2);
    }
  }
  if (rc) return rc;
  if (ok1 && fabs(p1.q - c->s->value) < fabs(best->q - c->s->value)) *best = p1;
  if (ok2 && fabs(p2.q - c->s->value) < fabs(best->q - c->s->value)) *best = p2;
  return FC_OK;
}

/* Refine the bracket [x0, x1] and record a root or a jump. */
static int refine(evalctx *c, double x0, double x1, double f0, double f1, double scale,
                  fci_target_result *r)
{
  double root = 0.5 * (x0 + x1), froot = NAN; /* what a failed refinement reports */
  int it, ok;
  if (r->nroot == FCI_TARGET_MAX_ROOTS) return r->nmore++, FC_OK;
  int rc = fci_brent(mismatch, c, x0, x1, f0, f1, 1e-10 * (c->s->hi - c->s->lo), 200, &root,
                     &froot, &it);
  if (rc && rc != FC_ESOLVE) return rc;
  /* Not refined (a point inside has no solution), or refined onto a jump rather than a root. */
  if (rc || fabs(froot) > 1e-6 * scale) {
    if (!r->njump++) r->jump_x = root;
    return FC_OK;
  }
  fci_target_point *pt = &r->root[r->nroot++];
  return point_at(c, root, it, pt, &ok);
}

static int scan(evalctx *c, fci_target_point *pt, int *ok, fci_target_result *r)
{
  const fci_target_spec *s = c->s;
  for (int i = 0; i < s->steps; i++) {
    double x = i == s->steps - 1 ? s->hi : s->lo + (s->hi - s->lo) * i / (s->steps - 1);
    int rc = point_at(c, x, 0, &pt[i], &ok[i]);
    if (rc) return rc;
    if (!ok[i]) { r->nfail++; continue; }
    r->nunsealed += !pt[i].p.sealed;
    r->qmin = r->nvalid ? fmin(r->qmin, pt[i].q) : pt[i].q;
    r->qmax = r->nvalid ? fmax(r->qmax, pt[i].q) : pt[i].q;
    if (!r->nvalid++ || fabs(pt[i].q - s->value) < fabs(r->closest.q - s->value))
      r->closest = pt[i];
  }
  return FC_OK;
}

static int search(evalctx *c, fci_target_point *pt, int *ok, fci_target_result *r)
{
  const fci_target_spec *s = c->s;
  int rc = scan(c, pt, ok, r), n = s->steps;
  if (rc) return rc;
  if (!r->nvalid)
    return fc_fail(c->err, FC_ESOLVE, s->key, "no value in %.6g .. %.6g %s gives a valve with a "
                   "solution (%s)", s->lo, s->hi, s->unit, c->fail);
  double scale = fmax(fabs(s->value), fmax(fabs(r->qmin), fabs(r->qmax)));
  for (int i = 0; !rc && i < n; i++) {
    if (!ok[i]) continue;
    double fi = pt[i].q - s->value;
    if (fi == 0.0) {
      if (r->nroot < FCI_TARGET_MAX_ROOTS) r->root[r->nroot++] = pt[i];
      else r->nmore++;
    } else if (i + 1 < n && ok[i + 1] && pt[i + 1].q != s->value &&
               (fi > 0) != (pt[i + 1].q > s->value))
      rc = refine(c, pt[i].x, pt[i + 1].x, fi, pt[i + 1].q - s->value, scale, r);
  }
  if (rc || r->nroot) return rc;
  int i = 0;
  while (pt[i].x != r->closest.x) i++;
  if (i > 0 && i + 1 < n && ok[i - 1] && ok[i + 1])
    rc = nearest(c, pt[i - 1].x, pt[i + 1].x, &r->closest);
  return rc;
}

int fci_valve_target_solve(const fc_valve_design *d, const fc_units *u,
                           const fci_target_spec *spec, fci_target_result *r, fc_error *err)
{
  if (!(spec->lo < spec->hi) || spec->steps < 2 || spec->quantity < 0 ||
      spec->quantity >= FCI_TQ_COUNT)
    return fc_fail(err, FC_EUSAGE, spec->key, "the range must have lo < hi and at least 2 "
                   "scan points");
  memset(r, 0, sizeof *r);
  evalctx c = {.d = d, .u = u, .s = spec, .err = err};
  fci_target_point *pt = fc_calloc((size_t)spec->steps, sizeof *pt);
  int *ok = fc_calloc((size_t)spec->steps, sizeof *ok);
  int rc = pt && ok ? search(&c, pt, ok, r) : fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  snprintf(r->fail_msg, sizeof r->fail_msg, "%s", c.fail);
  fc_free(pt);
  fc_free(ok);
  return rc;
}
