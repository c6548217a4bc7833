/* ferrocirc — reading a valve measurement CSV for calibration (format: docs/valve-model.md,
 * "Calibration").
 *
 * First non-comment line: the header, e.g.
 *   design,override,direction,crack [mmHg],reseat [mmHg],blowout [mmHg],sigma [mmHg]
 * "design" and "direction" and at least one of crack/reseat/blowout are required; each pressure
 * column carries its unit in brackets (any pressure unit). Lines starting with '#' and blank
 * lines are skipped. Fields may be double-quoted (RFC 4180). An empty cell is "not measured". */
#include <ctype.h>
#include <stdarg.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "calibrate.h"
#include "net.h"

#define CSV_MAX_BYTES (8u << 20)
#define MAX_FIELDS 32

enum { C_DESIGN, C_OVERRIDE, C_DIRECTION, C_CRACK, C_RESEAT, C_BLOWOUT, C_SIGMA, C_ID, C_NOTE,
       C_N };
static const char *const col_name[C_N] = {"design", "override", "direction", "crack", "reseat",
                                          "blowout", "sigma", "id", "note"};

typedef struct reader {
  const char *file;
  const fc_units *u;
  int    col[C_N];           /* field index of each known column, -1 if absent */
  double k[C_N];             /* unit -> Pa divisor (value_Pa = value / k) */
  char   unit[C_N][32];
} reader;

const char *fci_cal_qname(int q)
{
  static const char *const n[FCI_CAL_NQ] = {"crack", "reseat", "blowout"};
  return (q >= 0 && q < FCI_CAL_NQ) ? n[q] : "?";
}

static int csv_fail(fc_error *err, const char *file, int line, int col, const char *fmt, ...)
#if defined(__GNUC__)
  __attribute__((format(printf, 5, 6)))
#endif
  ;
static int csv_fail(fc_error *err, const char *file, int line, int col, const char *fmt, ...)
{
  va_list ap;
  if (!err) return FC_EPARAM;
  fc_fail(err, FC_EPARAM, NULL, "%s", "");
  va_start(ap, fmt);
  vsnprintf(err->msg, sizeof err->msg, fmt, ap);
  va_end(ap);
  fc_error_set_file(err, file, line, col > 0 ? col : 1);
  return FC_EPARAM;
}

/* Split one line in place into at most MAX_FIELDS fields (quotes removed, "" -> "). */
static int split_line(char *s, char **f, int *nf)
{
  int n = 0;
  for (;;) {
    if (n == MAX_FIELDS) return -1;
    char *w = s, *start = s;
    if (*s == '"') {
      for (s++;; s++) {
        if (!*s) return -2;
        if (*s == '"' && s[1] == '"') { *w++ = '"'; s++; }
        else if (*s == '"') { s++; break; }
        else *w++ = *s;
      }
      if (*s && *s != ',') return -2;
    } else {
      while (*s && *s != ',') *w++ = *s++;
    }
    char end = *s;
    *w = '\0';
    while (*start && isspace((unsigned char)*start)) memmove(start, start + 1, strlen(start));
    for (size_t k = strlen(start); k && isspace((unsigned char)start[k - 1]);) start[--k] = 0;
    f[n++] = start;
    if (!end) break;
    s++;
  }
  *nf = n;
  return 0;
}

/* "crack [mmHg]" -> name "crack", unit "mmHg". */
static void name_unit(const char *h, char *name, size_t nn, char *unit, size_t nu)
{
  const char *br = strchr(h, '[');
  size_t len = br ? (size_t)(br - h) : strlen(h);
  while (len && isspace((unsigned char)h[len - 1])) len--;
  snprintf(name, nn, "%.*s", (int)len, h);
  unit[0] = '\0';
  if (br) {
    const char *end = strchr(br, ']');
    if (end) snprintf(unit, nu, "%.*s", (int)(end - br - 1), br + 1);
    else snprintf(unit, nu, "%s", "\x01"); /* unterminated: reported as a bad unit */
  }
}

