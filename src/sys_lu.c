/* ferrocirc — sparse LU without pivoting on a fixed pattern: see sys_lu.h for when and why.
 *
 * Everything index-like is computed once (fci_lu_new): the AMD order, the patterns of L and U,
 * the place in the factors where each entry of A starts, and the list of updates. A
 * factorisation then loads A into the factors' places and runs, column by column, its updates
 * and its pivot; a solve is two flat sweeps over the entries of L and U. */
#include "sys_lu.h"

#include <amd.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/error.h"

struct fci_lu {
  int n, nl;            /* order; entries of L, as many as of U (the pattern is symmetric) */
  int *perm;            /* pivot k is original row and column perm[k] (AMD) */
  int *up, *ui, *uj;    /* U strictly above the diagonal, by column, rows ascending; columns
                         * (up, uj, li, lj only while fci_lu_new builds the lists) */
  int *lp, *li, *lj;    /* L strictly below the diagonal (unit diagonal), likewise */
  double *V;            /* the factors in place: D (n), then L (nl), then U' (nl) */
  int na, *amap;        /* where each entry of A starts in V */
  int nfill, *fill;     /* the places of V no entry of A starts in (fill-in) */
  int *opc;             /* the updates of column j: opc[j]..opc[j + 1] */
  int *otgt, *ol, *ou;  /* update o: V[otgt] -= V[ol] V[ou], an entry of L(:, k) times the
                         * entry U(k, j) (before its division by the pivot) */
  int *sl, *slc, *su, *suc; /* the solve's rows and columns of L and U', original numbering */
  double *dinvp, *dinvo; /* 1 / D, by pivot and by original index */
};

/* Below-diagonal pattern of the permuted, symmetrised matrix, by column: S(:, j) holds the
 * rows i < j with A(i, j) or A(j, i) nonzero, once each. */
static int upper_pattern(fci_lu *f, const int *colptr, const int *rowind, const int *iperm,
                         int **sp, int **si)
{
  int n = f->n, nnz = colptr[n];
  int *cnt = fc_calloc((size_t)n + 1, sizeof *cnt), *mark = fc_malloc((size_t)(n ? n : 1) * sizeof *mark);
  *sp = cnt;
  *si = fc_malloc((size_t)(nnz ? nnz : 1) * sizeof **si);
  if (!cnt || !mark || !*si) { fc_free(mark); return FC_ENOMEM; }
  for (int pass = 0; pass < 2; pass++) {
    int *pos = pass ? mark : NULL;
    if (pass) {
      for (int j = 0; j < n; j++) cnt[j + 1] += cnt[j];
      memcpy(mark, cnt, (size_t)n * sizeof *mark);
    }
    for (int c = 0; c < n; c++)
      for (int p = colptr[c]; p < colptr[c + 1]; p++) {
        int a = iperm[rowind[p]], b = iperm[c];
        if (a == b) continue;
        int lo = a < b ? a : b, hi = a < b ? b : a;
        if (!pass) cnt[hi + 1]++;
        else (*si)[pos[hi]++] = lo;
      }
  }
  /* duplicates (an entry and its transpose both present) removed, columns compacted */
  for (int j = 0; j < n; j++) mark[j] = -1;
  int q = 0;
  for (int j = 0; j < n; j++) {
    int start = cnt[j];
    cnt[j] = q;
    for (int p = start; p < cnt[j + 1]; p++) {
      int i = (*si)[p];
      if (mark[i] != j) { mark[i] = j; (*si)[q++] = i; }
    }
  }
  cnt[n] = q;
  fc_free(mark);
  return FC_OK;
}

/* Elimination tree of the symmetric pattern (Liu's algorithm with path compression; Davis 2006,
 * cs_etree). */
static void etree(int n, const int *sp, const int *si, int *parent, int *anc)
{
  for (int j = 0; j < n; j++) {
    parent[j] = anc[j] = -1;
    for (int p = sp[j]; p < sp[j + 1]; p++)
      for (int r = si[p]; r != -1 && r < j;) {
        int next = anc[r];
        anc[r] = j;
        if (next == -1) { parent[r] = j; break; }
        r = next;
      }
  }
}

