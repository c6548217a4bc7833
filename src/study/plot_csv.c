/* ferrocirc — a streaming reader for the CSV files ferrocirc writes (time series, sweeps, valve
 * profiles). One line is held at a time, so a 10^7-row run costs no more memory than a short
 * one. Fields follow RFC 4180 quoting; lines starting with '#' (the note of a partial file) and
 * blank lines are skipped. A header field "name [unit]" is split into name and unit. */
#define _POSIX_C_SOURCE 200809L
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "plot_int.h"

#define MAX_COLS 100000 /* a header wider than this is not one of ours */

/* Read the next non-blank, non-comment line into c->buf without its line end; 0 at EOF. */
static int read_line(fci_csv *c)
{
  for (;;) {
    ssize_t len = getline(&c->buf, &c->cap, c->f);
    if (len < 0) return 0;
    c->line++;
    while (len > 0 && (c->buf[len - 1] == '\n' || c->buf[len - 1] == '\r')) c->buf[--len] = '\0';
    if (len > 0 && c->buf[0] != '#') return 1;
  }
}

/* Split *pos at the next comma, unquoting in place; returns the field or NULL at end of line.
 * *bad is set for an unterminated quote. */
static char *next_field(char **pos, int *bad)
{
  char *s = *pos;
  if (!s) return NULL;
  if (*s != '"') {
    char *comma = strchr(s, ',');
    *pos = comma ? comma + 1 : NULL;
    if (comma) *comma = '\0';
    return s;
  }
  char *w = s, *r = s + 1;
  for (;;) {
    if (!*r) { *bad = 1; *pos = NULL; *w = '\0'; return s; }
    if (*r == '"' && r[1] == '"') { *w++ = '"'; r += 2; continue; }
    if (*r == '"') break;
    *w++ = *r++;
  }
  *w = '\0';
  r++;
  *pos = *r == ',' ? r + 1 : NULL;
  return s;
}

static char *trimmed(char *s)
{
  while (*s == ' ' || *s == '\t') s++;
  size_t n = strlen(s);
  while (n > 0 && (s[n - 1] == ' ' || s[n - 1] == '\t')) s[--n] = '\0';
  return s;
}

static int add_column(fci_csv *c, char *field, fc_error *err)
{
  char *f = trimmed(field), *unit = "";
  size_t n = strlen(f);
  if (n > 0 && f[n - 1] == ']') {
    char *open = strrchr(f, '[');
    if (open) {
      f[n - 1] = '\0';
      unit = trimmed(open + 1);
      *open = '\0';
      f = trimmed(f);
    }
  }
  if (!*f) {
    fc_fail(err, FC_EPARAM, NULL, "header column %d has no name", c->nCol + 1);
    return FC_EPARAM;
  }
  if (!(c->name[c->nCol] = fc_strdup(f)) || !(c->unit[c->nCol] = fc_strdup(unit)))
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  /* a sweep's last column is "status" ("ok" or the point's error); older files call it "error" */
  if (!strcmp(f, "error") || !strcmp(f, "status")) c->iErr = c->nCol;
  c->nCol++;
  return FC_OK;
}

static int parse_header(fci_csv *c, fc_error *err)
{
  if (!read_line(c)) return fc_fail(err, FC_EPARAM, NULL, "empty file: expected a CSV header");
  int n = 1;
  for (const char *s = c->buf; *s; s++) n += *s == ',';
  if (n > MAX_COLS) return fc_fail(err, FC_EPARAM, NULL, "header has %d columns (at most %d)", n, MAX_COLS);
  if (!(c->name = fc_calloc((size_t)n, sizeof *c->name)) ||
      !(c->unit = fc_calloc((size_t)n, sizeof *c->unit)) ||
      !(c->val = fc_calloc((size_t)n, sizeof *c->val)))
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  char *pos = c->buf, *f;
  int bad = 0, rc;
  while ((f = next_field(&pos, &bad)))
    if ((rc = add_column(c, f, err))) return rc;
  if (bad) return fc_fail(err, FC_EPARAM, NULL, "unterminated quote in the header");
  return FC_OK;
}