static int header_column(reader *r, int i, const char *h, int line, fc_error *err)
{
  char name[64], unit[32];
  name_unit(h, name, sizeof name, unit, sizeof unit);
  int c = 0;
  while (c < C_N && strcmp(name, col_name[c])) c++;
  if (c == C_N)
    return csv_fail(err, r->file, line, i + 1, "unknown column \"%s\"; expected design, "
                    "override, direction, crack [UNIT], reseat [UNIT], blowout [UNIT], sigma "
                    "[UNIT], id, note", h);
  if (r->col[c] >= 0)
    return csv_fail(err, r->file, line, i + 1, "column \"%s\" appears twice", name);
  r->col[c] = i;
  int pressure = c >= C_CRACK && c <= C_SIGMA;
  if (pressure && !unit[0])
    return csv_fail(err, r->file, line, i + 1, "column \"%s\" needs a pressure unit in brackets, "
                    "e.g. \"%s [mmHg]\"", name, name);
  if (!pressure && unit[0])
    return csv_fail(err, r->file, line, i + 1, "column \"%s\" takes no unit", name);
  if (pressure) {
    fc_error e;
    fc_error_clear(&e);
    if (fc_units_out_factor(r->u, unit, FC_DIM_PRESSURE, &r->k[c], h, &e))
      return csv_fail(err, r->file, line, i + 1, "column \"%s\": \"%s\" is not a pressure unit "
                      "(expected e.g. Pa, kPa, mbar, mmHg, cmH2O, psi)", name, unit);
    snprintf(r->unit[c], sizeof r->unit[c], "%s", unit);
  }
  return FC_OK;
}

static int parse_header(reader *r, char *line, int lineno, fc_error *err)
{
  char *f[MAX_FIELDS];
  int nf;
  for (int c = 0; c < C_N; c++) r->col[c] = -1;
  if (split_line(line, f, &nf))
    return csv_fail(err, r->file, lineno, 0, "unreadable header line (more than 32 columns or a "
                    "bad quote)");
  for (int i = 0; i < nf; i++) {
    int rc = header_column(r, i, f[i], lineno, err);
    if (rc) return rc;
  }
  const char *miss = r->col[C_DESIGN] < 0 ? "design" : r->col[C_DIRECTION] < 0 ? "direction" : NULL;
  if (miss) return csv_fail(err, r->file, lineno, 0, "missing column \"%s\"; the header needs "
                            "design, direction and at least one of crack, reseat, blowout",
                            miss);
  if (r->col[C_CRACK] < 0 && r->col[C_RESEAT] < 0 && r->col[C_BLOWOUT] < 0)
    return csv_fail(err, r->file, lineno, 0, "no pressure column: give at least one of "
                    "\"crack [UNIT]\", \"reseat [UNIT]\", \"blowout [UNIT]\"");
  return FC_OK;
}

/* Pressure cell of column c: NaN if empty or the column is absent. */
static int get_pressure(const reader *r, char **f, int nf, int c, int line, double *out,
                        fc_error *err)
{
  *out = NAN;
  int i = r->col[c];
  if (i < 0 || i >= nf || !f[i][0]) return FC_OK;
  char *end;
  double v = strtod(f[i], &end);
  if (*end || !isfinite(v))
    return csv_fail(err, r->file, line, i + 1, "%s: expected a number in %s", col_name[c],
                    r->unit[c]);
  if (v < 0 || (c == C_SIGMA && v == 0))
    return csv_fail(err, r->file, line, i + 1, c == C_SIGMA ? "%s must be > 0, got %s" :
                    "%s must be >= 0 (a pressure difference across the valve in the named "
                    "direction), got %s", col_name[c], f[i]);
  *out = v / r->k[c];
  return FC_OK;
}

static int parse_row(const reader *r, char *line, int lineno, fci_cal_row *row, fc_error *err)
{
  char *f[MAX_FIELDS];
  int nf, rc = FC_OK;
  if (split_line(line, f, &nf))
    return csv_fail(err, r->file, lineno, 0, "unreadable line (more than 32 fields or a bad "
                    "quote)");
  row->line = lineno;
  const char *des = r->col[C_DESIGN] < nf ? f[r->col[C_DESIGN]] : "";
  const char *dir = r->col[C_DIRECTION] < nf ? f[r->col[C_DIRECTION]] : "";
  const char *ov = r->col[C_OVERRIDE] >= 0 && r->col[C_OVERRIDE] < nf ? f[r->col[C_OVERRIDE]] : "";
  if (!des[0]) return csv_fail(err, r->file, lineno, r->col[C_DESIGN] + 1, "design: expected a "
                               "design file name");
  if (strcmp(dir, "forward") && strcmp(dir, "reverse"))
    return csv_fail(err, r->file, lineno, r->col[C_DIRECTION] + 1, "direction: expected "
                    "\"forward\" or \"reverse\", got \"%s\"", dir);
  row->reverse = dir[0] == 'r';
  for (int q = 0; q < FCI_CAL_NQ && !rc; q++)
    rc = get_pressure(r, f, nf, C_CRACK + q, lineno, &row->meas[q], err);
  if (!rc) rc = get_pressure(r, f, nf, C_SIGMA, lineno, &row->sigma, err);
  if (rc) return rc;
  if (isnan(row->meas[0]) && isnan(row->meas[1]) && isnan(row->meas[2]))
    return csv_fail(err, r->file, lineno, 0, "nothing measured in this row (crack, reseat and "
                    "blowout are all empty)");
  row->design = fc_strdup(des);
  row->override = fc_strdup(ov);
  if (!row->design || !row->override) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  return FC_OK;
}

