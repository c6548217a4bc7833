/* ferrocirc — iterative Newton solves: restarted GMRES on the augmented Newton matrix of sys.h,
 * right-preconditioned with its incomplete LU factorisation ILU(0).
 *
 * Why: the direct path factors the augmented matrix with KLU, whose work is linear in the
 * network's size on trees and chains but grows as N^1.5 on a network with a 2-D mesh of
 * channels (nested-dissection bound for a planar graph: fill O(N log N), work O(N^1.5); George
 * 1973, from memory). The matrix is diag(C) - gamma dQ/dp in the store rows: with the step size
 * set by the forcing, gamma times the largest conductance over the smallest compliance stays
 * bounded as a mesh grows, so the conditioning of the system, and with it the number of Krylov
 * iterations, does not grow with N; each iteration costs O(nnz). GMRES: Saad, Iterative Methods
 * for Sparse Linear Systems, 2nd ed. 2003, Algorithm 9.5 (right-preconditioned, restarted) with
 * Givens rotations (Sec. 6.5.3); ILU(0): ibid., Algorithm 10.4.
 *
 * The residual is measured as CVODE measures Newton corrections: weighted by its error weights
 * (state rows, volume or flow units); an algebraic node's row is a flow balance, whose residual
 * rho acts like an injected flow and moves gamma rho of volume into the neighbouring stores, so
 * it is weighted by gamma times the RMS of the store weights. Convergence: weighted 2-norm of
 * the residual at most tol, as CVODE asks of an iterative linear solver that takes scaling
 * vectors (SUNDIALS User Guide, CVODE "Linear solver interface": tol = eplifac tq[4] sqrt(N)). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "sys.h"

#define KRY_RESTART 20   /* Krylov vectors per cycle */
#define KRY_CYCLES 8     /* restarts before giving up */

#define NEW(ptr, n) ((ptr) = fc_calloc((size_t)(n) > 0 ? (size_t)(n) : 1, sizeof *(ptr)))

int fci_krylov_build(fci_sys *s)
{
  fci_krylov *K = fc_calloc(1, sizeof *K);
  if (!K) return FC_ENOMEM;
  s->kr = K;
  const fci_csc *A = &s->A;
  const int n = A->n, nnz = A->nnz, m = KRY_RESTART;
  K->n = n;
  if (!NEW(K->rp, n + 1) || !NEW(K->ci, nnz) || !NEW(K->map, nnz) || !NEW(K->dg, n) ||
      !NEW(K->a0, nnz) || !NEW(K->a1, nnz) || !NEW(K->av, nnz) || !NEW(K->lu, nnz) ||
      !NEW(K->iw, n) || !NEW(K->V, (size_t)(m + 1) * n) || !NEW(K->H, (m + 1) * m) ||
      !NEW(K->cs, m) || !NEW(K->sn, m) || !NEW(K->g, m + 1) || !NEW(K->y, m) || !NEW(K->z, n) ||
      !NEW(K->u, n) || !NEW(K->wt, n) || !NEW(K->res, n))
    return FC_ENOMEM;
  /* CSR copy of the CSC pattern: rows in ascending column order, as ILU(0) walks them. */
  for (int p = 0; p < nnz; p++) K->rp[A->rowind[p] + 1]++;
  for (int i = 0; i < n; i++) K->rp[i + 1] += K->rp[i];
  memcpy(K->iw, K->rp, (size_t)n * sizeof *K->iw);
  for (int j = 0; j < n; j++)
    for (int p = A->colptr[j]; p < A->colptr[j + 1]; p++) {
      int q = K->iw[A->rowind[p]]++;
      K->ci[q] = j;
      K->map[q] = p;
    }
  for (int i = 0; i < n; i++) {
    K->dg[i] = -1;
    for (int q = K->rp[i]; q < K->rp[i + 1]; q++) if (K->ci[q] == i) K->dg[i] = q;
    if (K->dg[i] < 0) return FC_ESOLVE; /* no diagonal entry: ILU(0) undefined, stay direct */
    K->iw[i] = -1;
  }
  K->gamma = 0;
  return FC_OK;
}

void fci_krylov_free(fci_krylov *K)
{
  if (!K) return;
  void *v[] = {K->rp, K->ci, K->map, K->dg, K->a0, K->a1, K->av, K->lu, K->iw, K->V, K->H,
               K->cs, K->sn, K->g, K->y, K->z, K->u, K->wt, K->res};
  for (size_t k = 0; k < sizeof v / sizeof v[0]; k++) fc_free(v[k]);
  fc_free(K);
}

