/* ferrocirc — state layout and sparse patterns of the assembled system (see sys.h).
 *
 * The augmented Newton matrix is stamped by one walk (walk_aug) used twice: once to record the
 * pattern, once per Newton-matrix factorisation to add values through the recorded slots. A single
 * walk keeps pattern and values from ever disagreeing. */
#include <string.h>

#include "ferrocirc/alloc.h"
#include "sys.h"

#define NEW(ptr, n) ((ptr) = fc_calloc((size_t)(n) > 0 ? (size_t)(n) : 1, sizeof *(ptr)))

int fci_sys_classify(fci_sys *s, fc_error *err); /* sys_build.c */

/* Index of node n's unknown in the augmented vector [x; z], or -1 if its pressure is fixed. */
static int var_of(const fci_sys *s, int n)
{
  if (s->kind[n] == FCI_NODE_STORE) return s->idx[n];
  if (s->kind[n] == FCI_NODE_ALG) return s->nx + s->idx[n];
  return -1;
}

/* The augmented walk. In pattern mode (vals == NULL) entries go to rows/cols[*k]; in value
 * mode vals[*k] is added at A.val[aslot[*k]]. The caller fills the value callback's inputs. */
typedef struct aug_walk {
  int *rows, *cols;   /* pattern mode */
  const double *vals; /* value mode: the values, in walk order */
  int k;
} aug_walk;

static void put(aug_walk *w, int r, int c)
{
  if (w->rows) { w->rows[w->k] = r; w->cols[w->k] = c; }
  w->k++;
}

/* Walk order: x diagonal; per FLOW element, its terminal rows x (its columns: terminal
 * pressures, own states); per element with own states, its own rows x the same columns. */
static void walk_aug(const fci_sys *s, aug_walk *w)
{
  const fc_net *net = s->net;
  for (int k = 0; k < s->nx; k++) put(w, k, k);
  for (int i = 0; i < s->nE; i++) {
    const fc_elem *e = &net->elem[i];
    if (e->role != FC_ROLE_FLOW) continue;
    int v[2] = {var_of(s, e->node[0]), var_of(s, e->node[1])};
    for (int t = 0; t < 2; t++) {
      if (v[t] < 0) continue;
      for (int u = 0; u < 2; u++) if (v[u] >= 0) put(w, v[t], v[u]);
      for (int m = 0; m < e->nState; m++) put(w, v[t], e->iState + m);
    }
    for (int r = 0; r < e->nState; r++) {
      for (int u = 0; u < 2; u++) if (v[u] >= 0) put(w, e->iState + r, v[u]);
      for (int m = 0; m < e->nState; m++) put(w, e->iState + r, e->iState + m);
    }
  }
}

int fci_sys_aug_count(const fci_sys *s)
{
  aug_walk w = {0};
  walk_aug(s, &w);
  return w.k;
}

