/* ferrocirc — the "elements" array: ids, types, terminals, then each type's own parser.
 * Nodes exist by being named; their index is the order of first mention. */
#include <cjson/cJSON.h>
#include <limits.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "net.h"
#include "strmap.h"

static const char *const common_keys[] = {"id", "type", "from", "to", "node", "note", NULL};

typedef struct loader {
  fc_net *net;
  fci_strmap nodes, ids;
  int capNode;
} loader;

static int node_index(loader *L, const char *name, const char *path, fc_error *err)
{
  int i = fci_strmap_get(&L->nodes, name);
  if (i >= 0) return i;
  fc_net *net = L->net;
  if (net->nNode == L->capNode) {
    int cap = L->capNode ? 2 * L->capNode : 16;
    char **nn = fc_realloc(net->nodeName, (size_t)cap * sizeof *nn);
    if (!nn) return -fc_fail(err, FC_ENOMEM, path, "out of memory");
    net->nodeName = nn;
    L->capNode = cap;
  }
  char *copy = fc_strdup(name);
  if (!copy) return -fc_fail(err, FC_ENOMEM, path, "out of memory");
  net->nodeName[net->nNode] = copy;
  if (fci_strmap_put(&L->nodes, copy, net->nNode)) return -fc_fail(err, FC_ENOMEM, path, "out of memory");
  return net->nNode++;
}

static int get_name(const cJSON *obj, const char *key, const char *path, const char **out,
                    fc_error *err)
{
  char p[320];
  const cJSON *v = cJSON_GetObjectItemCaseSensitive(obj, key);
  fci_path_key(p, sizeof p, path, key);
  if (!v) return fc_fail(err, FC_EPARAM, p, "missing; expected a name (string)");
  if (!cJSON_IsString(v) || !v->valuestring[0])
    return fc_fail(err, FC_EJSON, p, "expected a non-empty string");
  if (strlen(v->valuestring) > 200) return fc_fail(err, FC_EPARAM, p, "longer than 200 characters");
  *out = v->valuestring;
  return FC_OK;
}

static void suggest_type(const char *name, char *buf, size_t n)
{
  /* Nearest registered name by common prefix length, enough for typos like "chanel". */
  const fc_elem_type *best = NULL;
  size_t bestk = 0;
  for (const fc_elem_type *const *t = fci_registry_all(); *t; t++) {
    size_t k = 0;
    while (name[k] && name[k] == (*t)->name[k]) k++;
    if (k > bestk) { bestk = k; best = *t; }
  }
  size_t u = 0;
  buf[0] = '\0';
  if (best && bestk >= 2) u = (size_t)snprintf(buf, n, "did you mean \"%s\"? ", best->name);
  snprintf(buf + u, n - u, "known types:");
  for (const fc_elem_type *const *t = fci_registry_all(); *t; t++) {
    size_t len = strlen(buf);
    snprintf(buf + len, n - len, " %s", (*t)->name);
  }
}

static int parse_terminals(loader *L, fc_elem *e, const cJSON *obj, fc_error *err)
{
  const char *a, *b;
  int rc;
  char p[320];
  if (e->type->nTermDefault == 1) {
    if ((rc = get_name(obj, "node", e->path, &a, err))) return rc;
    if ((e->node[0] = node_index(L, a, e->path, err)) < 0) return -e->node[0];
    e->node[1] = -1;
    e->nTerm = 1;
    return FC_OK;
  }
  if ((rc = get_name(obj, "from", e->path, &a, err))) return rc;
  if ((rc = get_name(obj, "to", e->path, &b, err))) return rc;
  if (strcmp(a, b) == 0)
    return fc_fail(err, FC_ETOPO, fci_path_key(p, sizeof p, e->path, "to"),
                   "\"from\" and \"to\" are the same node \"%s\"; expected two different nodes", a);
  if ((e->node[0] = node_index(L, a, e->path, err)) < 0) return -e->node[0];
  if ((e->node[1] = node_index(L, b, e->path, err)) < 0) return -e->node[1];
  e->nTerm = 2;
  return FC_OK;
}