/* ILU(0) of av into lu (CSR order); 0, or 1 on a zero or non-finite pivot. */
static int ilu0(fci_krylov *K)
{
  const int n = K->n;
  for (int q = 0; q < K->rp[n]; q++) K->lu[q] = K->av[K->map[q]];
  double *a = K->lu;
  int *iw = K->iw;
  for (int i = 0; i < n; i++) {
    for (int q = K->rp[i]; q < K->rp[i + 1]; q++) iw[K->ci[q]] = q;
    for (int q = K->rp[i]; q < K->dg[i]; q++) {
      int k = K->ci[q];
      a[q] /= a[K->dg[k]];
      for (int r = K->dg[k] + 1; r < K->rp[k + 1]; r++) {
        int at = iw[K->ci[r]];
        if (at >= 0) a[at] -= a[q] * a[r];
      }
    }
    for (int q = K->rp[i]; q < K->rp[i + 1]; q++) iw[K->ci[q]] = -1;
    double d = a[K->dg[i]];
    if (!(fabs(d) > 0) || !isfinite(d)) return 1;
  }
  return 0;
}

/* x <- (LU)^-1 x with the ILU(0) factors (L unit lower). */
static void ilu_solve(const fci_krylov *K, double *x)
{
  const int n = K->n;
  const double *a = K->lu;
  for (int i = 0; i < n; i++) {
    double v = x[i];
    for (int q = K->rp[i]; q < K->dg[i]; q++) v -= a[q] * x[K->ci[q]];
    x[i] = v;
  }
  for (int i = n - 1; i >= 0; i--) {
    double v = x[i];
    for (int q = K->dg[i] + 1; q < K->rp[i + 1]; q++) v -= a[q] * x[K->ci[q]];
    x[i] = v / a[K->dg[i]];
  }
}

/* y <- av x (CSC). */
static void matvec(const fci_sys *s, const double *av, const double *x, double *y)
{
  const fci_csc *A = &s->A;
  memset(y, 0, (size_t)A->n * sizeof *y);
  for (int j = 0; j < A->n; j++) {
    double xj = x[j];
    if (xj == 0) continue;
    for (int p = A->colptr[j]; p < A->colptr[j + 1]; p++) y[A->rowind[p]] += av[p] * xj;
  }
}

int fci_krylov_setup(fci_sys *s, double gamma)
{
  s->kr->gamma = 0; /* a new Jacobian: ILU(0) and the products are stale at any gamma */
  return fci_krylov_gamma(s, gamma);
}

int fci_krylov_gamma(fci_sys *s, double gamma)
{
  fci_krylov *K = s->kr;
  if (gamma == K->gamma) return 0;
  for (int p = 0; p < s->A.nnz; p++) K->av[p] = K->a0[p] + gamma * K->a1[p];
  K->gamma = gamma;
  K->psetups++;
  if (ilu0(K)) { K->gamma = 0; return 1; }
  return 0;
}

static double wnorm(int n, const double *w, const double *v)
{
  double s = 0;
  for (int i = 0; i < n; i++) s += (w[i] * v[i]) * (w[i] * v[i]);
  return sqrt(s);
}

