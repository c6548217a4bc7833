/* ferrocirc — parse helpers shared by element types and loaders (declared in src/elem.h).
 *
 * Every helper reads keys case-sensitively (cJSON_GetObjectItem is not) and names the full JSON
 * path of a bad value, "$.elements[3].length". Unknown keys get a "did you mean" suggestion by
 * optimal-string-alignment distance (Levenshtein plus adjacent transposition, so "lenght" is one
 * edit from "length"); duplicate keys, which cJSON accepts silently (first wins), are refused. */
#include "elem.h"

#include <cjson/cJSON.h>
#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#define KEY_MAX 64 /* keys longer than this are never "near" an allowed key */

/* Built for every key read, whether or not an error names it: copied by hand, since snprintf
 * was 2.5 % of a 128-chamber run's instructions (docs/performance.md). Same text as
 * snprintf(buf, n, "%s.%s", path, key), truncated likewise. */
const char *fci_path_key(char *buf, size_t n, const char *path, const char *key)
{
  if (!n) return buf;
  const char *src[3] = {path ? path : "$", ".", key};
  size_t k = 0;
  for (int i = 0; i < 3; i++) {
    size_t m = strlen(src[i]);
    if (m > n - 1 - k) m = n - 1 - k;
    memcpy(buf + k, src[i], m);
    k += m;
  }
  buf[k] = '\0';
  return buf;
}

int fci_get_quantity(const cJSON *obj, const char *key, fc_dim dim, int required, double def,
                     int sign, double *out, const char *path, const fci_parse_ctx *ctx,
                     fc_error *err)
{
  char kp[256];
  fci_path_key(kp, sizeof kp, path, key);
  const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, key);
  if (!it) {
    if (required)
      return fc_fail(err, FC_EPARAM, kp, "missing required key \"%s\" (%s in %s)", key,
                     fc_dim_name(dim), fc_dim_si_name(dim));
    *out = def;
    return FC_OK;
  }
  double v;
  int rc = fc_units_json(ctx->units, it, dim, &v, kp, err);
  if (rc) return rc;
  if ((sign & FCI_POS) && !(v > 0.0))
    return fc_fail(err, FC_EPARAM, kp, "must be > 0, got %g %s", v, fc_dim_si_name(dim));
  if ((sign & FCI_NONNEG) && !(v >= 0.0))
    return fc_fail(err, FC_EPARAM, kp, "must be >= 0, got %g %s", v, fc_dim_si_name(dim));
  *out = v;
  return FC_OK;
}

int fci_get_bool(const cJSON *obj, const char *key, int def, int *out, const char *path,
                 fc_error *err)
{
  char kp[256];
  const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, key);
  if (!it) {
    *out = def;
    return FC_OK;
  }
  if (!cJSON_IsBool(it))
    return fc_fail(err, FC_EJSON, fci_path_key(kp, sizeof kp, path, key),
                   "expected true or false");
  *out = cJSON_IsTrue(it) ? 1 : 0;
  return FC_OK;
}

int fci_get_waveform(const cJSON *obj, const char *key, fc_dim dim, int required, double def,
                     fc_waveform **out, const char *path, const fci_parse_ctx *ctx,
                     fc_error *err)
{
  char kp[256];
  fci_path_key(kp, sizeof kp, path, key);
  *out = NULL;
  const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, key);
  if (!it) {
    if (required)
      return fc_fail(err, FC_EPARAM, kp, "missing required key \"%s\" (a %s waveform: a "
                     "constant or an object with \"shape\")", key, fc_dim_name(dim));
    *out = fc_waveform_constant(def);
    return *out ? FC_OK : fc_fail(err, FC_ENOMEM, kp, "out of memory");
  }
  return fc_waveform_parse(it, dim, ctx->units, ctx->basedir, kp, out, err);
}

int fci_get_object(const cJSON *obj, const char *key, int required, const cJSON **out,
                   const char *path, fc_error *err)
{
  char kp[256];
  fci_path_key(kp, sizeof kp, path, key);
  const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, key);
  *out = NULL;
  if (!it) {
    if (required) return fc_fail(err, FC_EPARAM, kp, "missing required key \"%s\" (an object)",
                                 key);
    return FC_OK;
  }
  if (!cJSON_IsObject(it)) return fc_fail(err, FC_EJSON, kp, "expected an object {...}");
  *out = it;
  return FC_OK;
}