static int parse_one(loader *L, fc_elem *e, const cJSON *obj, const fci_parse_ctx *ctx,
                     fc_error *err)
{
  const char *id, *tname;
  char p[320], hint[400];
  int rc;
  if (!cJSON_IsObject(obj)) return fc_fail(err, FC_EJSON, e->path, "expected an element object");
  if ((rc = get_name(obj, "id", e->path, &id, err))) return rc;
  if (fci_strmap_get(&L->ids, id) >= 0)
    return fc_fail(err, FC_EPARAM, fci_path_key(p, sizeof p, e->path, "id"),
                   "duplicate id \"%s\" (first used by element %d)", id, fci_strmap_get(&L->ids, id));
  if (!(e->id = fc_strdup(id))) return fc_fail(err, FC_ENOMEM, e->path, "out of memory");
  if (fci_strmap_put(&L->ids, e->id, (int)(e - L->net->elem)))
    return fc_fail(err, FC_ENOMEM, e->path, "out of memory");
  if ((rc = get_name(obj, "type", e->path, &tname, err))) return rc;
  if (!(e->type = fci_registry_find(tname))) {
    suggest_type(tname, hint, sizeof hint);
    return fc_fail(err, FC_EPARAM, fci_path_key(p, sizeof p, e->path, "type"),
                   "unknown element type \"%s\"; %s", tname, hint);
  }
  if ((rc = fci_check_keys(obj, common_keys, e->type->keys, e->path, err))) return rc;
  if ((rc = parse_terminals(L, e, obj, err))) return rc;
  if (e->type->szParam && !(e->param = fc_calloc(1, e->type->szParam)))
    return fc_fail(err, FC_ENOMEM, e->path, "out of memory");
  e->node[1] = e->nTerm == 2 ? e->node[1] : -1;
  if ((rc = e->type->xParse(e, obj, e->path, ctx, err))) return rc;
  if (e->nState > FCI_MAX_OWN || e->nRoot > FCI_MAX_ROOT || !e->role)
    return fc_fail(err, FC_EPARAM, e->path, "element type \"%s\" misconfigured", tname);
  return FC_OK;
}

/* A node that only one terminal names carries no flow: almost always a misspelt node name
 * ("outt" for "out"), so it is refused at the terminal that names it, with the nearest other
 * node name as a suggestion. */
static int check_dangling(const fc_net *net, fc_error *err)
{
  int *uses = fc_calloc((size_t)net->nNode + 1, sizeof *uses);
  if (!uses) return fc_fail(err, FC_ENOMEM, "$.elements", "out of memory");
  for (int i = 0; i < net->nElem; i++)
    for (int k = 0; k < net->elem[i].nTerm; k++) uses[net->elem[i].node[k]]++;
  int rc = FC_OK;
  for (int i = 0; i < net->nElem && !rc; i++) {
    const fc_elem *e = &net->elem[i];
    for (int k = 0; k < e->nTerm && !rc; k++) {
      int nd = e->node[k];
      if (uses[nd] != 1) continue;
      const char *name = net->nodeName[nd], *best = NULL;
      int bd = INT_MAX;
      for (int j = 0; j < net->nNode; j++) {
        int d = j == nd ? INT_MAX : fci_typo_distance(name, net->nodeName[j]);
        if (d < bd) bd = d, best = net->nodeName[j];
      }
      char p[320], hint[260] = "";
      if (best && bd <= fci_typo_limit(strlen(name)))
        snprintf(hint, sizeof hint, "; did you mean \"%s\"?", best);
      rc = fc_fail(err, FC_ETOPO, fci_path_key(p, sizeof p, e->path,
                   e->nTerm == 1 ? "node" : k == 0 ? "from" : "to"),
                   "node \"%s\" is named by no other element, so nothing can flow through it; "
                   "expected every node to join at least two terminals%s", name, hint);
    }
  }
  fc_free(uses);
  return rc;
}

int fci_net_parse_elements(fc_net *net, const cJSON *arr, const fci_parse_ctx *ctx, fc_error *err)
{
  if (!arr) return fc_fail(err, FC_EPARAM, "$.elements", "missing; expected an array of elements");
  if (!cJSON_IsArray(arr)) return fc_fail(err, FC_EJSON, "$.elements", "expected an array");
  int n = cJSON_GetArraySize(arr);
  if (n == 0) return fc_fail(err, FC_ETOPO, "$.elements", "empty; a network needs elements");
  if (n > FC_NET_MAX_ELEMENTS)
    return fc_fail(err, FC_EPARAM, "$.elements", "%d elements; the limit is %d", n,
                   FC_NET_MAX_ELEMENTS);
  loader L = {net, {0}, {0}, 0};
  int rc = FC_OK;
  if (fci_strmap_init(&L.nodes, (size_t)n) || fci_strmap_init(&L.ids, (size_t)n)) {
    rc = fc_fail(err, FC_ENOMEM, "$.elements", "out of memory");
    goto done;
  }
  if (!(net->elem = fc_calloc((size_t)n, sizeof *net->elem))) {
    rc = fc_fail(err, FC_ENOMEM, "$.elements", "out of memory");
    goto done;
  }
  int i = 0;
  for (const cJSON *obj = arr->child; obj; obj = obj->next, i++) {
    fc_elem *e = &net->elem[i];
    char p[64];
    snprintf(p, sizeof p, "$.elements[%d]", i);
    net->nElem = i + 1;
    e->node[0] = e->node[1] = -1;
    if (!(e->path = fc_strdup(p))) { rc = fc_fail(err, FC_ENOMEM, p, "out of memory"); break; }
    if ((rc = parse_one(&L, e, obj, ctx, err))) break;
  }
  if (!rc) rc = check_dangling(net, err);
done:
  fci_strmap_free(&L.nodes);
  fci_strmap_free(&L.ids);
  return rc;
}