static int build_patterns(fci_sys *s, fc_error *err)
{
  fc_net *net = s->net;
  int m = fci_sys_aug_count(s), rc = FC_OK;
  int *rows, *cols, *grows, *gcols, gm = 0;
  NEW(rows, m); NEW(cols, m); NEW(s->aslot, m);
  NEW(grows, 4 * s->nE); NEW(gcols, 4 * s->nE); NEW(s->gslot, 4 * s->nE);
  if (!rows || !cols || !s->aslot || !grows || !gcols || !s->gslot) {
    rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
    goto done;
  }
  aug_walk w = {rows, cols, NULL, 0};
  walk_aug(s, &w);
  s->naslot = m;
  int n_aug = s->nx + s->nz > 0 ? s->nx + s->nz : 1;
  if (fci_csc_build(&s->A, n_aug, m, rows, cols, s->aslot)) {
    rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
    goto done;
  }
  /* G = dF/dz: the alg-alg block, with 4 fixed slots per element (-1 where not alg). */
  int *gmap;
  NEW(gmap, 4 * s->nE);
  if (!gmap) { rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory"); goto done; }
  for (int i = 0; i < s->nE; i++) {
    const fc_elem *e = &net->elem[i];
    for (int t = 0; t < 4; t++) gmap[4 * i + t] = -1;
    if (e->role != FC_ROLE_FLOW) continue;
    for (int t = 0; t < 2; t++)
      for (int u = 0; u < 2; u++) {
        int a = e->node[t], b = e->node[u];
        if (s->kind[a] != FCI_NODE_ALG || s->kind[b] != FCI_NODE_ALG) continue;
        grows[gm] = s->idx[a];
        gcols[gm] = s->idx[b];
        gmap[4 * i + 2 * t + u] = gm++;
      }
  }
  int *gs;
  NEW(gs, gm);
  if (!gs || fci_csc_build(&s->G, s->nz > 0 ? s->nz : 1, gm, grows, gcols, gs)) {
    fc_free(gs);
    fc_free(gmap);
    rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
    goto done;
  }
  for (int k = 0; k < 4 * s->nE; k++) s->gslot[k] = gmap[k] >= 0 ? gs[gmap[k]] : -1;
  fc_free(gs);
  fc_free(gmap);
done:
  fc_free(rows); fc_free(cols); fc_free(grows); fc_free(gcols);
  return rc;
}

static int layout(fci_sys *s, fc_error *err)
{
  fc_net *net = s->net;
  for (int n = 0; n < s->nN; n++) {
    if (s->kind[n] == FCI_NODE_STORE) s->idx[n] = s->ns++;
    else if (s->kind[n] == FCI_NODE_ALG) s->idx[n] = s->nz++;
    else s->idx[n] = -1;
  }
  for (int i = 0; i < s->nE; i++) {
    fc_elem *e = &net->elem[i];
    e->iState = s->ns + s->no;
    s->no += e->nState;
    e->iRoot = s->nroot;
    s->nroot += e->nRoot;
    if (e->role == FC_ROLE_FLOW && !e->type->fLinear) s->nonlinear = 1;
  }
  s->nx = s->ns + s->no;
  if (!NEW(s->xnode, s->ns) || !NEW(s->znode, s->nz) || !NEW(s->store_ptr, s->ns + 1) ||
      !NEW(s->store_el, s->nE))
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  for (int n = 0; n < s->nN; n++) {
    if (s->kind[n] == FCI_NODE_STORE) s->xnode[s->idx[n]] = n;
    if (s->kind[n] == FCI_NODE_ALG) s->znode[s->idx[n]] = n;
  }
  for (int i = 0; i < s->nE; i++)
    if (net->elem[i].role == FC_ROLE_STORE) s->store_ptr[s->idx[net->elem[i].node[0]] + 1]++;
  for (int k = 0; k < s->ns; k++) s->store_ptr[k + 1] += s->store_ptr[k];
  int *fill;
  if (!NEW(fill, s->ns)) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  for (int i = 0; i < s->nE; i++)
    if (net->elem[i].role == FC_ROLE_STORE) {
      int k = s->idx[net->elem[i].node[0]];
      s->store_el[s->store_ptr[k] + fill[k]++] = i;
    }
  fc_free(fill);
  return FC_OK;
}

int fci_sys_build(fc_net *net, fci_sys **out, fc_error *err)
{
  fci_sys *s = fc_calloc(1, sizeof *s);
  int rc;
  *out = NULL;
  if (!s) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  s->net = net;
  s->nN = net->nNode;
  s->nE = net->nElem;
  if (!NEW(s->kind, s->nN) || !NEW(s->idx, s->nN) || !NEW(s->fix_order, s->nE) || !NEW(s->fix_node, s->nE) ||
      !NEW(s->p, s->nN) || !NEW(s->qin, s->nN) || !NEW(s->q, s->nE) || !NEW(s->dqa, s->nE) ||
      !NEW(s->dqb, s->nE) || !NEW(s->dqx, FCI_MAX_OWN * s->nE)) {
    rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
    goto fail;
  }
  if ((rc = fci_sys_classify(s, err)) || (rc = layout(s, err)) || (rc = build_patterns(s, err)))
    goto fail;
  if (!NEW(s->Csum, s->ns) || !NEW(s->dCsum, s->ns) || !NEW(s->zbuf, s->nz + 1) || !NEW(s->Cpre, s->ns) || !NEW(s->xlast, s->nx) ||
      !NEW(s->abuf, s->nx + s->nz + 1) || !NEW(s->p2, s->nN) || !NEW(s->q2, s->nE) ||
      !NEW(s->qin2, s->nN) || !NEW(s->Csum2, s->ns) || !NEW(s->dCsum2, s->ns) || !NEW(s->xlast2, s->nx)) {
    rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
    goto fail;
  }
  if (fci_sys_linear_build(s)) {
    rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
    goto fail;
  }
  s->gdirty = 1;
  s->glu_want = s->nz > 0;
  /* Every row of the Newton matrix a compliant node's volume balance (no algebraic node, no own
   * state): the rows share one unit and each column's largest entry is its diagonal
   * (C + gamma times the node's conductances), so partial pivoting picks the diagonal with or
   * without KLU's row scaling, which costs a pass over the matrix at every refactorisation
   * (6 % of a tree's run, docs/performance.md). Where flow balances or inertance rows are mixed
   * in, their units differ and the scaling stays (KLU User Guide: Common.scale, default 2). */
  if (s->nz == 0 && s->no == 0 && s->nx > 0) {
    if (fci_klu_analyze(&s->ak, &s->A)) {
      rc = fc_fail(err, FC_ESOLVE, NULL, "symbolic analysis of the Newton matrix failed");
      goto fail;
    }
    s->ak.common.scale = 0;
    /* The same diagonal is every pivot, so the pivots can be fixed (sys_lu.h); KLU stays for
     * a factorisation whose pivots go bad (a non-passive element, or one too weak). */
    s->lu_want = 1;
  }
  *out = s;
  return FC_OK;
fail:
  fci_sys_free(s);
  return rc;
}

void fci_sys_free(fci_sys *s)
{
  if (!s) return;
  fci_klu_free(&s->gk);
  fci_lu_free(s->glu);
  fci_klu_free(&s->ak);
  fci_lu_free(s->lu);
  fci_krylov_free(s->kr);
  fci_csc_free(&s->G);
  fci_csc_free(&s->A);
  fc_free(s->kind); fc_free(s->idx); fc_free(s->fix_order); fc_free(s->fix_node); fc_free(s->Cpre); fc_free(s->xlast); fc_free(s->store_ptr);
  fc_free(s->store_el); fc_free(s->xnode); fc_free(s->znode); fc_free(s->p); fc_free(s->q);
  fc_free(s->dqa); fc_free(s->dqb); fc_free(s->dqx); fc_free(s->qin); fc_free(s->Csum);
  fc_free(s->dCsum); fc_free(s->zbuf); fc_free(s->gslot); fc_free(s->aslot); fc_free(s->abuf);
  fc_free(s->p2); fc_free(s->q2); fc_free(s->qin2); fc_free(s->Csum2); fc_free(s->dCsum2);
  fc_free(s->xlast2);
  fci_sys_linear_free(s);
  fc_free(s);
}
