/* ferrocirc — the small dense linear algebra of a calibration: eigen-decomposition of the p x p
 * normal matrix, covariance, correlation and identifiability.
 *
 * The normal matrix A = J^T J of the weighted Jacobian is first scaled to unit diagonal,
 * C = D A D with D = diag(A_ii^-1/2), so that its eigenvalues do not depend on the units of the
 * parameters (Belsley, Kuh & Welsch 1980, Regression Diagnostics, ch. 3: column equilibration
 * before condition indexes [from memory]). Its condition number kappa = w_max / w_min is the
 * square of their largest condition index; they read indexes above 30 (kappa > 1e3) as a strong
 * dependency. We call a parameter
 *   weak              when kappa > 1e3 and it takes part (|v_i| > 0.1) in the weakest
 *                     eigenvector, or when its standard error exceeds its value;
 *   not identifiable  when kappa > 1e8, or A_ii = 0 (the data do not depend on it at all).
 * 1e8: the central-difference Jacobian has a relative error of about 1e-8 (truncation, step
 * 1e-4) or more (the model's own numerical noise divided by the step), and an eigenvalue of C
 * below that relative size cannot be told from zero. The covariance C^-1 uses only eigenvalues
 * above 1e-12 w_max
 * (pseudo-inverse); a parameter in a dropped direction gets an infinite standard error. */
#include <math.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "calibrate.h"

#define WEAK_KAPPA 1e3
#define NOT_KAPPA  1e8
#define WEAK_CORR  0.99
#define DROP       1e-12

/* One Jacobi rotation zeroing a[p][q] (Golub & Van Loan 2013, alg. 8.5.1 sym.schur2). */
static void rotate(int n, double *a, double *v, int p, int q)
{
  double apq = a[p * n + q];
  if (apq == 0.0) return;
  double tau = (a[q * n + q] - a[p * n + p]) / (2.0 * apq);
  double t = (tau >= 0 ? 1.0 : -1.0) / (fabs(tau) + sqrt(1.0 + tau * tau));
  double c = 1.0 / sqrt(1.0 + t * t), s = t * c;
  for (int k = 0; k < n; k++) { /* A <- A J (columns p, q) */
    double akp = a[k * n + p], akq = a[k * n + q];
    a[k * n + p] = c * akp - s * akq;
    a[k * n + q] = s * akp + c * akq;
  }
  for (int k = 0; k < n; k++) { /* A <- J^T A (rows p, q) */
    double apk = a[p * n + k], aqk = a[q * n + k];
    a[p * n + k] = c * apk - s * aqk;
    a[q * n + k] = s * apk + c * aqk;
  }
  for (int k = 0; k < n; k++) {
    double vkp = v[k * n + p], vkq = v[k * n + q];
    v[k * n + p] = c * vkp - s * vkq;
    v[k * n + q] = s * vkp + c * vkq;
  }
}

void fci_cal_eigen(int n, double *a, double *w, double *v)
{
  for (int i = 0; i < n * n; i++) v[i] = (i % (n + 1)) == 0;
  for (int sweep = 0; sweep < 100; sweep++) {
    double off = 0.0, diag = 0.0;
    for (int i = 0; i < n; i++)
      for (int j = 0; j < n; j++) {
        double x2 = a[i * n + j] * a[i * n + j];
        if (i == j) diag += x2;
        else off += x2;
      }
    if (off <= 1e-30 * diag || off == 0.0) break;
    for (int p = 0; p < n - 1; p++)
      for (int q = p + 1; q < n; q++) rotate(n, a, v, p, q);
  }
  for (int i = 0; i < n; i++) w[i] = a[i * n + i];
  for (int i = 1; i < n; i++) /* insertion sort, ascending, columns of v along */
    for (int j = i; j > 0 && w[j] < w[j - 1]; j--) {
      double t = w[j]; w[j] = w[j - 1]; w[j - 1] = t;
      for (int k = 0; k < n; k++) {
        t = v[k * n + j]; v[k * n + j] = v[k * n + j - 1]; v[k * n + j - 1] = t;
      }
    }
}

