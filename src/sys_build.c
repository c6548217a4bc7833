/* ferrocirc — from a loaded network to the system of sys.h: node kinds, topology checks, the
 * state layout and the sparse patterns (built once, reused for the whole run). */
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "sys.h"

#define NEW(ptr, n) ((ptr) = fc_calloc((size_t)(n) > 0 ? (size_t)(n) : 1, sizeof *(ptr)))

/* Fix reservoir nodes, then resolve ideal pressure sources outward from fixed nodes. */
static int resolve_fixed(fci_sys *s, int *fixer, fc_error *err)
{
  fc_net *net = s->net;
  for (int i = 0; i < s->nE; i++) {
    fc_elem *e = &net->elem[i];
    if (e->role != FC_ROLE_FIX) continue;
    int n = e->node[0];
    if (fixer[n] >= 0)
      return fc_fail(err, FC_ETOPO, e->path, "node \"%s\" is already held by \"%s\"; two "
                     "imposed pressures on one node would short them", net->nodeName[n],
                     net->elem[fixer[n]].id);
    fixer[n] = i;
    s->kind[n] = FCI_NODE_FIXED;
    s->fix_node[s->nfix] = n;
    s->fix_order[s->nfix++] = i;
  }
  for (int progress = 1; progress;) {
    progress = 0;
    for (int i = 0; i < s->nE; i++) {
      fc_elem *e = &net->elem[i];
      if (e->role != FC_ROLE_LINK) continue;
      int a = e->node[0], b = e->node[1], fa = fixer[a] >= 0, fb = fixer[b] >= 0;
      if ((fa && fixer[a] == i) || (fb && fixer[b] == i)) continue;
      if (fa && fb)
        return fc_fail(err, FC_ETOPO, e->path, "ideal pressure source between \"%s\" and \"%s\", "
                       "whose pressures are both imposed (by \"%s\" and \"%s\"): it would short "
                       "them; give it a \"resistance\"", net->nodeName[a], net->nodeName[b],
                       net->elem[fixer[a]].id, net->elem[fixer[b]].id);
      if (!fa && !fb) continue;
      int d = fa ? b : a;
      fixer[d] = i;
      s->kind[d] = FCI_NODE_FIXED;
      s->fix_node[s->nfix] = d;
      s->fix_order[s->nfix++] = i;
      s->nlink++;
      progress = 1;
    }
  }
  for (int i = 0; i < s->nE; i++) {
    fc_elem *e = &net->elem[i];
    if (e->role == FC_ROLE_LINK && fixer[e->node[0]] != i && fixer[e->node[1]] != i)
      return fc_fail(err, FC_ETOPO, e->path, "an ideal pressure source needs a reservoir (or a "
                     "chain of ideal sources to one) at one terminal; otherwise give it a "
                     "\"resistance\"");
  }
  return FC_OK;
}

static int classify(fci_sys *s, fc_error *err)
{
  fc_net *net = s->net;
  int *fixer, rc;
  if (!NEW(fixer, s->nN)) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  for (int n = 0; n < s->nN; n++) fixer[n] = -1;
  rc = resolve_fixed(s, fixer, err);
  for (int i = 0; !rc && i < s->nE; i++) {
    fc_elem *e = &net->elem[i];
    if (e->role != FC_ROLE_STORE) continue;
    int n = e->node[0];
    if (s->kind[n] == FCI_NODE_FIXED)
      rc = fc_fail(err, FC_ETOPO, e->path, "node \"%s\" has its pressure imposed by \"%s\"; a "
                   "compliance there would store nothing", net->nodeName[n], net->elem[fixer[n]].id);
    else s->kind[n] = FCI_NODE_STORE;
  }
  fc_free(fixer);
  return rc;
}

static int resistive(const fc_net *net, const fc_elem *e)
{
  fci_info info = {.no_text = 1};
  if (e->role != FC_ROLE_FLOW || e->nState > 0 || !e->type->xInfo) return 0;
  e->type->xInfo(e, &net->fluid, &info);
  return info.resistance > 0;
}

/* Every ALG node must reach a FIXED or STORE node through resistive elements, or G is singular. */
static int check_determined(fci_sys *s, fc_error *err)
{
  fc_net *net = s->net;
  int *adjp = NULL, *adj = NULL, *fill = NULL, *queue = NULL, rc = FC_OK, head = 0, tail = 0;
  char *res = NULL; /* resistive(), asked once per element: xInfo also formats a description */
  if (!NEW(adjp, s->nN + 1) || !NEW(adj, 2 * s->nE) || !NEW(fill, s->nN) || !NEW(queue, s->nN) ||
      !NEW(res, s->nE)) {
    rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
    goto done;
  }
  for (int i = 0; i < s->nE; i++) res[i] = (char)resistive(net, &net->elem[i]);
  for (int i = 0; i < s->nE; i++)
    if (res[i]) {
      adjp[net->elem[i].node[0] + 1]++;
      adjp[net->elem[i].node[1] + 1]++;
    }
  for (int n = 0; n < s->nN; n++) adjp[n + 1] += adjp[n];
  for (int i = 0; i < s->nE; i++) {
    const fc_elem *e = &net->elem[i];
    if (!res[i]) continue;
    for (int t = 0; t < 2; t++) adj[adjp[e->node[t]] + fill[e->node[t]]++] = e->node[1 - t];
  }
  int *seen = fill;
  memset(seen, 0, (size_t)s->nN * sizeof *seen);
  for (int n = 0; n < s->nN; n++)
    if (s->kind[n] != FCI_NODE_ALG) { seen[n] = 1; queue[tail++] = n; }
  while (head < tail) {
    int n = queue[head++];
    for (int k = adjp[n]; k < adjp[n + 1]; k++)
      if (!seen[adj[k]]) { seen[adj[k]] = 1; queue[tail++] = adj[k]; }
  }
  for (int n = 0; n < s->nN; n++)
    if (!seen[n]) {
      rc = fc_fail(err, FC_ETOPO, "$.elements", "node \"%s\" has no path through resistive "
                   "elements to a reservoir, a pressure source or a compliance, so its pressure "
                   "is undetermined (flow sources and inertances alone do not fix it)",
                   net->nodeName[n]);
      break;
    }
done:
  fc_free(adjp); fc_free(adj); fc_free(fill); fc_free(queue); fc_free(res);
  return rc;
}

/* Node kinds and topology checks, for fci_sys_build (sys_layout.c). */
int fci_sys_classify(fci_sys *s, fc_error *err)
{
  int rc = classify(s, err);
  return rc ? rc : check_determined(s, err);
}