/* Optimal string alignment distance between a and b (lengths <= KEY_MAX). */
static int osa_distance(const char *a, const char *b)
{
  int na = (int)strlen(a), nb = (int)strlen(b);
  int d[KEY_MAX + 1][KEY_MAX + 1];
  for (int i = 0; i <= na; i++) d[i][0] = i;
  for (int j = 0; j <= nb; j++) d[0][j] = j;
  for (int i = 1; i <= na; i++)
    for (int j = 1; j <= nb; j++) {
      int cost = a[i - 1] != b[j - 1];
      int best = d[i - 1][j] + 1;
      if (d[i][j - 1] + 1 < best) best = d[i][j - 1] + 1;
      if (d[i - 1][j - 1] + cost < best) best = d[i - 1][j - 1] + cost;
      if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1] &&
          d[i - 2][j - 2] + 1 < best)
        best = d[i - 2][j - 2] + 1;
      d[i][j] = best;
    }
  return d[na][nb];
}

static int in_list(const char *key, const char *const *list)
{
  for (; list && *list; list++)
    if (strcmp(key, *list) == 0) return 1;
  return 0;
}

int fci_typo_distance(const char *a, const char *b)
{
  if (strlen(a) > KEY_MAX || strlen(b) > KEY_MAX) return INT_MAX;
  return osa_distance(a, b);
}

/* About one edit per three characters, at least one and at most three. */
int fci_typo_limit(size_t len)
{
  int limit = (int)(len / 3);
  return limit < 1 ? 1 : limit > 3 ? 3 : limit;
}

/* The allowed key nearest to key, if near enough to be a plausible typo; else NULL. */
static const char *nearest(const char *key, const char *const *l1, const char *const *l2)
{
  const char *best = NULL;
  int bd = INT_MAX;
  const char *const *lists[2] = {l1, l2};
  for (int k = 0; k < 2; k++)
    for (const char *const *p = lists[k]; p && *p; p++) {
      int d = fci_typo_distance(key, *p);
      if (d < bd) bd = d, best = *p;
    }
  return bd <= fci_typo_limit(strlen(key)) ? best : NULL;
}

/* Append the allowed keys to buf as "a, b, c" (truncated silently: it is only a hint). */
static void list_keys(char *buf, size_t n, const char *const *l1, const char *const *l2)
{
  size_t k = 0;
  buf[0] = '\0';
  const char *const *lists[2] = {l1, l2};
  for (int i = 0; i < 2; i++)
    for (const char *const *p = lists[i]; p && *p && k + 1 < n; p++) {
      int w = snprintf(buf + k, n - k, "%s\"%s\"", k ? ", " : "", *p);
      if (w < 0) return;
      k = (k + (size_t)w < n) ? k + (size_t)w : n - 1;
    }
}

int fci_check_keys(const cJSON *obj, const char *const *keys1, const char *const *keys2,
                   const char *path, fc_error *err)
{
  char kp[256];
  for (const cJSON *c = obj ? obj->child : NULL; c; c = c->next) {
    if (!c->string) continue;
    for (const cJSON *e = obj->child; e != c; e = e->next)
      if (e->string && strcmp(e->string, c->string) == 0)
        return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, c->string),
                       "duplicate key \"%s\"", c->string);
    if (in_list(c->string, keys1) || in_list(c->string, keys2)) continue;
    fci_path_key(kp, sizeof kp, path, c->string);
    const char *near = nearest(c->string, keys1, keys2);
    if (near)
      return fc_fail(err, FC_EPARAM, kp, "unknown key \"%s\"; did you mean \"%s\"?", c->string,
                     near);
    char all[512];
    list_keys(all, sizeof all, keys1, keys2);
    return fc_fail(err, FC_EPARAM, kp, "unknown key \"%s\"; allowed here: %s", c->string,
                   all[0] ? all : "(none)");
  }
  return FC_OK;
}
