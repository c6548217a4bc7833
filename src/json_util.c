/* ferrocirc — JSON reading with positions.
 *
 * cJSON reports only a pointer to where parsing stopped and keeps no positions, so line and
 * column are computed here: from the stop pointer on syntax errors, and, for errors found later
 * at a JSON path, by re-scanning the text along that path (fci_json_locate; run only when an
 * error is reported, so its cost does not matter). Duplicate keys, which cJSON accepts silently
 * (first wins), and text that is not UTF-8 are rejected here. */
#include <cjson/cJSON.h>
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "ferrocirc/alloc.h"
#include "json_util.h"
#include "net.h"

void fci_line_col(const char *buf, size_t off, int *line, int *col)
{
  int l = 1, c = 1;
  for (size_t i = 0; i < off && buf[i]; i++) {
    if (buf[i] == '\n') { l++; c = 1; }
    else if (((unsigned char)buf[i] & 0xC0) != 0x80) c++; /* count code points, not bytes */
  }
  *line = l;
  *col = c;
}

int fci_read_file(const char *file, size_t max_bytes, char **buf, size_t *len, fc_error *err)
{
  *buf = NULL;
  *len = 0;
  struct stat st;
  if (stat(file, &st) != 0)
    return fc_fail(err, FC_EIO, NULL, "cannot open: %s", strerror(errno));
  if (S_ISDIR(st.st_mode)) return fc_fail(err, FC_EIO, NULL, "is a directory, expected a file");
  if ((unsigned long long)st.st_size > max_bytes)
    return fc_fail(err, FC_EPARAM, NULL, "file is %lld bytes; the limit is %zu bytes",
                   (long long)st.st_size, max_bytes);
  FILE *f = fopen(file, "rb");
  if (!f) return fc_fail(err, FC_EIO, NULL, "cannot open: %s", strerror(errno));
  char *b = fc_malloc((size_t)st.st_size + 1);
  if (!b) { fclose(f); return fc_fail(err, FC_ENOMEM, NULL, "out of memory reading file"); }
  size_t n = fread(b, 1, (size_t)st.st_size, f);
  int bad = ferror(f);
  fclose(f);
  if (bad) { fc_free(b); return fc_fail(err, FC_EIO, NULL, "read error"); }
  b[n] = '\0';
  *buf = b;
  *len = n;
  return FC_OK;
}

/* Offset of the first byte that is not valid UTF-8 (RFC 3629), or len if all valid. */
static size_t utf8_invalid_at(const unsigned char *s, size_t len)
{
  size_t i = 0;
  while (i < len) {
    unsigned c = s[i];
    size_t n = c < 0x80 ? 1 : (c >> 5) == 6 ? 2 : (c >> 4) == 14 ? 3 : (c >> 3) == 30 ? 4 : 0;
    if (!n || i + n > len) return i;
    for (size_t k = 1; k < n; k++)
      if ((s[i + k] & 0xC0) != 0x80) return i;
    if (n == 2 && c < 0xC2) return i;                       /* overlong */
    if (n == 3 && c == 0xE0 && s[i + 1] < 0xA0) return i;   /* overlong */
    if (n == 3 && c == 0xED && s[i + 1] >= 0xA0) return i;  /* surrogate */
    if (n == 4 && (c > 0xF4 || (c == 0xF0 && s[i + 1] < 0x90) || (c == 0xF4 && s[i + 1] >= 0x90)))
      return i;
    i += n;
  }
  return len;
}

/* Depth of bracket nesting reached first beyond `limit`, scanning outside strings; offset of
 * that bracket, or (size_t)-1 if the text stays within the limit. */
static size_t nesting_exceeds(const char *s, size_t len, int limit)
{
  int depth = 0, in_str = 0;
  for (size_t i = 0; i < len; i++) {
    char c = s[i];
    if (in_str) {
      if (c == '\\') i++;
      else if (c == '"') in_str = 0;
    } else if (c == '"') in_str = 1;
    else if (c == '{' || c == '[') { if (++depth > limit) return i; }
    else if (c == '}' || c == ']') depth--;
  }
  return (size_t)-1;
}

/* Whether any object in j repeats a key: the common case (none) without building paths, which
 * cost most of the check on a network of 10^5 elements. */
