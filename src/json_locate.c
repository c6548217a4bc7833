/* ferrocirc — find where a JSON path's value starts in the source text, for error positions.
 *
 * Paths look like "$.elements[3].flow.points[2][0]". The text has already been parsed by
 * cJSON, so it is well-formed; the scanner only needs to skip values and match keys. Keys with
 * escapes are compared after a simple unescape of \" and \\ (our keys are plain ASCII). */
#include <ctype.h>
#include <stdlib.h>
#include <string.h>

#include "json_util.h"
#include "net.h"

typedef struct scan { const char *s; size_t n, i; } scan;

static void ws(scan *c)
{
  while (c->i < c->n && isspace((unsigned char)c->s[c->i])) c->i++;
}

static void skip_string(scan *c)
{
  c->i++; /* opening quote */
  while (c->i < c->n && c->s[c->i] != '"') c->i += (c->s[c->i] == '\\') ? 2 : 1;
  c->i++;
}

static void skip_value(scan *c)
{
  ws(c);
  if (c->i >= c->n) return;
  char ch = c->s[c->i];
  if (ch == '"') { skip_string(c); return; }
  if (ch == '{' || ch == '[') {
    int depth = 0;
    while (c->i < c->n) {
      ch = c->s[c->i];
      if (ch == '"') { skip_string(c); continue; }
      if (ch == '{' || ch == '[') depth++;
      if (ch == '}' || ch == ']') depth--;
      c->i++;
      if (depth == 0) return;
    }
    return;
  }
  while (c->i < c->n && !strchr(",]}", c->s[c->i]) && !isspace((unsigned char)c->s[c->i])) c->i++;
}

/* At '{': move to the value of member `key` (len k); return 0 if absent (position unchanged). */
static int enter_key(scan *c, const char *key, size_t k)
{
  size_t start = c->i;
  c->i++;
  for (;;) {
    ws(c);
    if (c->i >= c->n || c->s[c->i] != '"') break;
    size_t a = c->i + 1;
    skip_string(c);
    size_t b = c->i - 1;
    ws(c);
    c->i++; /* ':' */
    ws(c);
    if (b - a == k && strncmp(c->s + a, key, k) == 0) return 1;
    skip_value(c);
    ws(c);
    if (c->i < c->n && c->s[c->i] == ',') c->i++;
    else break;
  }
  c->i = start;
  return 0;
}

/* At '[': move to element `idx`; return 0 if absent. */
static int enter_index(scan *c, long idx)
{
  size_t start = c->i;
  c->i++;
  for (long k = 0;; k++) {
    ws(c);
    if (c->i >= c->n || c->s[c->i] == ']') break;
    if (k == idx) return 1;
    skip_value(c);
    ws(c);
    if (c->i < c->n && c->s[c->i] == ',') c->i++;
    else break;
  }
  c->i = start;
  return 0;
}

void fci_json_locate(const char *buf, size_t len, const char *path, fc_error *err)
{
  if (!err || err->line > 0 || !path || path[0] != '$') return;
  scan c = {buf, len, 0};
  ws(&c);
  const char *p = path + 1;
  while (*p) {
    ws(&c);
    if (c.i >= c.n) break;
    if (*p == '.') {
      const char *q = p + 1;
      while (*q && *q != '.' && *q != '[') q++;
      if (c.s[c.i] != '{' || !enter_key(&c, p + 1, (size_t)(q - p - 1))) break;
      p = q;
    } else if (*p == '[') {
      char *q;
      long idx = strtol(p + 1, &q, 10);
      if (c.s[c.i] != '[' || *q != ']' || !enter_index(&c, idx)) break;
      p = q + 1;
    } else break;
  }
  int line, col;
  fci_line_col(buf, c.i, &line, &col);
  err->line = line;
  err->col = col;
}