/* C^-1 by the eigen-decomposition, dropping eigenvalues below DROP * w_max; *dropped: the
 * parameters that take part in a dropped direction. */
static void pseudo_inverse(int p, const double *w, const double *v, double *inv,
                           unsigned char *dropped)
{
  if (p <= 0) return;
  size_t np = (size_t)p;
  double wmax = w[p - 1];
  memset(inv, 0, np * np * sizeof *inv);
  memset(dropped, 0, np);
  for (int e = 0; e < p; e++) {
    if (!(w[e] > DROP * wmax)) {
      for (int i = 0; i < p; i++) dropped[i] |= fabs(v[i * p + e]) > 0.1;
      continue;
    }
    for (int i = 0; i < p; i++)
      for (int j = 0; j < p; j++) inv[i * p + j] += v[i * p + e] * v[j * p + e] / w[e];
  }
}

static void classify(int p, const double *w, const double *v, const unsigned char *drop,
                     fci_cal_fit *f)
{
  f->cond = w[0] > 0 ? w[p - 1] / w[0] : INFINITY;
  f->identifiable = 1;
  for (int i = 0; i < p; i++) {
    f->weak[i] = v[i * p + 0];
    int part = fabs(f->weak[i]) > 0.1;
    f->ident[i] = FCI_CAL_OK;
    if ((f->cond > WEAK_KAPPA && part) || !(f->se[i] <= fabs(f->theta[i])))
      f->ident[i] = FCI_CAL_WEAK;
    for (int j = 0; j < p; j++)
      if (j != i && fabs(f->corr[i * p + j]) > WEAK_CORR) f->ident[i] = FCI_CAL_WEAK;
    if ((f->cond > NOT_KAPPA && part) || drop[i] || isinf(f->se[i]))
      f->ident[i] = FCI_CAL_NOT_IDENTIFIABLE;
    if (f->ident[i] == FCI_CAL_NOT_IDENTIFIABLE) f->identifiable = 0;
  }
}

void fci_cal_covariance(int n, int p, const double *j, double s2, fci_cal_fit *f)
{
  double a[256], vv[256], w[16], inv[256], dsc[16];
  unsigned char drop[16];
  for (int r = 0; r < p; r++)
    for (int c = 0; c < p; c++) {
      double s = 0.0;
      for (int k = 0; k < n; k++) s += j[k * p + r] * j[k * p + c];
      a[r * p + c] = s;
    }
  for (int i = 0; i < p; i++) dsc[i] = a[i * p + i] > 0 ? 1.0 / sqrt(a[i * p + i]) : 0.0;
  for (int r = 0; r < p; r++)
    for (int c = 0; c < p; c++)
      a[r * p + c] = (dsc[r] > 0 && dsc[c] > 0) ? a[r * p + c] * dsc[r] * dsc[c] : 0.0;
  fci_cal_eigen(p, a, w, vv);
  pseudo_inverse(p, w, vv, inv, drop);
  for (int r = 0; r < p; r++)
    for (int c = 0; c < p; c++) f->cov[r * p + c] = s2 * dsc[r] * inv[r * p + c] * dsc[c];
  for (int i = 0; i < p; i++)
    f->se[i] = (dsc[i] > 0 && !drop[i]) ? sqrt(f->cov[i * p + i]) : INFINITY;
  for (int r = 0; r < p; r++)
    for (int c = 0; c < p; c++)
      f->corr[r * p + c] = (isfinite(f->se[r]) && isfinite(f->se[c]) && f->se[r] > 0 &&
                            f->se[c] > 0) ? f->cov[r * p + c] / (f->se[r] * f->se[c]) : NAN;
  classify(p, w, vv, drop, f);
}
