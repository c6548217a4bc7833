/* ferrocirc — where the schematic puts each junction and element (see plot_int.h).
 *
 * Graphviz's dot would lay a chain of N elements out as one row of 2N ranks. We give it columns
 * instead (rank=same groups) computed here: breadth-first distance d from the first reservoir
 * over the undirected circuit graph (junction - element - junction), folded into rows of at most
 * max_cols columns, odd rows running right to left. O(nodes + elements). */
#include <string.h>

#include "ferrocirc/alloc.h"
#include "net.h"
#include "plot_int.h"

/* Compressed adjacency: neighbours of v are adj[ptr[v] .. ptr[v+1]). */
static int adjacency(const fc_net *net, int nV, int **ptr, int **adj)
{
  int *p = fc_calloc((size_t)nV + 1, sizeof *p), *a = NULL, *fill = NULL;
  if (!p) return FC_ENOMEM;
  for (int i = 0; i < net->nElem; i++) {
    const fc_elem *e = &net->elem[i];
    if (e->nTerm != 2) continue;
    p[e->node[0] + 1]++;
    p[e->node[1] + 1]++;
    p[net->nNode + i + 1] += 2;
  }
  for (int v = 0; v < nV; v++) p[v + 1] += p[v];
  if (!(a = fc_calloc((size_t)p[nV] + 1, sizeof *a)) || !(fill = fc_calloc((size_t)nV, sizeof *fill))) {
    fc_free(p);
    fc_free(a);
    return FC_ENOMEM;
  }
  for (int i = 0; i < net->nElem; i++) {
    const fc_elem *e = &net->elem[i];
    int ve = net->nNode + i;
    if (e->nTerm != 2) continue;
    for (int k = 0; k < 2; k++) {
      int vn = e->node[k];
      a[p[vn] + fill[vn]++] = ve;
      a[p[ve] + fill[ve]++] = vn;
    }
  }
  fc_free(fill);
  *ptr = p;
  *adj = a;
  return FC_OK;
}

static int start_vertex(const fc_net *net, const int *d)
{
  for (int i = 0; i < net->nElem; i++)
    if (!strcmp(net->elem[i].type->name, "reservoir") && d[net->elem[i].node[0]] < 0)
      return net->elem[i].node[0];
  for (int v = 0; v < net->nNode; v++)
    if (d[v] < 0) return v;
  return -1;
}

/* Breadth-first distances; each further component continues after the last column. */
static void distances(const fc_net *net, int nV, const int *ptr, const int *adj, int *d, int *q)
{
  int base = 0;
  for (int v = 0; v < nV; v++) d[v] = -1;
  for (;;) {
    int s = start_vertex(net, d), head = 0, tail = 0, top = base;
    if (s < 0) break;
    d[s] = base;
    q[tail++] = s;
    while (head < tail) {
      int v = q[head++];
      if (d[v] > top) top = d[v];
      for (int k = ptr[v]; k < ptr[v + 1]; k++)
        if (d[adj[k]] < 0) {
          d[adj[k]] = d[v] + 1;
          q[tail++] = adj[k];
        }
    }
    base = top + 1;
  }
  /* One-terminal elements sit at their node. */
  for (int i = 0; i < net->nElem; i++)
    if (net->elem[i].nTerm == 1) d[net->nNode + i] = d[net->elem[i].node[0]];
}

int fci_layout_make(const fc_net *net, int max_cols, fci_layout *L, fc_error *err)
{
  memset(L, 0, sizeof *L);
  int nV = net->nNode + net->nElem, *ptr = NULL, *adj = NULL, *q = NULL;
  L->nV = nV;
  if (adjacency(net, nV, &ptr, &adj) || !(q = fc_calloc((size_t)nV, sizeof *q)) ||
      !(L->col = fc_calloc((size_t)nV, sizeof *L->col)) ||
      !(L->row = fc_calloc((size_t)nV, sizeof *L->row))) {
    fc_free(ptr);
    fc_free(adj);
    fc_free(q);
    fci_layout_free(L);
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory for the schematic layout");
  }
  distances(net, nV, ptr, adj, L->col, q);
  int R = 0;
  for (int v = 0; v < nV; v++)
    if (L->col[v] + 1 > R) R = L->col[v] + 1;
  L->nRow = max_cols > 0 ? (R + max_cols - 1) / max_cols : 1;
  if (L->nRow < 1) L->nRow = 1;
  int N = (R + L->nRow - 1) / L->nRow;
  if (N < 1) N = 1;
  L->nCol = N;
  for (int v = 0; v < nV; v++) {
    int dv = L->col[v];
    L->row[v] = dv / N;
    L->col[v] = L->row[v] % 2 == 0 ? dv % N : N - 1 - dv % N;
  }
  fc_free(ptr);
  fc_free(adj);
  fc_free(q);
  return FC_OK;
}

void fci_layout_free(fci_layout *L)
{
  if (!L) return;
  fc_free(L->col);
  fc_free(L->row);
  L->col = L->row = NULL;
}
