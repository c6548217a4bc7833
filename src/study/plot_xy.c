/* ferrocirc — x-y figures: sweep curves and the valve field profile.
 *
 * Sweep files are small (one row per simulated point), so they are read whole. A point is
 * failed when its "error" column is not empty or a plotted value is not a number: it is left out
 * of the curve and marked with a cross at its x. The y columns are grouped by unit, one panel
 * per unit. A multi-parameter grid repeats x; each run of increasing x becomes its own polyline
 * so that the curves of a grid do not zigzag.
 *
 * The valve profile (`ferrocirc valve --profile`) has fixed columns in SI: x_m, width_m,
 * height_m, B_{floor,centre,roof,min,mean,max}_T, pmag_{min,mean,max}_Pa. It is drawn as |B|
 * and the meniscus magnetic pressure along the channel, the min..max range over the
 * cross-section as a band, and the channel width and height when they change along x. */
#define _POSIX_C_SOURCE 200809L
#include <math.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "plot_int.h"

#define MAX_XY_ROWS 1000000 /* sweep or profile rows held in memory */
#define MAX_Y 32

typedef struct table {
  double *v;        /* rows x nCol, row-major */
  char  **err;      /* per-row "error" text or NULL (owned) */
  size_t  n, cap;
  int     nCol;
} table;

static void table_free(table *t)
{
  for (size_t i = 0; t->err && i < t->n; i++) fc_free(t->err[i]);
  fc_free(t->err);
  fc_free(t->v);
}

static int table_read(fci_csv *c, table *t, fc_error *err)
{
  int r;
  memset(t, 0, sizeof *t);
  t->nCol = c->nCol;
  while ((r = fci_csv_next(c, err)) > 0) {
    if (t->n == MAX_XY_ROWS)
      return fc_fail(err, FC_EPARAM, NULL, "%s has more than %d rows", c->file, MAX_XY_ROWS);
    if (t->n == t->cap) {
      size_t cap = t->cap ? 2 * t->cap : 256;
      double *v = fc_realloc(t->v, cap * (size_t)t->nCol * sizeof *v);
      if (v) t->v = v;
      char **e = v ? fc_realloc(t->err, cap * sizeof *e) : NULL;
      if (!e) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
      t->err = e;
      t->cap = cap;
    }
    memcpy(t->v + t->n * (size_t)t->nCol, c->val, (size_t)t->nCol * sizeof *c->val);
    t->err[t->n] = c->errText[0] ? fc_strdup(c->errText) : NULL;
    t->n++;
  }
  if (r < 0) return -r;
  if (t->n == 0) return fc_fail(err, FC_EPARAM, NULL, "%s has a header but no data rows", c->file);
  return FC_OK;
}

static double at(const table *t, size_t row, int col) { return t->v[row * (size_t)t->nCol + col]; }

static int need_col(const fci_csv *c, const char *name, const char *what, fc_error *err)
{
  int k = fci_csv_find(c, name);
  if (k >= 0) return k;
  char list[600];
  fci_csv_columns(c, list, sizeof list);
  fc_fail(err, FC_EUSAGE, NULL, "%s: %s has no column \"%s\"; its columns are: %s", what,
          c->file, name, list);
  return -1;
}

static void x_extent(fci_figure *fig, const table *t, int xc, double pad)
{
  double lo = INFINITY, hi = -INFINITY;
  for (size_t i = 0; i < t->n; i++)
    if (isfinite(at(t, i, xc))) { lo = fmin(lo, at(t, i, xc)); hi = fmax(hi, at(t, i, xc)); }
  if (!(lo <= hi)) { lo = 0; hi = 1; }
  if (hi == lo) { lo -= 0.5; hi += 0.5; }
  double w = (hi - lo) * pad;
  fig->x0 = lo - w;
  fig->x1 = hi + w;
}