int fci_krylov_solve(fci_sys *s, double *r, const double *w, double tol, int *iters)
{
  fci_krylov *K = s->kr;
  const int n = K->n, nx = s->nx, m = KRY_RESTART;
  double *wt = K->wt, *u = K->u, *z = K->z, *res = K->res, *V = K->V, *H = K->H;
  double ws = 0;
  for (int k = 0; k < s->ns; k++) ws += w[k] * w[k];
  ws = s->ns ? sqrt(ws / s->ns) : 1.0;
  for (int k = 0; k < n; k++) wt[k] = k < nx ? w[k] : K->gamma * ws;
  for (int k = 0; k < n; k++) { res[k] = k < nx ? r[k] : 0; u[k] = 0; }
  *iters = 0;
  double beta = wnorm(n, wt, res), beta0 = beta;
  int status = 2;
  for (int cyc = 0; cyc < KRY_CYCLES && status == 2; cyc++) {
    if (beta <= tol) { status = 0; break; }
    for (int i = 0; i < n; i++) V[i] = wt[i] * res[i] / beta;
    memset(K->g, 0, (size_t)(m + 1) * sizeof *K->g);
    K->g[0] = beta;
    int j = 0;
    for (; j < m; j++) {
      double *vj = V + (size_t)j * n, *vn = V + (size_t)(j + 1) * n;
      for (int i = 0; i < n; i++) z[i] = vj[i] / wt[i];
      ilu_solve(K, z);
      matvec(s, K->av, z, vn);
      for (int i = 0; i < n; i++) vn[i] *= wt[i];
      /* Modified Gram-Schmidt. */
      for (int l = 0; l <= j; l++) {
        const double *vl = V + (size_t)l * n;
        double h = 0;
        for (int i = 0; i < n; i++) h += vl[i] * vn[i];
        for (int i = 0; i < n; i++) vn[i] -= h * vl[i];
        H[l * m + j] = h;
      }
      double hn = 0;
      for (int i = 0; i < n; i++) hn += vn[i] * vn[i];
      hn = sqrt(hn);
      H[(j + 1) * m + j] = hn;
      if (hn > 0) for (int i = 0; i < n; i++) vn[i] /= hn;
      for (int l = 0; l < j; l++) {
        double a = H[l * m + j], b = H[(l + 1) * m + j];
        H[l * m + j] = K->cs[l] * a + K->sn[l] * b;
        H[(l + 1) * m + j] = -K->sn[l] * a + K->cs[l] * b;
      }
      double a = H[j * m + j], b = H[(j + 1) * m + j], d = hypot(a, b);
      if (!(d > 0)) { j++; break; }
      K->cs[j] = a / d;
      K->sn[j] = b / d;
      H[j * m + j] = d;
      H[(j + 1) * m + j] = 0;
      K->g[j + 1] = -K->sn[j] * K->g[j];
      K->g[j] = K->cs[j] * K->g[j];
      ++*iters;
      if (fabs(K->g[j + 1]) <= tol || hn == 0) { j++; break; }
    }
    /* y = H^-1 g (upper triangular j x j), then u += M^-1 S^-1 V y. */
    for (int l = j - 1; l >= 0; l--) {
      double v = K->g[l];
      for (int c = l + 1; c < j; c++) v -= H[l * m + c] * K->y[c];
      K->y[l] = v / H[l * m + l];
    }
    memset(z, 0, (size_t)n * sizeof *z);
    for (int l = 0; l < j; l++) {
      const double *vl = V + (size_t)l * n;
      for (int i = 0; i < n; i++) z[i] += K->y[l] * vl[i];
    }
    for (int i = 0; i < n; i++) z[i] /= wt[i];
    ilu_solve(K, z);
    for (int i = 0; i < n; i++) u[i] += z[i];
    /* True residual, for the test and the next cycle. */
    matvec(s, K->av, u, res);
    for (int i = 0; i < n; i++) res[i] = (i < nx ? r[i] : 0) - res[i];
    beta = wnorm(n, wt, res);
    if (!isfinite(beta)) break;
    if (beta <= tol) status = 0;
  }
  K->iters += *iters;
  K->solves++;
  if (status == 2 && isfinite(beta) && beta < beta0) status = 1;
  if (status == 2) return 2;
  /* Store rows were solved for pressure changes; the states are volumes: dV = C dp. */
  for (int k = 0; k < nx; k++) r[k] = k < s->ns ? s->Cpre[k] * u[k] : u[k];
  return status;
}

/* AUTO: iterative when one LU factorisation would cost more than KRY_AUTO_FLOPS flops per
 * nonzero of the matrix (KLU's estimate from its AMD ordering). A tree or a chain factors with
 * no fill, a few flops per nonzero, and stays direct; see docs/performance.md for the
 * measurement behind the threshold. */
#define KRY_AUTO_FLOPS 300.0

int fci_sys_linear_choice(fci_sys *s, int choice)
{
  if (choice == FCI_LS_DIRECT || s->nx == 0) return FCI_LS_DIRECT;
  if (choice == FCI_LS_AUTO) {
    if (fci_klu_analyze(&s->ak, &s->A)) return FCI_LS_DIRECT;
    double per = s->ak.sym->est_flops / (s->A.nnz > 0 ? s->A.nnz : 1);
    if (!(per > KRY_AUTO_FLOPS)) return FCI_LS_DIRECT;
  }
  if (fci_krylov_build(s)) {
    fci_krylov_free(s->kr);
    s->kr = NULL;
    return FCI_LS_DIRECT;
  }
  return FCI_LS_ITERATIVE;
}