static int has_duplicate(const cJSON *j)
{
  for (const cJSON *a = j ? j->child : NULL; a; a = a->next) {
    if (cJSON_IsObject(j))
      for (const cJSON *b = j->child; b != a; b = b->next)
        if (strcmp(a->string, b->string) == 0) return 1;
    if ((cJSON_IsObject(a) || cJSON_IsArray(a)) && has_duplicate(a)) return 1;
  }
  return 0;
}

/* The same search, building the JSON path of the first duplicate into path. */
static int find_duplicate(const cJSON *j, char *path, size_t n, size_t used)
{
  if (!j) return 0;
  if (cJSON_IsObject(j)) {
    for (const cJSON *a = j->child; a; a = a->next) {
      for (const cJSON *b = j->child; b != a; b = b->next)
        if (strcmp(a->string, b->string) == 0) {
          snprintf(path + used, n - used, ".%s", a->string);
          return 1;
        }
      int w = snprintf(path + used, n - used, ".%s", a->string);
      size_t u2 = used + (w > 0 ? (size_t)w : 0);
      if (u2 < n && find_duplicate(a, path, n, u2)) return 1;
    }
  } else if (cJSON_IsArray(j)) {
    int i = 0;
    for (const cJSON *a = j->child; a; a = a->next, i++) {
      int w = snprintf(path + used, n - used, "[%d]", i);
      size_t u2 = used + (w > 0 ? (size_t)w : 0);
      if (u2 < n && find_duplicate(a, path, n, u2)) return 1;
    }
  }
  path[used] = '\0';
  return 0;
}

int fci_json_parse(const char *buf, size_t len, const char *name, cJSON **out, fc_error *err)
{
  int line, col;
  *out = NULL;
  size_t bad = utf8_invalid_at((const unsigned char *)buf, len);
  if (bad < len) {
    fci_line_col(buf, bad, &line, &col);
    fc_fail(err, FC_EJSON, NULL, "not valid UTF-8 text (byte 0x%02x); expected a UTF-8 JSON file",
            (unsigned char)buf[bad]);
    fc_error_set_file(err, name, line, col);
    return FC_EJSON;
  }
  /* JSON text may not hold a raw NUL (RFC 8259 section 7: control characters must be escaped);
   * cJSON would accept one inside a string and cut the string there. */
  const char *nul = memchr(buf, '\0', len);
  if (nul) {
    fci_line_col(buf, (size_t)(nul - buf), &line, &col);
    fc_fail(err, FC_EJSON, NULL, "NUL byte in the text; expected JSON text (write \\u0000 "
            "inside a string if it is meant)");
    fc_error_set_file(err, name, line, col);
    return FC_EJSON;
  }
  size_t deep = nesting_exceeds(buf, len, FCI_JSON_MAX_DEPTH);
  if (deep != (size_t)-1) {
    fci_line_col(buf, deep, &line, &col);
    fc_fail(err, FC_EJSON, NULL, "JSON nested deeper than %d levels", FCI_JSON_MAX_DEPTH);
    fc_error_set_file(err, name, line, col);
    return FC_EJSON;
  }
  /* With require_null_terminated, cJSON wants the NUL inside the length it is given; a copy
   * guarantees it (raw NUL bytes were refused above). */
  char *copy = fc_malloc(len + 1);
  if (!copy) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  memcpy(copy, buf, len);
  copy[len] = '\0';
  const char *end = NULL;
  cJSON *j = cJSON_ParseWithLengthOpts(copy, len + 1, &end, 1);
  size_t off = end ? (size_t)(end - copy) : 0;
  fc_free(copy);
  if (!j) {
    fci_line_col(buf, off, &line, &col);
    if (off >= len) fc_fail(err, FC_EJSON, NULL, "JSON syntax error: unexpected end of file");
    else { /* buf need not be NUL-terminated: print at most what is left of it, one line */
      int n = 0;
      while (n < 12 && off + (size_t)n < len && buf[off + n] != '\n' && buf[off + n] != '\r') n++;
      fc_fail(err, FC_EJSON, NULL, "JSON syntax error near '%.*s'", n, buf + off);
    }
    fc_error_set_file(err, name, line, col);
    return FC_EJSON;
  }
  char path[256] = "$";
  if (has_duplicate(j) && find_duplicate(j, path, sizeof path, 1)) {
    cJSON_Delete(j);
    fc_fail(err, FC_EJSON, path, "duplicate key; each key may appear once");
    fci_json_locate(buf, len, path, err);
    fc_error_set_file(err, name, 0, 0);
    return FC_EJSON;
  }
  *out = j;
  return FC_OK;
}