/* One panel of the y columns ys[0..ny) (all of one unit). */
static int sweep_panel(const fci_csv *c, const table *t, int xc, const int *ys, int ny,
                       fci_figure *fig, size_t *nfail, fc_error *err)
{
  char yl[128] = "";
  for (int k = 0; k < ny && strlen(yl) < 60; k++) {
    strcat(yl, k ? ", " : "");
    strncat(yl, c->name[ys[k]], 60);
  }
  size_t m = strlen(yl);
  char u[64];
  if (fci_unit_pretty(c->unit[ys[0]], u, sizeof u)[0]) snprintf(yl + m, sizeof yl - m, " [%s]", u);
  fci_panel *p = fci_fig_panel(fig, yl);
  if (!p || !(p->fail = fc_calloc(t->n, sizeof *p->fail))) goto nomem;
  for (int k = 0; k < ny; k++) {
    fci_series *s = fci_panel_series(p, c->name[ys[k]], t->n);
    if (!s) goto nomem;
    s->style = FCI_MARKERS;
    s->breakAt = 1;
    for (size_t i = 0; i < t->n; i++) {
      double x = at(t, i, xc), y = at(t, i, ys[k]);
      if (!isfinite(x)) continue;
      s->x[s->n] = x;
      s->y[s->n++] = t->err[i] ? NAN : y;
    }
  }
  for (size_t i = 0; i < t->n; i++) {
    int bad = t->err[i] != NULL;
    for (int k = 0; k < ny; k++) bad |= !isfinite(at(t, i, ys[k]));
    if (bad && isfinite(at(t, i, xc))) p->fail[p->nFail++] = at(t, i, xc);
  }
  if (p->nFail > *nfail) *nfail = p->nFail;
  return FC_OK;
nomem:
  return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
}

static int sweep_columns(const fci_csv *c, const fci_plot_args *a, int *xc, int *ys, int *ny,
                         fc_error *err)
{
  if (!a->xcol || !a->ycols)
    return fc_fail(err, FC_EUSAGE, NULL, "%s is a sweep table: give --x COLUMN and --y "
                   "COLUMN[,COLUMN...] (names from its header, units optional)", c->file);
  if ((*xc = need_col(c, a->xcol, "--x", err)) < 0) return FC_EUSAGE;
  char list[4096];
  snprintf(list, sizeof list, "%s", a->ycols);
  *ny = 0;
  for (char *sv = NULL, *tok = strtok_r(list, ",", &sv); tok; tok = strtok_r(NULL, ",", &sv)) {
    if (*ny == MAX_Y) return fc_fail(err, FC_EUSAGE, NULL, "--y: at most %d columns", MAX_Y);
    if ((ys[(*ny)++] = need_col(c, tok, "--y", err)) < 0) return FC_EUSAGE;
  }
  if (!*ny) return fc_fail(err, FC_EUSAGE, NULL, "--y: no column given");
  return FC_OK;
}

int fci_plot_sweep(fci_csv *c, const fci_plot_args *a, fci_figure *fig, fc_error *err)
{
  int xc = -1, ys[MAX_Y], ny = 0, rc, done[MAX_Y] = {0};
  table t;
  memset(&t, 0, sizeof t);
  if ((rc = sweep_columns(c, a, &xc, ys, &ny, err)) || (rc = table_read(c, &t, err))) goto out;
  size_t nfail = 0;
  for (int k = 0; k < ny; k++) {
    if (done[k]) continue;
    int group[MAX_Y], ng = 0;
    for (int j = k; j < ny; j++)
      if (!done[j] && !strcmp(c->unit[ys[j]], c->unit[ys[k]])) { group[ng++] = ys[j]; done[j] = 1; }
    if ((rc = sweep_panel(c, &t, xc, group, ng, fig, &nfail, err))) goto out;
  }
  const char *base = strrchr(c->file, '/');
  base = base ? base + 1 : c->file;
  if (a->title) snprintf(fig->title, sizeof fig->title, "%s", a->title);
  else snprintf(fig->title, sizeof fig->title, "Sweep over %s", c->name[xc]);
  if (nfail)
    snprintf(fig->subtitle, sizeof fig->subtitle, "%s: %zu points, %zu failed (crosses)", base, t.n, nfail);
  else snprintf(fig->subtitle, sizeof fig->subtitle, "%s: %zu points, none failed", base, t.n);
  char u[64];
  fci_unit_pretty(c->unit[xc], u, sizeof u);
  snprintf(fig->xlabel, sizeof fig->xlabel, u[0] ? "%s [%s]" : "%s", c->name[xc], u);
  x_extent(fig, &t, xc, 0.03);
out:
  table_free(&t);
  return rc;
}

