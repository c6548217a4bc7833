/* ferrocirc — paths into network files for design studies (see study_int.h). */
#include <cjson/cJSON.h>
#include <ctype.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "json_util.h"
#include "net.h"
#include "study_int.h"

#define FCI_DESIGN_MAX_BYTES (4u * 1024u * 1024u)

static int inline_design(cJSON *el, const char *basedir, const char *path, fc_error *err)
{
  cJSON *d = cJSON_GetObjectItemCaseSensitive(el, "design");
  cJSON *f = d ? cJSON_GetObjectItemCaseSensitive(d, "file") : NULL;
  if (!cJSON_IsString(f)) return FC_OK;
  char file[1024], *buf;
  size_t len;
  if (f->valuestring[0] == '/' || !basedir || !basedir[0]) snprintf(file, sizeof file, "%s", f->valuestring);
  else snprintf(file, sizeof file, "%s/%s", basedir, f->valuestring);
  int rc = fci_read_file(file, FCI_DESIGN_MAX_BYTES, &buf, &len, err);
  cJSON *tree = NULL;
  if (!rc) {
    rc = fci_json_parse(buf, len, file, &tree, err);
    fc_free(buf);
  }
  if (rc) {
    if (!err->path[0]) snprintf(err->path, sizeof err->path, "%s.design.file", path);
    return rc;
  }
  cJSON_ReplaceItemInObjectCaseSensitive(el, "design", tree);
  return FC_OK;
}

int fci_jpath_inline_designs(cJSON *root, const char *basedir, fc_error *err)
{
  cJSON *els = cJSON_GetObjectItemCaseSensitive(root, "elements");
  int i = 0, rc;
  for (cJSON *el = els ? els->child : NULL; el; el = el->next, i++) {
    char p[64];
    snprintf(p, sizeof p, "$.elements[%d]", i);
    if (cJSON_IsObject(el) && (rc = inline_design(el, basedir, p, err))) return rc;
  }
  return FC_OK;
}

/* Step into array `a` by "[idx]" or, for the elements array, "[id]". */
static cJSON *array_step(cJSON *a, const char *tok, size_t n, int by_id)
{
  char buf[256];
  if (n >= sizeof buf) return NULL;
  memcpy(buf, tok, n);
  buf[n] = '\0';
  char *end;
  long idx = strtol(buf, &end, 10);
  if (*end == '\0' && n > 0) return cJSON_GetArrayItem(a, (int)idx);
  if (!by_id) return NULL;
  for (cJSON *el = a->child; el; el = el->next) {
    cJSON *id = cJSON_GetObjectItemCaseSensitive(el, "id");
    if (cJSON_IsString(id) && strcmp(id->valuestring, buf) == 0) return el;
  }
  return NULL;
}

static int find(cJSON *root, const char *path, const char *basedir, int create, cJSON **item,
                cJSON **parent_out, fc_error *err)
{
  const char *p = path;
  cJSON *cur = root, *parent = NULL;
  int in_elements = 0;
  if (p[0] == '$') p++;
  if (p[0] == '.') p++;
  while (*p) {
    const char *q;
    if (*p == '[') {
      q = strchr(p, ']');
      if (!q || !cJSON_IsArray(cur)) return fc_fail(err, FC_EUSAGE, NULL, "path \"%s\": no array at \"%.*s\"", path, (int)(p - path), path);
      cJSON *nx = array_step(cur, p + 1, (size_t)(q - p - 1), in_elements);
      if (!nx) return fc_fail(err, FC_EUSAGE, NULL, "path \"%s\": no element \"%.*s\"", path, (int)(q - p - 1), p + 1);
      if (in_elements && inline_design(nx, basedir, path, err)) return err->code;
      parent = cur;
      cur = nx;
      in_elements = 0;
      p = q + 1;
    } else {
      if (*p == '.') p++;
      q = p;
      while (*q && *q != '.' && *q != '[') q++;
      if (q == p || !cJSON_IsObject(cur))
        return fc_fail(err, FC_EUSAGE, NULL, "path \"%s\": no object at \"%.*s\"", path, (int)(p - path), path);
      char key[128];
      snprintf(key, sizeof key, "%.*s", (int)(q - p), p);
      cJSON *nx = cJSON_GetObjectItemCaseSensitive(cur, key);
      if (!nx && create && !*q) nx = cJSON_AddNullToObject(cur, key);
      if (!nx) return fc_fail(err, FC_EUSAGE, NULL, "path \"%s\": no key \"%s\"", path, key);
      in_elements = parent == NULL && cur == root && !strcmp(key, "elements");
      parent = cur;
      cur = nx;
      p = q;
    }
  }
  *item = cur;
  *parent_out = parent;
  return FC_OK;
}

int fci_jpath_find(cJSON *root, const char *path, const char *basedir, int create, cJSON **item,
                   fc_error *err)
{
  cJSON *parent;
  return find(root, path, basedir, create, item, &parent, err);
}

int fci_jpath_set(cJSON *root, const char *path, cJSON *value, const char *basedir, fc_error *err)
{
  cJSON *item, *parent;
  int rc = find(root, path, basedir, 1, &item, &parent, err);
  if (!rc && !parent) rc = fc_fail(err, FC_EUSAGE, NULL, "path \"%s\": cannot replace the root", path);
  if (rc) { cJSON_Delete(value); return rc; }
  if (cJSON_IsObject(parent)) cJSON_ReplaceItemInObjectCaseSensitive(parent, item->string, value);
  else cJSON_ReplaceItemViaPointer(parent, item, value);
  return FC_OK;
}

int fci_split_quantity(const char *text, double *num, char *unit, size_t n)
{
  char *end;
  while (isspace((unsigned char)*text)) text++;
  *num = strtod(text, &end);
  if (end == text) return -1;
  while (isspace((unsigned char)*end)) end++;
  snprintf(unit, n, "%s", end);
  size_t k = strlen(unit);
  while (k && isspace((unsigned char)unit[k - 1])) unit[--k] = '\0';
  return 0;
}

void fci_csv_field(FILE *f, const char *s)
{
  if (!strpbrk(s, ",\"\n")) { fputs(s, f); return; }
  fputc('"', f);
  for (; *s; s++) {
    if (*s == '"') fputc('"', f);
    fputc(*s == '\n' ? ' ' : *s, f);
  }
  fputc('"', f);
}
