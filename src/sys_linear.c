/* ferrocirc — the evaluation's fast path: elements whose law is linear with constant
 * coefficients in their current mode (channels, resistors, valves, constant compliances; the
 * types' xLinear) are evaluated from contiguous arrays instead of through their method tables.
 *
 * Why: on a large network each evaluation visits every element; through xFlow / xStore it loads
 * the element's parameter struct behind a pointer, and those loads miss the cache once the
 * network outgrows it (docs/performance.md: 27 % of the run in the chamber's methods, 10 % in the
 * channel's, at 57 000 elements). The coefficients change only at a mode switch, where
 * fci_sys_invalidate marks them stale. */
#include <string.h>

#include "ferrocirc/alloc.h"
#include "sys.h"

#define NEW(ptr, n) ((ptr) = fc_calloc((size_t)(n) > 0 ? (size_t)(n) : 1, sizeof *(ptr)))

int fci_sys_linear_build(fci_sys *s)
{
  const fc_net *net = s->net;
  if (!NEW(s->ea, s->nE) || !NEW(s->eb, s->nE) || !NEW(s->lin_el, s->nE) ||
      !NEW(s->lin_a, s->nE) || !NEW(s->lin_b, s->nE) || !NEW(s->lin_k, 3 * (size_t)s->nE) ||
      !NEW(s->lin_g, s->nE) || !NEW(s->linx_j, s->nE) ||
      !NEW(s->gen_el, s->nE) || !NEW(s->Cconst, s->ns) || !NEW(s->Cinv, s->ns) || !NEW(s->flow_el, s->nE) ||
      !NEW(s->state_el, s->nE) || !NEW(s->root_el, s->nE) || !NEW(s->lin_of, s->nE) ||
      !NEW(s->upd_el, s->nE) || !NEW(s->upd_z, 2 * (size_t)s->nE))
    return FC_ENOMEM;
  s->nflow = s->nstate_el = s->nroot_el = 0;
  for (int i = 0; i < s->nE; i++) {
    const fc_elem *e = &net->elem[i];
    s->ea[i] = e->node[0];
    s->eb[i] = e->nTerm == 2 ? e->node[1] : -1;
    if (e->role == FC_ROLE_FLOW) s->flow_el[s->nflow++] = i;
    if (e->nState) s->state_el[s->nstate_el++] = i;
    if (e->nRoot) s->root_el[s->nroot_el++] = i;
  }
  s->ldirty = 1;
  return FC_OK;
}

void fci_sys_linear_free(fci_sys *s)
{
  fc_free(s->ea); fc_free(s->eb); fc_free(s->lin_el); fc_free(s->lin_a); fc_free(s->lin_b);
  fc_free(s->lin_k); fc_free(s->gen_el); fc_free(s->Cconst); fc_free(s->Cinv); fc_free(s->flow_el);
  fc_free(s->state_el); fc_free(s->root_el); fc_free(s->aa0); fc_free(s->aa1);
  fc_free(s->lin_of); fc_free(s->lin_g); fc_free(s->linx_j); fc_free(s->upd_el); fc_free(s->upd_z);
}

void fci_sys_linear_refresh(fci_sys *s)
{
  const fc_net *net = s->net;
  s->nlin = s->ngen = s->nlinx = 0;
  for (int f = 0; f < s->nflow; f++) {
    int i = s->flow_el[f];
    const fc_elem *e = &net->elem[i];
    double k[3];
    s->lin_of[i] = -1;
    if (e->nState || !e->type->xLinear || !e->type->xLinear(e, k)) {
      s->gen_el[s->ngen++] = i;
      continue;
    }
    int j = s->nlin++;
    s->lin_of[i] = j;
    s->lin_el[j] = i;
    s->lin_a[j] = e->node[0];
    s->lin_b[j] = e->node[1];
    s->lin_g[j] = k[1];
    if (!(k[0] == 0 && k[2] == -k[1])) s->linx_j[s->nlinx++] = j;
    memcpy(s->lin_k + 3 * j, k, sizeof k);
    /* The partials are constant too: set once here, not at every evaluation. */
    s->dqa[i] = k[1];
    s->dqb[i] = k[2];
    memset(s->dqx + FCI_MAX_OWN * i, 0, FCI_MAX_OWN * sizeof *s->dqx);
  }
  s->nupd = 0;
  for (int u = 0; s->nz && u < s->nlin + s->ngen; u++) { /* only with ALG nodes */
    int i = u < s->nlin ? s->lin_el[u] : s->gen_el[u - s->nlin], a = s->ea[i], b = s->eb[i];
    int za = s->kind[a] == FCI_NODE_ALG ? s->idx[a] : s->nz;
    int zb = s->kind[b] == FCI_NODE_ALG ? s->idx[b] : s->nz;
    if (za == s->nz && zb == s->nz) continue;
    s->upd_el[s->nupd] = i;
    s->upd_z[2 * s->nupd] = za;
    s->upd_z[2 * s->nupd++ + 1] = zb;
  }
  for (int k = 0; k < s->ns; k++) {
    double C = 0, c[3];
    for (int j = s->store_ptr[k]; j < s->store_ptr[k + 1] && C >= 0; j++) {
      const fc_elem *e = &net->elem[s->store_el[j]];
      if (e->type->xLinear && e->type->xLinear(e, c) && c[0] > 0) C += c[0];
      else C = -1;
    }
    s->Cconst[k] = C > 0 ? C : 0;
    s->Cinv[k] = C > 0 ? 1.0 / C : 0;
  }
  s->all_const = 1;
  for (int k = 0; k < s->ns && s->all_const; k++) s->all_const = s->Cconst[k] > 0;
  if (s->all_const) /* evaluations then only write pressures (sys_eval.c) */
    for (int k = 0; k < s->ns; k++) {
      s->Csum[k] = s->Csum2[k] = s->Cconst[k];
      s->dCsum[k] = s->dCsum2[k] = 0;
    }
  s->aff_able = s->ngen == 0 && s->nstate_el == 0 && !s->nonlinear && s->all_const;
  s->aff_ok = 0;
  s->ldirty = 0;
}
