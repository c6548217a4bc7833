/* ferrocirc — loading a network file: read, parse with positions, dispatch the sections.
 * Order matters: "fluid" first (elements use its viscosity and density), then "elements", then
 * "simulation" (which may count cycles of the elements' periodic sources), then "report". */
#include <cjson/cJSON.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "json_util.h"
#include "net.h"

static const char *const top_keys[] = {"format", "title", "description", "fluid", "elements",
                                       "simulation", "report", NULL};

static int parse_root(fc_net *net, const cJSON *root, const fci_parse_ctx *ctx, fc_error *err)
{
  if (!cJSON_IsObject(root))
    return fc_fail(err, FC_EJSON, "$", "expected a JSON object with \"format\": \"%s\"",
                   FC_NET_FORMAT);
  int rc = fci_check_keys(root, top_keys, NULL, "$", err);
  if (rc) return rc;
  const cJSON *fmt = cJSON_GetObjectItemCaseSensitive(root, "format");
  if (!cJSON_IsString(fmt))
    return fc_fail(err, FC_EJSON, "$.format", "missing or not a string; expected \"%s\"",
                   FC_NET_FORMAT);
  if (strcmp(fmt->valuestring, FC_NET_FORMAT) != 0)
    return fc_fail(err, FC_EPARAM, "$.format", "unsupported format \"%s\"; expected \"%s\"",
                   fmt->valuestring, FC_NET_FORMAT);
  const cJSON *title = cJSON_GetObjectItemCaseSensitive(root, "title");
  if (title && !cJSON_IsString(title))
    return fc_fail(err, FC_EJSON, "$.title", "expected a string");
  net->title = fc_strdup(title ? title->valuestring : "");
  if (!net->title) return fc_fail(err, FC_ENOMEM, "$.title", "out of memory");
  if ((rc = fci_net_parse_fluid(net, cJSON_GetObjectItemCaseSensitive(root, "fluid"), ctx, err)))
    return rc;
  if ((rc = fci_net_parse_elements(net, cJSON_GetObjectItemCaseSensitive(root, "elements"), ctx,
                                   err)))
    return rc;
  if ((rc = fci_net_parse_sim(net, cJSON_GetObjectItemCaseSensitive(root, "simulation"), ctx, err)))
    return rc;
  return fci_net_parse_report(net, cJSON_GetObjectItemCaseSensitive(root, "report"), ctx, err);
}

int fc_net_load_buffer(const char *buf, size_t len, const char *name, const char *basedir,
                       const fc_units *u, fc_net **out, fc_error *err)
{
  *out = NULL;
  cJSON *root = NULL;
  int rc = fci_json_parse(buf, len, name, &root, err);
  if (rc) return rc;
  fc_net *net = fc_calloc(1, sizeof *net);
  if (!net) { rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory"); goto fail; }
  net->units = u;
  net->file = fc_strdup(name ? name : "");
  if (!net->file) { rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory"); goto fail; }
  fci_parse_ctx ctx = {u, &net->fluid, basedir ? basedir : "", net->file};
  rc = parse_root(net, root, &ctx, err);
  if (rc) goto fail;
  cJSON_Delete(root);
  *out = net;
  return FC_OK;
fail:
  if (err && err->path[0]) fci_json_locate(buf, len, err->path, err);
  fc_error_set_file(err, name, 0, 0);
  cJSON_Delete(root);
  fc_net_free(net);
  return rc;
}

int fc_net_load(const char *file, const fc_units *u, fc_net **out, fc_error *err)
{
  char *buf;
  size_t len;
  *out = NULL;
  int rc = fci_read_file(file, FC_NET_MAX_FILE_BYTES, &buf, &len, err);
  if (rc) { fc_error_set_file(err, file, 0, 0); return rc; }
  char dir[1024];
  const char *slash = strrchr(file, '/');
  size_t dl = slash ? (size_t)(slash - file) : 0;
  if (dl >= sizeof dir) dl = sizeof dir - 1;
  memcpy(dir, file, dl);
  dir[dl] = '\0';
  if (slash && dl == 0) strcpy(dir, "/");
  rc = fc_net_load_buffer(buf, len, file, dir, u, out, err);
  fc_free(buf);
  return rc;
}

void fc_net_free(fc_net *net)
{
  if (!net) return;
  for (int i = 0; i < net->nElem; i++) {
    fc_elem *e = &net->elem[i];
    if (e->type && e->type->xFree && e->param) e->type->xFree(e);
    fc_free(e->param);
    fc_free(e->id);
    fc_free(e->path);
  }
  fc_free(net->elem);
  fc_free(net->report.track);
  fc_free(net->report.nodes);
  for (int i = 0; i < net->nNode; i++) fc_free(net->nodeName[i]);
  fc_free(net->nodeName);
  fc_free(net->title);
  fc_free(net->file);
  fc_free(net);
}

const char *fc_net_title(const fc_net *net) { return net->title; }
int fc_net_node_count(const fc_net *net) { return net->nNode; }
const char *fc_net_node_name(const fc_net *net, int i) { return net->nodeName[i]; }
int fc_net_elem_count(const fc_net *net) { return net->nElem; }
const char *fc_net_elem_id(const fc_net *net, int i) { return net->elem[i].id; }
const char *fc_net_elem_type(const fc_net *net, int i) { return net->elem[i].type->name; }
const char *fc_net_pressure_unit(const fc_net *net) { return net->pressure_unit; }
const char *fc_net_flow_unit(const fc_net *net) { return net->flow_unit; }

int fc_net_node_find(const fc_net *net, const char *name)
{
  for (int i = 0; i < net->nNode; i++)
    if (strcmp(net->nodeName[i], name) == 0) return i;
  return -1;
}

int fc_net_elem_find(const fc_net *net, const char *id)
{
  for (int i = 0; i < net->nElem; i++)
    if (strcmp(net->elem[i].id, id) == 0) return i;
  return -1;
}
