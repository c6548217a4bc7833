/* ferrocirc — weighted nonlinear least squares for valve calibration (see calibrate.h).
 *
 * Minimiser: MINPACK lmdif (Levenberg-Marquardt with a trust region and forward-difference
 * Jacobian; Moré 1978) from cminpack, on internal variables u:
 *   unbounded  theta = theta0 (1 + u)                (u is a relative change; theta0 != 0)
 *   bounded    theta = lo + (hi - lo)(1 + sin u) / 2 (the sine transform of James & Roos 1975)
 * so that lmdif sees variables of order one and never leaves the bounds. The sine transform
 * flattens the objective at a bound (d theta / du = 0 there): a value that ends at a bound is
 * reported as such and its standard error is not meaningful.
 * The covariance is computed afterwards from a central-difference Jacobian in theta itself,
 * which is what the standard errors refer to. */
#include <cminpack.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "calibrate.h"

#define FTOL 1e-10
#define XTOL 1e-10
#define EPSFCN 1e-10  /* forward step sqrt(1e-10) = 1e-5 of u: well above the model's noise */
#define FACTOR 0.5    /* first step at most half of the scale: keeps trial designs sane */
#define JSTEP 1e-4    /* relative step of the central differences for the covariance */

typedef struct ctx {
  fci_cal_model *m;
  const fci_cal_data *d;
  const unsigned char *use;
  int     p, n;
  int    *idx;        /* [n] value index of each residual */
  double *theta;      /* [p] scratch */
  double *pred;       /* [nValue] scratch */
  fc_error *err;
  int     failed;
} ctx;

static double to_theta(const fci_cal_param *q, double u)
{
  if (q->bounded) return q->lo + (q->hi - q->lo) * 0.5 * (1.0 + sin(u));
  return q->start * (1.0 + u);
}

static double to_u(const fci_cal_param *q, double t)
{
  if (q->bounded) return asin(fmin(1.0, fmax(-1.0, 2.0 * (t - q->lo) / (q->hi - q->lo) - 1.0)));
  return t / q->start - 1.0;
}

static double sigma_of(const fci_cal_data *d, int k)
{
  return d->has_sigma ? d->row[d->vrow[k]].sigma : 1.0;
}

/* Weighted residuals at theta (c->theta) into r[n]. */
static int residuals(ctx *c, const double *theta, double *r)
{
  int rc = fci_cal_predict(c->m, theta, c->use, c->pred, c->err);
  if (rc) return rc;
  for (int j = 0; j < c->n; j++) {
    int k = c->idx[j];
    r[j] = (c->pred[k] - c->d->row[c->d->vrow[k]].meas[c->d->vq[k]]) / sigma_of(c->d, k);
  }
  return FC_OK;
}

static int lm_fcn(void *pv, int m, int n, const double *x, double *fvec, int iflag)
{
  ctx *c = pv;
  (void)m;
  if (iflag == 0) return 0;
  for (int i = 0; i < n; i++) c->theta[i] = to_theta(fci_cal_model_param(c->m, i), x[i]);
  if (residuals(c, c->theta, fvec)) {
    c->failed = 1;
    return -1;
  }
  return 0;
}

/* Central-difference Jacobian of the weighted residuals in theta; one-sided at a bound. */
static int jacobian(ctx *c, const double *theta, double *jac)
{
  double *rp = c->pred + c->d->nValue, *rm = rp + c->n, t[16];
  for (int i = 0; i < c->p; i++) {
    const fci_cal_param *q = fci_cal_model_param(c->m, i);
    double h = JSTEP * fmax(fabs(theta[i]), fabs(q->start));
    double up = theta[i] + h, dn = theta[i] - h;
    if (q->bounded && up > q->hi) up = theta[i];
    if (q->bounded && dn < q->lo) dn = theta[i];
    memcpy(t, theta, (size_t)c->p * sizeof *t);
    t[i] = up;
    int rc = residuals(c, t, rp);
    t[i] = dn;
    if (!rc) rc = residuals(c, t, rm);
    if (rc) return rc;
    for (int j = 0; j < c->n; j++) jac[j * c->p + i] = (rp[j] - rm[j]) / (up - dn);
  }
  return FC_OK;
}

