/* ferrocirc — compressed-column patterns from stamped entries, and KLU factorisation.
 *
 * Patterns are built once per network; afterwards values are stamped through the slot array,
 * so assembling is a linear pass with no search. KLU (Davis & Palamadai Natarajan 2010, ACM TOMS
 * 37:36) is called directly because the augmented Newton matrix is not CVODE's matrix. */
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "sys.h"

static const int *sort_rows; /* qsort has no context argument; build is single-threaded per call */

static int by_row(const void *a, const void *b)
{
  int ra = sort_rows[*(const int *)a], rb = sort_rows[*(const int *)b];
  return (ra > rb) - (ra < rb);
}

int fci_csc_build(fci_csc *c, int n, int m, const int *rows, const int *cols, int *slot)
{
  memset(c, 0, sizeof *c);
  int *cnt = fc_calloc((size_t)n + 1, sizeof *cnt);
  int *ord = fc_malloc((size_t)(m ? m : 1) * sizeof *ord);
  c->colptr = fc_calloc((size_t)n + 1, sizeof *c->colptr);
  c->rowind = fc_malloc((size_t)(m ? m : 1) * sizeof *c->rowind);
  if (!cnt || !ord || !c->colptr || !c->rowind) goto fail;
  for (int k = 0; k < m; k++) cnt[cols[k] + 1]++;
  for (int j = 0; j < n; j++) cnt[j + 1] += cnt[j];
  int *pos = fc_malloc((size_t)(n ? n : 1) * sizeof *pos);
  if (!pos) goto fail;
  memcpy(pos, cnt, (size_t)n * sizeof *pos);
  for (int k = 0; k < m; k++) ord[pos[cols[k]]++] = k;
  fc_free(pos);
  sort_rows = rows;
  int nnz = 0;
  for (int j = 0; j < n; j++) {
    qsort(ord + cnt[j], (size_t)(cnt[j + 1] - cnt[j]), sizeof *ord, by_row);
    c->colptr[j] = nnz;
    for (int t = cnt[j]; t < cnt[j + 1]; t++) {
      int k = ord[t];
      if (nnz == c->colptr[j] || c->rowind[nnz - 1] != rows[k]) c->rowind[nnz++] = rows[k];
      slot[k] = nnz - 1;
    }
  }
  c->colptr[n] = nnz;
  c->n = n;
  c->nnz = nnz;
  c->val = fc_calloc((size_t)(nnz ? nnz : 1), sizeof *c->val);
  if (!c->val) goto fail;
  fc_free(cnt);
  fc_free(ord);
  return FC_OK;
fail:
  fc_free(cnt);
  fc_free(ord);
  fci_csc_free(c);
  return FC_ENOMEM;
}

void fci_csc_free(fci_csc *c)
{
  fc_free(c->colptr);
  fc_free(c->rowind);
  fc_free(c->val);
  memset(c, 0, sizeof *c);
}

int fci_klu_analyze(fci_klu *k, const fci_csc *c)
{
  if (k->sym) return FC_OK;
  klu_defaults(&k->common);
  k->sym = klu_analyze(c->n, c->colptr, c->rowind, &k->common);
  return k->sym ? FC_OK : FC_ESOLVE;
}

int fci_klu_factor(fci_klu *k, const fci_csc *c, int refactor)
{
  if (fci_klu_analyze(k, c)) return FC_ESOLVE;
  if (refactor && k->num) {
    /* Without row scaling (scale 0), KLU still checks the matrix for bad and duplicate indices
     * at every refactorisation; the pattern is ours, fixed, and was checked by the first
     * klu_factor, so refactorisations skip it (scale < 0: "no scaling, do not compute Rs, and
     * do not check input matrix", KLU source, klu_scale.c). */
    int scale = k->common.scale;
    if (scale == 0) k->common.scale = -1;
    int ok = klu_refactor(c->colptr, c->rowind, c->val, k->sym, k->num, &k->common);
    k->common.scale = scale;
    if (ok && klu_rcond(k->sym, k->num, &k->common) && k->common.rcond > 1e-13) return FC_OK;
    /* Pivots chosen for earlier values went bad: factor afresh. */
  }
  if (k->num) klu_free_numeric(&k->num, &k->common);
  k->num = klu_factor(c->colptr, c->rowind, c->val, k->sym, &k->common);
  if (!k->num || k->common.status == KLU_SINGULAR) return FC_ESOLVE;
  return FC_OK;
}

int fci_klu_solve(fci_klu *k, const fci_csc *c, double *b)
{
  if (!k->num) return FC_ESOLVE;
  return klu_solve(k->sym, k->num, c->n, 1, b, &k->common) ? FC_OK : FC_ESOLVE;
}

void fci_klu_free(fci_klu *k)
{
  if (k->num) klu_free_numeric(&k->num, &k->common);
  if (k->sym) klu_free_symbolic(&k->sym, &k->common);
}
