/* ferrocirc — streamed JSON text (see json_write.h). */
#include "json_write.h"

#include "fmt_g.h"

#include <math.h>
#include <stdlib.h>

void fci_jw_init(fci_jw *w, FILE *f)
{
  w->f = f;
  w->depth = 0;
  w->overflow = 0;
  w->first[0] = 1;
  w->array[0] = 1; /* the root takes one value without a key */
}

static void indent(fci_jw *w, int n)
{
  for (int i = 0; i < n; i++) putc('\t', w->f);
}

static void put_string(FILE *f, const char *s)
{
  /* RFC 8259 section 7: quotation mark, reverse solidus and the control characters must be
   * escaped; the rest (UTF-8 included) passes through, as cJSON does. */
  putc('"', f);
  for (const unsigned char *p = (const unsigned char *)(s ? s : ""); *p; p++) {
    switch (*p) {
    case '"': fputs("\\\"", f); break;
    case '\\': fputs("\\\\", f); break;
    case '\b': fputs("\\b", f); break;
    case '\f': fputs("\\f", f); break;
    case '\n': fputs("\\n", f); break;
    case '\r': fputs("\\r", f); break;
    case '\t': fputs("\\t", f); break;
    default:
      if (*p < 0x20) fprintf(f, "\\u%04x", *p);
      else putc(*p, f);
    }
  }
  putc('"', f);
}

/* Separator and key before a value at the current depth. */
static void member(fci_jw *w, const char *key)
{
  int d = w->depth;
  if (!w->first[d]) fputs(w->array[d] ? ", " : ",\n", w->f);
  else if (!w->array[d]) putc('\n', w->f);
  w->first[d] = 0;
  if (!w->array[d]) {
    indent(w, d);
    put_string(w->f, key);
    fputs(":\t", w->f);
  }
}

static void open_container(fci_jw *w, const char *key, int array)
{
  member(w, key);
  putc(array ? '[' : '{', w->f);
  if (w->depth + 1 >= FCI_JW_MAX_DEPTH) {
    w->overflow = 1;
    return;
  }
  w->depth++;
  w->first[w->depth] = 1;
  w->array[w->depth] = (char)array;
}

void fci_jw_object(fci_jw *w, const char *key) { open_container(w, key, 0); }
void fci_jw_array(fci_jw *w, const char *key) { open_container(w, key, 1); }

void fci_jw_end(fci_jw *w)
{
  if (w->depth == 0) {
    w->overflow = 1;
    return;
  }
  int d = w->depth--;
  if (w->array[d]) {
    putc(']', w->f);
    return;
  }
  /* cJSON_Print closes every object on its own line, an empty one too ("{\n}"). */
  putc('\n', w->f);
  indent(w, d - 1);
  putc('}', w->f);
}

/* The shortest of 15, 16, 17 significant digits that round-trips: 17 always does for IEEE
 * binary64 (C11 5.2.4.2.2, DBL_DECIMAL_DIG), 15 is the most that every decimal survives.
 * fci_fmt_shortest gives that loop's text without printf (src/fmt_short.c). */
int fci_jw_format_double(char *buf, double v) { return fci_fmt_shortest(buf, v); }

void fci_jw_number(fci_jw *w, const char *key, double v)
{
  char buf[32];
  member(w, key);
  if (!isfinite(v)) {
    fputs("null", w->f);
    return;
  }
  fci_jw_format_double(buf, v);
  fputs(buf, w->f);
}

void fci_jw_string(fci_jw *w, const char *key, const char *s)
{
  member(w, key);
  put_string(w->f, s);
}

void fci_jw_bool(fci_jw *w, const char *key, int v)
{
  member(w, key);
  fputs(v ? "true" : "false", w->f);
}

void fci_jw_null(fci_jw *w, const char *key)
{
  member(w, key);
  fputs("null", w->f);
}

int fci_jw_finish(fci_jw *w)
{
  return (w->overflow || w->depth != 0 || ferror(w->f)) ? -1 : 0;
}