static int count_used(const fci_cal_data *d, const unsigned char *use, int *idx, int *rows)
{
  int n = 0;
  *rows = 0;
  for (int i = 0; i < d->nRow; i++) *rows += !use || use[i];
  for (int k = 0; k < d->nValue; k++)
    if (!use || use[d->vrow[k]]) idx[n++] = k;
  return n;
}

static int alloc_fit(fci_cal_fit *f, int p, int nv)
{
  f->theta = fc_calloc((size_t)p, sizeof(double));
  f->se = fc_calloc((size_t)p, sizeof(double));
  f->cov = fc_calloc((size_t)p * p, sizeof(double));
  f->corr = fc_calloc((size_t)p * p, sizeof(double));
  f->weak = fc_calloc((size_t)p, sizeof(double));
  f->pred = fc_calloc((size_t)nv + 1, sizeof(double));
  f->ident = fc_calloc((size_t)p, sizeof(int));
  f->at_bound = fc_calloc((size_t)p, sizeof(int));
  return f->theta && f->se && f->cov && f->corr && f->weak && f->pred && f->ident && f->at_bound;
}

void fci_cal_fit_free(fci_cal_fit *f)
{
  if (!f) return;
  fc_free(f->theta);
  fc_free(f->se);
  fc_free(f->cov);
  fc_free(f->corr);
  fc_free(f->weak);
  fc_free(f->pred);
  fc_free(f->ident);
  fc_free(f->at_bound);
  fc_free(f);
}

/* Run lmdif from theta0; on return c->theta holds the optimum. */
static int minimise(ctx *c, const double *theta0, double *work, fci_cal_fit *f)
{
  int p = c->p, n = c->n, ipvt[16];
  double x[16], diag[16], *fvec = work, *fjac = fvec + n, *qtf = fjac + (size_t)n * p;
  double *wa1 = qtf + p, *wa2 = wa1 + p, *wa3 = wa2 + p, *wa4 = wa3 + p;
  for (int i = 0; i < p; i++) {
    x[i] = to_u(fci_cal_model_param(c->m, i), theta0[i]);
    diag[i] = 1.0;
  }
  f->info = lmdif(lm_fcn, c, n, p, x, fvec, FTOL, XTOL, 0.0, 200 * (p + 1), EPSFCN, diag, 2,
                  FACTOR, 0, &f->nfev, fjac, n, ipvt, qtf, wa1, wa2, wa3, wa4);
  if (c->failed) {
    static const char hint[] = "; set --bounds to keep the fit in range";
    size_t len = strlen(c->err->msg);
    if (len + sizeof hint <= sizeof c->err->msg) memcpy(c->err->msg + len, hint, sizeof hint);
    return c->err->code;
  }
  if (f->info == 0) return fc_fail(c->err, FC_EPARAM, NULL, "lmdif: improper input");
  for (int i = 0; i < p; i++) c->theta[i] = to_theta(fci_cal_model_param(c->m, i), x[i]);
  return FC_OK;
}

/* Residuals, chi-square, Jacobian and covariance at the optimum c->theta. */
static int finish(ctx *c, double *work, fci_cal_fit *f)
{
  int p = c->p, n = c->n;
  double *r = work, *jac = r + n;
  memcpy(f->theta, c->theta, (size_t)p * sizeof *f->theta);
  int rc = residuals(c, f->theta, r);
  if (!rc) memcpy(f->pred, c->pred, (size_t)c->d->nValue * sizeof *f->pred);
  if (!rc) rc = jacobian(c, f->theta, jac);
  if (rc) return rc;
  f->chi2 = 0.0;
  for (int j = 0; j < n; j++) f->chi2 += r[j] * r[j];
  f->redchi2 = f->chi2 / f->dof;
  fci_cal_covariance(n, p, jac, c->d->has_sigma ? 1.0 : f->redchi2, f);
  for (int i = 0; i < p; i++) {
    const fci_cal_param *q = fci_cal_model_param(c->m, i);
    double s = q->bounded ? (f->theta[i] - q->lo) / (q->hi - q->lo) : 0.5;
    f->at_bound[i] = s < 1e-6 || s > 1.0 - 1e-6;
  }
  return FC_OK;
}

