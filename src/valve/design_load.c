/* ferrocirc — valve design objects: parse (inline or {"file": ...}), load a file, free, and
 * derive a variant with one value changed (for --vary and design studies).
 *
 * The design keeps its own copy of the JSON tree, so a variant is made by editing one number in
 * a copy and parsing it again: every value is then checked exactly as in a file. */
#include <cjson/cJSON.h>
#include <ctype.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "json_util.h"
#include "net.h"
#include "valve_int.h"

#define DESIGN_MAX_BYTES (4u << 20) /* a design is a few kB; refuse anything absurd */
#define FORMAT "ferrocirc-valve/1"

void fc_valve_design_free(fc_valve_design *d)
{
  if (!d) return;
  cJSON_Delete(d->tree);
  fc_free(d->basedir);
  fc_free(d->file);
  fc_free(d->name);
  fc_free(d->sec);
  fc_free(d->mag);
  fc_free(d);
}

const char *fc_valve_design_name(const fc_valve_design *d)
{
  return d && d->name ? d->name : "";
}

const char *fc_valve_design_note(const fc_valve_design *d, int i)
{
  return (d && i >= 0 && i < d->nWarn) ? d->warn[i] : NULL;
}

static char *dir_of(const char *file)
{
  const char *slash = strrchr(file, '/');
  size_t n = slash ? (size_t)(slash - file) : 0;
  char *s = fc_malloc(n + 1);
  if (s) {
    memcpy(s, file, n);
    s[n] = '\0';
  }
  return s;
}

/* Parse tree (owned by the new design on success and on failure) at path. */
static int parse_tree(cJSON *tree, const char *path, const fc_units *u, const char *basedir,
                      const char *file, fc_valve_design **out, fc_error *err)
{
  int rc;
  *out = NULL;
  fc_valve_design *d = fc_calloc(1, sizeof *d);
  if (!d) {
    cJSON_Delete(tree);
    return fc_fail(err, FC_ENOMEM, path, "out of memory");
  }
  d->tree = tree;
  d->basedir = fc_strdup(basedir ? basedir : "");
  d->file = fc_strdup(file ? file : "");
  const cJSON *nm = cJSON_GetObjectItemCaseSensitive(tree, "name");
  d->name = fc_strdup(cJSON_IsString(nm) ? nm->valuestring : "");
  if (!d->basedir || !d->file || !d->name) {
    rc = fc_fail(err, FC_ENOMEM, path, "out of memory");
    goto fail;
  }
  const cJSON *fmt = cJSON_GetObjectItemCaseSensitive(tree, "format");
  if (fmt && !(cJSON_IsString(fmt) && strcmp(fmt->valuestring, FORMAT) == 0)) {
    char kp[256];
    rc = fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "format"),
                 "expected \"%s\"", FORMAT);
    goto fail;
  }
  fci_parse_ctx ctx = {u, NULL, d->basedir, d->file};
  rc = fci_design_parse_body(d, tree, path, &ctx, err);
  if (rc) goto fail;
  *out = d;
  return FC_OK;
fail:
  fc_valve_design_free(d);
  return rc;
}

static int load_at(const char *file, const fc_units *u, fc_valve_design **out, fc_error *err)
{
  char *buf = NULL, *dir = NULL;
  size_t len = 0;
  cJSON *root = NULL;
  *out = NULL;
  int rc = fci_read_file(file, DESIGN_MAX_BYTES, &buf, &len, err);
  if (!rc) rc = fci_json_parse(buf, len, file, &root, err);
  if (!rc && !cJSON_IsObject(root)) {
    cJSON_Delete(root);
    root = NULL;
    rc = fc_fail(err, FC_EJSON, "$", "expected a valve design object {\"format\": \"%s\", ...}",
                 FORMAT);
  }
  if (!rc) {
    dir = dir_of(file);
    if (!dir) {
      cJSON_Delete(root);
      rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
    } else {
      rc = parse_tree(root, "$", u, dir, file, out, err);
    }
  }
  if (rc && buf && err && err->path[0]) fci_json_locate(buf, len, err->path, err);
  if (rc) fc_error_set_file(err, file, 0, 0);
  fc_free(dir);
  fc_free(buf);
  return rc;
}

int fc_valve_design_load(const char *file, const fc_units *u, fc_valve_design **out,
                         fc_error *err)
{
  return load_at(file, u, out, err);
}