int fci_csv_open(const char *file, fci_csv **out, fc_error *err)
{
  *out = NULL;
  fci_csv *c = fc_calloc(1, sizeof *c);
  if (!c || !(c->file = fc_strdup(file))) {
    fc_free(c);
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  }
  c->iErr = -1;
  int rc;
  if (!(c->f = fopen(file, "r"))) {
    rc = fc_fail(err, FC_EIO, NULL, "cannot read %s: %s", file, strerror(errno));
    goto fail;
  }
  if ((rc = parse_header(c, err))) {
    err->file[0] = '\0';
    err->line = 0;
    fc_error_set_file(err, file, c->line > 0 ? (int)c->line : 1, 1);
    goto fail;
  }
  c->dataStart = ftell(c->f);
  c->dataLine = c->line;
  *out = c;
  return FC_OK;
fail:
  fci_csv_free(c);
  return rc;
}

/* Attach file, line and column (1-based character position, 1 for the whole row) to err
 * (already filled by fc_fail) and return the negative code. */
static int row_error(fci_csv *c, fc_error *err, int col)
{
  err->file[0] = '\0';
  err->line = 0;
  fc_error_set_file(err, c->file, (int)c->line, col);
  return -err->code;
}

int fci_csv_next(fci_csv *c, fc_error *err)
{
  if (!read_line(c)) {
    if (ferror(c->f)) {
      fc_fail(err, FC_EIO, NULL, "reading %s failed after line %ld", c->file, c->line);
      return -FC_EIO;
    }
    return 0;
  }
  char *pos = c->buf, *f;
  int k = 0, bad = 0;
  c->errText = "";
  while ((f = next_field(&pos, &bad))) {
    if (k >= c->nCol) {
      fc_fail(err, FC_EPARAM, NULL, "more fields than the %d columns of the header", c->nCol);
      return row_error(c, err, 1);
    }
    if (k == c->iErr) {
      c->errText = trimmed(f);
      if (!strcmp(c->errText, "ok")) c->errText = "";
      c->val[k++] = NAN;
      continue;
    }
    char *s = trimmed(f), *end;
    errno = 0;
    double v = *s ? strtod(s, &end) : NAN;
    if (*s && (end == s || *trimmed(end))) {
      fc_fail(err, FC_EPARAM, NULL, "column %d (%s): expected a number, got \"%.60s\"", k + 1,
              c->name[k], s);
      return row_error(c, err, (int)(s - c->buf) + 1);
    }
    c->val[k++] = v;
  }
  if (bad) {
    fc_fail(err, FC_EPARAM, NULL, "column %d: unterminated quote", k);
    return row_error(c, err, 1);
  }
  if (k != c->nCol) {
    fc_fail(err, FC_EPARAM, NULL, "%d fields, but the header has %d columns", k, c->nCol);
    return row_error(c, err, 1);
  }
  return 1;
}

int fci_csv_rewind(fci_csv *c, fc_error *err)
{
  if (fseek(c->f, c->dataStart, SEEK_SET) != 0)
    return fc_fail(err, FC_EIO, NULL, "cannot re-read %s (not a seekable file)", c->file);
  c->line = c->dataLine;
  return FC_OK;
}

int fci_csv_find(const fci_csv *c, const char *name)
{
  char want[512];
  snprintf(want, sizeof want, "%s", name);
  char *w = trimmed(want);
  size_t n = strlen(w);
  char *open = n > 0 && w[n - 1] == ']' ? strrchr(w, '[') : NULL;
  if (open) { *open = '\0'; w = trimmed(w); }
  for (int k = 0; k < c->nCol; k++)
    if (!strcmp(c->name[k], w)) return k;
  return -1;
}

const char *fci_csv_columns(const fci_csv *c, char *buf, size_t n)
{
  size_t w = 0;
  buf[0] = '\0';
  for (int k = 0; k < c->nCol && w + 1 < n; k++) {
    int m = snprintf(buf + w, n - w, "%s%s", k ? ", " : "", c->name[k]);
    if (m < 0 || (size_t)m >= n - w) {
      if (n > 4) snprintf(buf + n - 4, 4, "...");
      break;
    }
    w += (size_t)m;
  }
  return buf;
}

void fci_csv_free(fci_csv *c)
{
  if (!c) return;
  if (c->f) fclose(c->f);
  for (int k = 0; c->name && k < c->nCol; k++) {
    fc_free(c->name[k]);
    fc_free(c->unit[k]);
  }
  fc_free(c->name);
  fc_free(c->unit);
  fc_free(c->val);
  free(c->buf); /* allocated by getline, not by fc_malloc */
  fc_free(c->file);
  fc_free(c);
}