static int check_sizes(const fci_cal_model *m, int n, int rows, int p, fc_error *err)
{
  for (int i = 0; i < p; i++) {
    const fci_cal_param *q = fci_cal_model_param(m, i);
    if (!q->bounded && q->start == 0.0)
      return fc_fail(err, FC_EUSAGE, NULL, "--fit %s: the starting value is 0; give --bounds "
                     "%s=LO..HI to set its range", q->path, q->path);
  }
  if (n > p && rows >= p) return FC_OK;
  fc_fail(err, FC_EPARAM, NULL, "%d measured value%s in %d row%s for %d fitted parameter%s: "
          "need more values than parameters and at least one row per parameter", n,
          n == 1 ? "" : "s", rows, rows == 1 ? "" : "s", p, p == 1 ? "" : "s");
  fc_error_set_file(err, fci_cal_model_data(m)->file, 0, 0);
  return FC_EPARAM;
}

int fci_cal_fit_run(fci_cal_model *m, const unsigned char *use, const double *theta0,
                    fci_cal_fit **out, fc_error *err)
{
  const fci_cal_data *d = fci_cal_model_data(m);
  int p = fci_cal_model_nparam(m), rows, rc;
  double start[16];
  ctx c = {m, d, use, p, 0, NULL, NULL, NULL, err, 0};
  *out = NULL;
  fci_cal_fit *f = fc_calloc(1, sizeof *f);
  c.idx = fc_calloc((size_t)d->nValue + 1, sizeof *c.idx);
  c.theta = fc_calloc((size_t)p, sizeof *c.theta);
  c.pred = fc_calloc((size_t)d->nValue * 3 + 1, sizeof *c.pred);
  double *work = fc_calloc((size_t)(d->nValue + 1) * (p + 2) + 4 * p + 1, sizeof *work);
  if (!f || !c.idx || !c.theta || !c.pred || !work || !alloc_fit(f, p, d->nValue)) {
    rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
    goto fail;
  }
  c.n = count_used(d, use, c.idx, &rows);
  if ((rc = check_sizes(m, c.n, rows, p, err))) goto fail;
  f->p = p;
  f->n = c.n;
  f->dof = c.n - p;
  for (int i = 0; i < p; i++) start[i] = theta0 ? theta0[i] : fci_cal_model_param(m, i)->start;
  rc = minimise(&c, start, work, f);
  if (!rc) rc = finish(&c, work, f);
fail:
  fc_free(c.idx);
  fc_free(c.theta);
  fc_free(c.pred);
  fc_free(work);
  if (rc) fci_cal_fit_free(f);
  else *out = f;
  return rc;
}

int fci_cal_cross_validate(fci_cal_model *m, const fci_cal_fit *full, double *loo,
                           fc_error *err)
{
  const fci_cal_data *d = fci_cal_model_data(m);
  unsigned char *use = fc_calloc((size_t)d->nRow, 1), *one = fc_calloc((size_t)d->nRow, 1);
  double *pred = fc_calloc((size_t)d->nValue + 1, sizeof *pred);
  int rc = (!use || !one || !pred) ? fc_fail(err, FC_ENOMEM, NULL, "out of memory") : FC_OK;
  for (int k = 0; k < d->nValue; k++) loo[k] = NAN;
  for (int r = 0; r < d->nRow && !rc; r++) {
    int n = 0, rows = d->nRow - 1;
    for (int k = 0; k < d->nValue; k++) n += d->vrow[k] != r;
    if (n <= full->p || rows < full->p) continue; /* too few left: no prediction for r */
    memset(use, 1, (size_t)d->nRow);
    use[r] = 0;
    memset(one, 0, (size_t)d->nRow);
    one[r] = 1;
    fci_cal_fit *f = NULL;
    rc = fci_cal_fit_run(m, use, full->theta, &f, err);
    if (!rc) rc = fci_cal_predict(m, f->theta, one, pred, err);
    for (int k = 0; !rc && k < d->nValue; k++)
      if (d->vrow[k] == r) loo[k] = pred[k] - d->row[r].meas[d->vq[k]];
    fci_cal_fit_free(f);
  }
  fc_free(use);
  fc_free(one);
  fc_free(pred);
  return rc;
}