int fc_valve_design_parse(const cJSON *obj, const char *path, const fc_units *u,
                          const char *basedir, fc_valve_design **out, fc_error *err)
{
  *out = NULL;
  if (!cJSON_IsObject(obj))
    return fc_fail(err, FC_EJSON, path, "expected a valve design object or {\"file\": ...}");
  const cJSON *f = cJSON_GetObjectItemCaseSensitive(obj, "file");
  if (f) {
    char kp[256];
    fci_path_key(kp, sizeof kp, path, "file");
    if (!cJSON_IsString(f) || !f->valuestring[0] || cJSON_GetArraySize(obj) != 1)
      return fc_fail(err, FC_EPARAM, kp, "expected {\"file\": \"design.json\"} and no other key");
    char full[1024];
    if (f->valuestring[0] == '/' || !basedir || !basedir[0])
      snprintf(full, sizeof full, "%s", f->valuestring);
    else
      snprintf(full, sizeof full, "%s/%s", basedir, f->valuestring);
    int rc = load_at(full, u, out, err);
    if (rc == FC_EIO && !err->path[0]) {
      /* The file cannot be read: the mistake is in the network that names it, so report it at
       * that file and path (the caller sets the file) rather than at the missing one. */
      char msg[sizeof err->msg];
      snprintf(msg, sizeof msg, "%s", err->msg);
      fc_error_clear(err);
      fc_fail(err, FC_EIO, kp, "valve design file \"%s\" (%s): %s; expected a readable "
              "valve-design JSON file, relative to the network's folder", f->valuestring, full,
              msg);
    }
    return rc;
  }
  cJSON *copy = cJSON_Duplicate(obj, 1);
  if (!copy) return fc_fail(err, FC_ENOMEM, path, "out of memory");
  return parse_tree(copy, path, u, basedir, "", out, err);
}

/* Walk "a.b[2].c" from root; *parent and *leaf name the last step (leaf key or index). */
static int walk(cJSON *root, const char *key, cJSON **parent, char *leaf, size_t nleaf,
                int *index, fc_error *err)
{
  const char *s = key;
  if (s[0] == '$') s += (s[1] == '.') ? 2 : 1;
  cJSON *cur = root;
  *parent = NULL;
  while (*s) {
    *index = -1;
    size_t n = strcspn(s, ".[");
    if (n) {
      if (n >= nleaf) break;
      memcpy(leaf, s, n);
      leaf[n] = '\0';
      s += n;
      *parent = cur;
      cur = cJSON_IsObject(cur) ? cJSON_GetObjectItemCaseSensitive(cur, leaf) : NULL;
    }
    while (*s == '[') {
      char *end;
      long i = strtol(s + 1, &end, 10);
      if (*end != ']' || i < 0 || !cJSON_IsArray(cur) || i >= cJSON_GetArraySize(cur))
        return fc_fail(err, FC_EPARAM, key, "no array element here in the design");
      *parent = cur;
      *index = (int)i;
      cur = cJSON_GetArrayItem(cur, (int)i);
      s = end + 1;
    }
    if (*s == '.') s++;
    if (!cur && *s) return fc_fail(err, FC_EPARAM, key, "\"%s\" is not in the design", leaf);
  }
  if (*s || !*parent)
    return fc_fail(err, FC_EPARAM, key, "expected a design key such as magnets[0].gap");
  return FC_OK;
}

static cJSON *value_item(const char *value)
{
  char *end;
  double v = strtod(value, &end);
  while (isspace((unsigned char)*end)) end++;
  return (*end == '\0' && end != value) ? cJSON_CreateNumber(v) : cJSON_CreateString(value);
}

int fc_valve_design_set(const fc_valve_design *d, const char *key, const char *value,
                        const fc_units *u, fc_valve_design **out, fc_error *err)
{
  char leaf[128];
  int index = -1;
  cJSON *parent = NULL, *tree = cJSON_Duplicate(d->tree, 1), *item = value_item(value);
  *out = NULL;
  if (!tree || !item) {
    cJSON_Delete(tree);
    cJSON_Delete(item);
    return fc_fail(err, FC_ENOMEM, key, "out of memory");
  }
  int rc = walk(tree, key, &parent, leaf, sizeof leaf, &index, err);
  if (!rc && index >= 0) cJSON_ReplaceItemInArray(parent, index, item);
  else if (!rc && cJSON_IsObject(parent)) {
    if (cJSON_GetObjectItemCaseSensitive(parent, leaf))
      cJSON_ReplaceItemInObjectCaseSensitive(parent, leaf, item);
    else cJSON_AddItemToObject(parent, leaf, item);
  } else if (!rc) {
    rc = fc_fail(err, FC_EPARAM, key, "the parent of \"%s\" is not an object", leaf);
  }
  if (rc) {
    cJSON_Delete(item);
    cJSON_Delete(tree);
    return rc;
  }
  rc = parse_tree(tree, "$", u, d->basedir, d->file, out, err);
  if (rc && d->file[0]) fc_error_set_file(err, d->file, 0, 0);
  return rc;
}