static int by_int(const void *a, const void *b)
{
  int x = *(const int *)a, y = *(const int *)b;
  return (x > y) - (x < y);
}

/* U(:, j)'s rows are row j of L: the nodes of the row subtree, met walking up the tree from
 * each i of S(:, j) until a node already met (Davis 2006, cs_ereach). First pass counts. */
static int u_pattern(fci_lu *f, const int *sp, const int *si, const int *parent, int *mark)
{
  int n = f->n;
  if (!(f->up = fc_calloc((size_t)n + 1, sizeof *f->up))) return FC_ENOMEM;
  for (int pass = 0; pass < 2; pass++) {
    for (int j = 0; j < n; j++) mark[j] = -1;
    for (int j = 0; j < n; j++) {
      int q = pass ? f->up[j] : 0;
      mark[j] = j;
      for (int p = sp[j]; p < sp[j + 1]; p++)
        for (int k = si[p]; mark[k] != j; k = parent[k]) {
          mark[k] = j;
          if (pass) f->ui[q++] = k;
          else f->up[j + 1]++;
        }
      if (pass) qsort(f->ui + f->up[j], (size_t)(q - f->up[j]), sizeof *f->ui, by_int);
    }
    if (!pass) {
      for (int j = 0; j < n; j++) f->up[j + 1] += f->up[j];
      if (!(f->ui = fc_malloc((size_t)(f->up[n] ? f->up[n] : 1) * sizeof *f->ui))) return FC_ENOMEM;
    }
  }
  return FC_OK;
}

/* L's pattern is U's transposed: L(j, k) for every k in U(:, j). Rows come out ascending. */
static int l_pattern(fci_lu *f, int *pos)
{
  int n = f->n, nu = f->up[n];
  if (!(f->lp = fc_calloc((size_t)n + 1, sizeof *f->lp)) ||
      !(f->li = fc_malloc((size_t)(nu ? nu : 1) * sizeof *f->li)))
    return FC_ENOMEM;
  for (int p = 0; p < nu; p++) f->lp[f->ui[p] + 1]++;
  for (int k = 0; k < n; k++) f->lp[k + 1] += f->lp[k];
  memcpy(pos, f->lp, (size_t)n * sizeof *pos);
  for (int j = 0; j < n; j++)
    for (int p = f->up[j]; p < f->up[j + 1]; p++) f->li[pos[f->ui[p]]++] = j;
  return FC_OK;
}

/* The places of column j in V, by permuted row: pos[i] for every i of its pattern. */
static void column_places(const fci_lu *f, int j, int *pos)
{
  for (int p = f->up[j]; p < f->up[j + 1]; p++) pos[f->ui[p]] = f->n + f->nl + p;
  pos[j] = j;
  for (int q = f->lp[j]; q < f->lp[j + 1]; q++) pos[f->li[q]] = f->n + q;
}