/* Index the measured values; check that sigma is given on every row or on none. */
static int index_values(fci_cal_data *d, fc_error *err)
{
  int with = 0;
  for (int i = 0; i < d->nRow; i++) {
    with += !isnan(d->row[i].sigma);
    for (int q = 0; q < FCI_CAL_NQ; q++) d->nValue += !isnan(d->row[i].meas[q]);
  }
  for (int i = 0; with && with < d->nRow; i++)
    if (isnan(d->row[i].sigma))
      return csv_fail(err, d->file, d->row[i].line, 0, "sigma is empty here but given on other "
                      "rows: give it on every row or on none");
  d->has_sigma = with > 0;
  d->vrow = fc_calloc((size_t)d->nValue + 1, sizeof *d->vrow);
  d->vq = fc_calloc((size_t)d->nValue + 1, sizeof *d->vq);
  if (!d->vrow || !d->vq) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  int k = 0;
  for (int i = 0; i < d->nRow; i++)
    for (int q = 0; q < FCI_CAL_NQ; q++)
      if (!isnan(d->row[i].meas[q])) {
        d->vrow[k] = i;
        d->vq[k++] = q;
      }
  return FC_OK;
}

static int parse_lines(fci_cal_data *d, reader *r, char *buf, fc_error *err)
{
  int lineno = 0, have_header = 0, rc = FC_OK;
  for (char *s = buf, *next; s && *s && !rc; s = next) {
    next = strchr(s, '\n');
    if (next) *next++ = '\0';
    lineno++;
    size_t n = strlen(s);
    if (n && s[n - 1] == '\r') s[--n] = '\0';
    const char *t = s;
    while (isspace((unsigned char)*t)) t++;
    if (!*t || *t == '#') continue;
    if (!have_header) {
      rc = parse_header(r, s, lineno, err);
      have_header = 1;
      continue;
    }
    fci_cal_row *row = fc_realloc(d->row, (size_t)(d->nRow + 1) * sizeof *row);
    if (!row) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
    d->row = row;
    memset(&row[d->nRow], 0, sizeof *row);
    rc = parse_row(r, s, lineno, &row[d->nRow], err);
    d->nRow++; /* counted even on failure so that fci_cal_data_free releases its strings */
  }
  if (!rc && !have_header)
    return csv_fail(err, d->file, 0, 0, "empty file: expected a header line such as "
                    "\"design,direction,crack [mmHg]\"");
  if (!rc && d->nRow == 0)
    return csv_fail(err, d->file, lineno, 0, "no measurement rows after the header");
  return rc;
}

int fci_cal_data_load(const char *file, const fc_units *u, fci_cal_data **out, fc_error *err)
{
  char *buf = NULL;
  size_t len = 0;
  reader r = {file, u, {0}, {0}, {{0}}};
  *out = NULL;
  fci_cal_data *d = fc_calloc(1, sizeof *d);
  if (!d) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  const char *slash = strrchr(file, '/');
  d->file = fc_strdup(file);
  d->dir = fc_malloc(slash ? (size_t)(slash - file) + 1 : 1);
  int rc = (!d->file || !d->dir) ? fc_fail(err, FC_ENOMEM, NULL, "out of memory") : FC_OK;
  if (!rc) snprintf(d->dir, slash ? (size_t)(slash - file) + 1 : 1, "%s", file);
  if (!rc) rc = fci_read_file(file, CSV_MAX_BYTES, &buf, &len, err);
  if (!rc && memchr(buf, '\0', len))
    rc = csv_fail(err, file, 0, 0, "not a text file (contains NUL bytes)");
  if (!rc) rc = parse_lines(d, &r, buf, err);
  if (!rc) rc = index_values(d, err);
  if (!rc) {
    int c = r.col[C_CRACK] >= 0 ? C_CRACK : r.col[C_RESEAT] >= 0 ? C_RESEAT : C_BLOWOUT;
    snprintf(d->unit, sizeof d->unit, "%s", r.unit[c]);
    d->k = r.k[c];
  }
  fc_free(buf);
  if (rc) {
    if (!err->file[0]) fc_error_set_file(err, file, 0, 0);
    fci_cal_data_free(d);
    return rc;
  }
  *out = d;
  return FC_OK;
}

void fci_cal_data_free(fci_cal_data *d)
{
  if (!d) return;
  for (int i = 0; i < d->nRow; i++) {
    fc_free(d->row[i].design);
    fc_free(d->row[i].override);
  }
  fc_free(d->row);
  fc_free(d->vrow);
  fc_free(d->vq);
  fc_free(d->file);
  fc_free(d->dir);
  fc_free(d);
}