static const char *const prof_cols[] = {"x_m", "width_m", "height_m", "B_centre_T", "B_min_T",
  "B_mean_T", "B_max_T", "pmag_min_Pa", "pmag_mean_Pa", "pmag_max_Pa", NULL};
enum { PX, PW, PH, PBC, PBMIN, PBMEAN, PBMAX, PPMIN, PPMEAN, PPMAX, PN };

/* A series of column `yc` (and `y2c` for a band) scaled by k, x in mm. */
static int prof_series(fci_panel *p, const table *t, const int *col, int yc, int y2c, double k,
                       const char *label, int colour, int dash, fc_error *err)
{
  fci_series *s = fci_panel_series(p, label, t->n);
  if (!s || (y2c >= 0 && !(s->y2 = fc_calloc(t->n, sizeof *s->y2))))
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  s->style = y2c >= 0 ? FCI_BAND : FCI_LINE;
  s->colour = colour;
  s->dash = dash;
  for (size_t i = 0; i < t->n; i++) {
    s->x[i] = at(t, i, col[PX]) * 1e3;
    s->y[i] = at(t, i, col[yc]) * k;
    if (y2c >= 0) s->y2[i] = at(t, i, col[y2c]) * k;
  }
  s->n = t->n;
  return FC_OK;
}

static int varies(const table *t, int col)
{
  for (size_t i = 1; i < t->n; i++)
    if (fabs(at(t, i, col) - at(t, 0, col)) > 1e-12) return 1;
  return 0;
}

int fci_plot_profile(fci_csv *c, const fci_plot_args *a, fci_figure *fig, fc_error *err)
{
  int col[PN], rc;
  table t;
  memset(&t, 0, sizeof t);
  for (int k = 0; k < PN; k++)
    if ((col[k] = need_col(c, prof_cols[k], "valve profile", err)) < 0) return FC_EPARAM;
  if ((rc = table_read(c, &t, err))) goto out;
  double pmax = 0;
  for (size_t i = 0; i < t.n; i++) pmax = fmax(pmax, fabs(at(&t, i, col[PPMAX])));
  int kpa = pmax > 2000;
  fci_panel *p = fci_fig_panel(fig, "|B| [mT]");
  rc = !p ? fc_fail(err, FC_ENOMEM, NULL, "out of memory")
     : prof_series(p, &t, col, PBMIN, PBMAX, 1e3, "range over the section", 0, 0, err);
  if (!rc) rc = prof_series(p, &t, col, PBMEAN, -1, 1e3, "section mean", 0, 0, err);
  if (!rc) rc = prof_series(p, &t, col, PBC, -1, 1e3, "centre line", 1, 1, err);
  if (rc) goto out;
  if (!(p = fci_fig_panel(fig, kpa ? "magnetic pressure [kPa]" : "magnetic pressure [Pa]"))) {
    rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
    goto out;
  }
  double k = kpa ? 1e-3 : 1.0;
  rc = prof_series(p, &t, col, PPMIN, PPMAX, k, "range over the section", 2, 0, err);
  if (!rc) rc = prof_series(p, &t, col, PPMEAN, -1, k, "section mean", 2, 0, err);
  if (!rc && (varies(&t, col[PW]) || varies(&t, col[PH]))) {
    if (!(p = fci_fig_panel(fig, "channel [mm]"))) rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
    else p->zero = 1;
    if (!rc) rc = prof_series(p, &t, col, PW, -1, 1e3, "width", 4, 0, err);
    if (!rc) rc = prof_series(p, &t, col, PH, -1, 1e3, "height", 3, 1, err);
  }
  if (rc) goto out;
  const char *base = strrchr(c->file, '/');
  snprintf(fig->title, sizeof fig->title, "%s", a->title ? a->title : "Valve field profile");
  snprintf(fig->subtitle, sizeof fig->subtitle, "%s: flux density and meniscus magnetic pressure "
           "along the channel; band = range over the cross-section", base ? base + 1 : c->file);
  snprintf(fig->xlabel, sizeof fig->xlabel, "position along the channel x [mm]");
  x_extent(fig, &t, col[PX], 0.0);
  fig->x0 *= 1e3;
  fig->x1 *= 1e3;
out:
  table_free(&t);
  return rc;
}