/* Where each entry of A starts in V, which places are fill, and the update lists. */
static int place(fci_lu *f, const int *colptr, const int *rowind, const int *iperm, int *pos,
                 double cap)
{
  int n = f->n, nl = f->nl, nv = n + 2 * nl;
  long nop = 0;
  for (int p = 0; p < nl; p++) nop += f->lp[f->ui[p] + 1] - f->lp[f->ui[p]];
  if ((double)nop > cap * (nv + colptr[n]) || nop > 0x7fffffffL) return FC_ESOLVE;
  unsigned char *hit = fc_calloc((size_t)nv + 1, 1);
  size_t so = (size_t)(nop ? nop : 1) * sizeof(int);
  f->na = colptr[n];
  if (!hit || !(f->amap = fc_malloc((size_t)(f->na ? f->na : 1) * sizeof *f->amap)) ||
      !(f->opc = fc_malloc(((size_t)n + 1) * sizeof *f->opc)) || !(f->otgt = fc_malloc(so)) ||
      !(f->ol = fc_malloc(so)) || !(f->ou = fc_malloc(so))) {
    fc_free(hit);
    return FC_ENOMEM;
  }
  int o = 0;
  for (int j = 0; j < n; j++) {
    column_places(f, j, pos);
    f->opc[j] = o;
    int c = f->perm[j];
    for (int p = colptr[c]; p < colptr[c + 1]; p++) hit[f->amap[p] = pos[iperm[rowind[p]]]] = 1;
    for (int p = f->up[j]; p < f->up[j + 1]; p++) {
      int k = f->ui[p];
      for (int q = f->lp[k]; q < f->lp[k + 1]; q++, o++) {
        f->otgt[o] = pos[f->li[q]];
        f->ol[o] = n + q;
        f->ou[o] = n + nl + p;
      }
    }
  }
  f->opc[n] = o;
  for (int v = 0; v < nv; v++) f->nfill += !hit[v];
  if ((f->fill = fc_malloc((size_t)(f->nfill ? f->nfill : 1) * sizeof *f->fill)))
    for (int v = 0, m = 0; v < nv; v++) if (!hit[v]) f->fill[m++] = v;
  fc_free(hit);
  return f->fill ? FC_OK : FC_ENOMEM;
}

/* Columns of every entry, and the solve's numbering (original, so that it works on b itself). */
static int solve_lists(fci_lu *f)
{
  int n = f->n, nl = f->nl;
  size_t sz = (size_t)(nl ? nl : 1) * sizeof(int);
  if (!(f->uj = fc_malloc(sz)) || !(f->lj = fc_malloc(sz)) || !(f->sl = fc_malloc(sz)) ||
      !(f->slc = fc_malloc(sz)) || !(f->su = fc_malloc(sz)) || !(f->suc = fc_malloc(sz)))
    return FC_ENOMEM;
  for (int j = 0; j < n; j++) {
    for (int p = f->up[j]; p < f->up[j + 1]; p++) f->uj[p] = j;
    for (int q = f->lp[j]; q < f->lp[j + 1]; q++) f->lj[q] = j;
  }
  for (int q = 0; q < nl; q++) {
    f->sl[q] = f->perm[f->li[q]];
    f->slc[q] = f->perm[f->lj[q]];
    f->su[q] = f->perm[f->ui[q]];
    f->suc[q] = f->perm[f->uj[q]];
  }
  return FC_OK;
}

fci_lu *fci_lu_new(int n, const int *colptr, const int *rowind, double cap)
{
  fci_lu *f = fc_calloc(1, sizeof *f);
  int *iperm = NULL, *sp = NULL, *si = NULL, *parent = NULL, *anc = NULL;
  if (!f) return NULL;
  f->n = n;
  size_t sz = (size_t)(n ? n : 1);
  if (!(f->perm = fc_malloc(sz * sizeof *f->perm)) || !(iperm = fc_malloc(sz * sizeof *iperm)) ||
      !(parent = fc_malloc(sz * sizeof *parent)) || !(anc = fc_malloc(sz * sizeof *anc)))
    goto fail;
  if (n > 0) {
    int st = amd_order(n, colptr, rowind, f->perm, NULL, NULL);
    if (st != AMD_OK && st != AMD_OK_BUT_JUMBLED) goto fail;
  }
  for (int k = 0; k < n; k++) iperm[f->perm[k]] = k;
  if (upper_pattern(f, colptr, rowind, iperm, &sp, &si)) goto fail;
  etree(n, sp, si, parent, anc);
  if (u_pattern(f, sp, si, parent, anc) || l_pattern(f, anc)) goto fail;
  f->nl = f->up[n];
  if (place(f, colptr, rowind, iperm, anc, cap) || solve_lists(f) ||
      !(f->V = fc_malloc(((size_t)n + 2 * (size_t)f->nl + 1) * sizeof *f->V)) ||
      !(f->dinvp = fc_malloc(sz * sizeof *f->dinvp)) || !(f->dinvo = fc_malloc(sz * sizeof *f->dinvo)))
    goto fail;
  fc_free(iperm); fc_free(sp); fc_free(si); fc_free(parent); fc_free(anc);
  /* The patterns by column served the lists; a factorisation needs only lp and ui. */
  fc_free(f->up); fc_free(f->li); fc_free(f->lj); fc_free(f->uj);
  f->up = f->li = f->lj = f->uj = NULL;
  return f;
fail:
  fc_free(iperm); fc_free(sp); fc_free(si); fc_free(parent); fc_free(anc);
  fci_lu_free(f);
  return NULL;
}

