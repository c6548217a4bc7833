/* ferrocirc — a square-root factor of a covariance matrix, for drawing correlated normal
 * deviates x = mu + L z with z ~ N(0, I), so that cov(x) = L L^T = C (e.g. Gentle 2003, Random
 * Number Generation and Monte Carlo Methods, §5.3.1 [from memory]).
 *
 * C is first scaled to its correlation matrix R = D^-1 C D^-1, D = diag(sqrt(C_ii)), so that the
 * tests below do not depend on the units of the parameters (a calibration mixes A/m and m^3,
 * whose variances differ by 23 orders of magnitude). Then:
 *   - positive definite R (every Cholesky pivot above PIVOT): L = D chol(R), lower triangular
 *     (Golub & Van Loan 2013, alg. 4.2.1);
 *   - a parameter with zero variance: its row and column of R are zero, it stays at its mean
 *     (a zero Cholesky column, exact);
 *   - otherwise R is at best positive semi-definite (a combination of parameters the data did not
 *     determine, or a hand-rounded correlation of 1): L = D V diag(sqrt(max(w, 0))) from the
 *     symmetric eigen-decomposition R = V diag(w) V^T (Jacobi, calibrate_linalg.c). Eigenvalues
 *     down to -NEG_TOL are rounding and are clipped to 0, so the draws stay in the subspace the
 *     data determine; a more negative one means C is not a covariance at all, which is an error.
 * PIVOT = 1e-10 corresponds to |rho| > 1 - 5e-11 for two parameters: the pair is then drawn as
 * exactly dependent. NEG_TOL = 1e-6 admits correlations rounded to 6 digits. */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "study_int.h"
#include "valve/calibrate.h"

#define PIVOT   1e-10
#define NEG_TOL 1e-6
#define SYM_TOL 1e-9

/* Cholesky of the m x m matrix r into l (lower); 0, or -1 at a pivot <= PIVOT of a parameter
 * that has variance. */
static int cholesky(int m, const double *r, const double *d, double *l)
{
  memset(l, 0, (size_t)(m * m) * sizeof *l);
  for (int j = 0; j < m; j++) {
    if (d[j] == 0.0) continue; /* zero row and column of r: the parameter is fixed */
    double s = r[j * m + j];
    for (int k = 0; k < j; k++) s -= l[j * m + k] * l[j * m + k];
    if (!(s > PIVOT)) return -1;
    l[j * m + j] = sqrt(s);
    for (int i = j + 1; i < m; i++) {
      double t = r[i * m + j];
      for (int k = 0; k < j; k++) t -= l[i * m + k] * l[j * m + k];
      l[i * m + j] = t / l[j * m + j];
    }
  }
  return 0;
}

/* L = V diag(sqrt(max(w, 0))) of r; -1 if an eigenvalue is below -NEG_TOL. */
static int eigen_root(int m, const double *r, double *l, int *rank, double *wmin)
{
  double a[FCI_MC_MAX_JOINT * FCI_MC_MAX_JOINT], v[FCI_MC_MAX_JOINT * FCI_MC_MAX_JOINT];
  double w[FCI_MC_MAX_JOINT];
  memcpy(a, r, (size_t)(m * m) * sizeof *a);
  fci_cal_eigen(m, a, w, v);
  *wmin = w[0];
  if (w[0] < -NEG_TOL) return -1;
  *rank = 0;
  for (int j = 0; j < m; j++) {
    double s = w[j] > 0.0 ? sqrt(w[j]) : 0.0;
    *rank += w[j] > PIVOT;
    for (int i = 0; i < m; i++) l[i * m + j] = v[i * m + j] * s;
  }
  return 0;
}

int fci_mc_cov_factor(int m, const double *c, double *l, int *rank, char *why, size_t nwhy)
{
  double d[FCI_MC_MAX_JOINT], r[FCI_MC_MAX_JOINT * FCI_MC_MAX_JOINT];
  if (m < 1 || m > FCI_MC_MAX_JOINT) {
    snprintf(why, nwhy, "%d parameters; at most %d can be drawn jointly", m, FCI_MC_MAX_JOINT);
    return -1;
  }
  for (int i = 0; i < m; i++) {
    double cii = c[i * m + i];
    if (!isfinite(cii) || cii < 0.0) {
      snprintf(why, nwhy, "variance [%d][%d] = %g: expected a finite number >= 0", i, i, cii);
      return -1;
    }
    d[i] = sqrt(cii);
  }
  for (int i = 0; i < m; i++)
    for (int j = 0; j < m; j++) {
      double cij = c[i * m + j], cji = c[j * m + i], s = d[i] * d[j];
      if (!isfinite(cij) || fabs(cij - cji) > SYM_TOL * s) {
        snprintf(why, nwhy, "[%d][%d] = %g and [%d][%d] = %g: expected a finite symmetric "
                 "matrix", i, j, cij, j, i, cji);
        return -1;
      }
      if (s == 0.0 && cij != 0.0) {
        snprintf(why, nwhy, "[%d][%d] = %g with a zero variance: not positive semi-definite",
                 i, j, cij);
        return -1;
      }
      r[i * m + j] = i == j ? (d[i] > 0.0) : s > 0.0 ? 0.5 * (cij + cji) / s : 0.0;
    }
  double lr[FCI_MC_MAX_JOINT * FCI_MC_MAX_JOINT], wmin = 0.0;
  int nfixed = 0;
  for (int i = 0; i < m; i++) nfixed += d[i] == 0.0;
  *rank = m - nfixed;
  if (cholesky(m, r, d, lr) && eigen_root(m, r, lr, rank, &wmin)) {
    snprintf(why, nwhy, "not positive semi-definite (smallest eigenvalue of the correlation "
             "matrix %.3g)", wmin);
    return -1;
  }
  for (int i = 0; i < m; i++)
    for (int j = 0; j < m; j++) l[i * m + j] = d[i] * lr[i * m + j];
  return 0;
}
