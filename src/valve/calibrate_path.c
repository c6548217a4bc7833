/* ferrocirc — design paths for calibration: "ferrofluid.volume", "magnets[0].gap",
 * "magnets[*].remanence" ("[*]": every element of the array). A leading "$." is optional.
 * Read-only lookups in a design's JSON tree; changing a value is fc_valve_design_set's job. */
#include <cjson/cJSON.h>
#include <ctype.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "calibrate.h"

const char *fci_cal_path_norm(const char *p)
{
  if (p[0] == '$') p += (p[1] == '.') ? 2 : 1;
  return p;
}

int fci_cal_path_match(const char *pattern, const char *path)
{
  const char *a = fci_cal_path_norm(pattern), *b = fci_cal_path_norm(path);
  while (*a && *b) {
    if (!strncmp(a, "[*]", 3) && *b == '[') {
      a += 3;
      b++;
      if (!isdigit((unsigned char)*b)) return 0;
      while (isdigit((unsigned char)*b)) b++;
      if (*b++ != ']') return 0;
    } else if (*a++ != *b++) {
      return 0;
    }
  }
  return !*a && !*b;
}

/* Walk one segment "key" or "[i]" from s; returns the rest, or NULL if malformed. */
static const char *step(const char *s, const cJSON *cur, const cJSON **next, int *star)
{
  *star = 0;
  *next = NULL;
  if (*s == '[') {
    if (!strncmp(s, "[*]", 3)) {
      *star = 1;
      return s + 3;
    }
    char *end;
    long i = strtol(s + 1, &end, 10);
    if (end == s + 1 || *end != ']' || i < 0) return NULL;
    if (cJSON_IsArray(cur) && i < cJSON_GetArraySize(cur)) *next = cJSON_GetArrayItem(cur, (int)i);
    return end + 1;
  }
  size_t n = strcspn(s, ".[");
  char key[128];
  if (!n || n >= sizeof key) return NULL;
  memcpy(key, s, n);
  key[n] = '\0';
  if (cJSON_IsObject(cur)) *next = cJSON_GetObjectItemCaseSensitive(cur, key);
  return s + n;
}

static int expand_at(const cJSON *cur, const char *s, char *done, size_t used, char (*out)[256],
                     int max, int *n)
{
  if (!*s) {
    if (*n >= max) return -1;
    snprintf(out[(*n)++], 256, "%s", done);
    return 0;
  }
  if (*s == '.') s++;
  const cJSON *next;
  int star;
  const char *rest = step(s, cur, &next, &star);
  if (!rest) return -2;
  if (star) {
    int k = cJSON_IsArray(cur) ? cJSON_GetArraySize(cur) : 0;
    for (int i = 0; i < k; i++) {
      int w = snprintf(done + used, 256 - used, "[%d]", i);
      if (w < 0 || used + (size_t)w >= 256) return -1;
      int rc = expand_at(cJSON_GetArrayItem(cur, i), rest, done, used + (size_t)w, out, max, n);
      if (rc) return rc;
    }
    done[used] = '\0';
    return 0;
  }
  if (!next) return 0;
  int w = snprintf(done + used, 256 - used, "%s%.*s", (used && *s != '[') ? "." : "",
                   (int)(rest - s), s);
  if (w < 0 || used + (size_t)w >= 256) return -1;
  int rc = expand_at(next, rest, done, used + (size_t)w, out, max, n);
  done[used] = '\0';
  return rc;
}

int fci_cal_path_expand(const struct cJSON *tree, const char *pattern, char (*out)[256], int max,
                        int *n)
{
  char done[256] = "";
  *n = 0;
  return expand_at(tree, fci_cal_path_norm(pattern), done, 0, out, max, n);
}

const struct cJSON *fci_cal_path_get(const struct cJSON *tree, const char *path)
{
  const char *s = fci_cal_path_norm(path);
  const cJSON *cur = tree;
  while (*s && cur) {
    if (*s == '.') s++;
    const cJSON *next;
    int star;
    s = step(s, cur, &next, &star);
    if (!s || star) return NULL;
    cur = next;
  }
  return cur;
}