/* Left-looking, in place. Column j's updates come in the order of its U entries (rows k
 * ascending): each U(k, j) is final when its updates start, as every update that reaches it
 * comes from a row above k. Then the pivot, and L(:, j) divided by it. U's rows are divided by
 * their pivots at the end (A = L D U'), once nothing reads them undivided. */
int fci_lu_factor(fci_lu *f, const double *val, const double *val1, double gamma)
{
  double *restrict V = f->V, *lx = V + f->n, *ux = lx + f->nl, dmin = INFINITY, dmax = 0;
  const int *restrict tg = f->otgt, *restrict ol = f->ol, *restrict ou = f->ou, *lp = f->lp;
  double *restrict dinv = f->dinvp;
  for (int m = 0; m < f->nfill; m++) V[f->fill[m]] = 0;
  if (val1)
    for (int p = 0; p < f->na; p++) V[f->amap[p]] = val[p] + gamma * val1[p];
  else
    for (int p = 0; p < f->na; p++) V[f->amap[p]] = val[p];
  for (int j = 0, o = 0; j < f->n; j++) {
    for (int oe = f->opc[j + 1]; o < oe; o++) V[tg[o]] -= V[ol[o]] * V[ou[o]];
    double r = 1.0 / V[j];
    dinv[j] = r;
    for (int q = lp[j], qe = lp[j + 1]; q < qe; q++) lx[q] *= r;
  }
  for (int p = 0; p < f->nl; p++) ux[p] *= dinv[f->ui[p]];
  int bad = 0;
  for (int j = 0; j < f->n; j++) {
    double a = fabs(V[j]);
    bad |= !(a > 0) || !(a < INFINITY);
    dmin = a < dmin ? a : dmin;
    dmax = a > dmax ? a : dmax;
    f->dinvo[f->perm[j]] = dinv[j];
  }
  /* The bound KLU's refactorisation path applies to its cheap condition estimate (min |u_jj| /
   * max |u_jj|, klu_rcond) before it trusts fixed pivots: src/sys_sparse.c. */
  return bad || !(dmin > 1e-13 * dmax) ? FC_ESOLVE : FC_OK;
}

/* Flat sweeps over the entries in column order, on b itself (original numbering): an entry's
 * source is final by the time it is read (forward: row k of L is complete before column k
 * starts; backward, descending: row j of U' before column j). One pass per entry and no loop
 * per column: most columns of a tree hold a single entry. */
void fci_lu_solve(const fci_lu *f, double *b)
{
  const double *lx = f->V + f->n, *ux = lx + f->nl;
  for (int q = 0; q < f->nl; q++) b[f->sl[q]] -= lx[q] * b[f->slc[q]];
  for (int i = 0; i < f->n; i++) b[i] *= f->dinvo[i];
  for (int q = f->nl - 1; q >= 0; q--) b[f->su[q]] -= ux[q] * b[f->suc[q]];
}

long fci_lu_nnz(const fci_lu *f)
{
  return f ? 2L * f->nl : 0;
}

void fci_lu_free(fci_lu *f)
{
  if (!f) return;
  fc_free(f->perm); fc_free(f->up); fc_free(f->ui); fc_free(f->uj); fc_free(f->lp); fc_free(f->li);
  fc_free(f->lj); fc_free(f->V); fc_free(f->amap); fc_free(f->fill); fc_free(f->opc);
  fc_free(f->otgt); fc_free(f->ol); fc_free(f->ou); fc_free(f->sl); fc_free(f->slc); fc_free(f->su); fc_free(f->suc);
  fc_free(f->dinvp); fc_free(f->dinvo);
  fc_free(f);
}
