/* ferrocirc — the time-series figure: pressures, flows and valve states of a run CSV.
 *
 * The file is read twice and never held: pass 1 finds the time span (needed for --cycles and for
 * the decimation bins), pass 2 feeds each plotted column into a min/max binner (plot_axis.c) and
 * turns every state:ID column into the spans where that valve is not sealed (state != 0), which
 * are shaded behind the pressure and flow curves. A span starts at the first sample with the
 * valve open and ends at the first sample with it sealed again. */
#define _POSIX_C_SOURCE 200809L
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "plot_int.h"

enum { KIND_P = 0, KIND_Q = 1, KIND_STATE = 2, KIND_N };

typedef struct pick {
  int col, kind;
  fc_plot_bins *bins;
  int shade;          /* index in fig->shade of a state column, -1 otherwise */
  int open;           /* state column: currently open */
  double since;       /* ... since this time */
} pick;

static int kind_of(const char *name)
{
  return !strncmp(name, "p:", 2) ? KIND_P : !strncmp(name, "q:", 2) ? KIND_Q
       : !strncmp(name, "state:", 6) ? KIND_STATE : -1;
}

static int add_pick(pick *pk, int *n, int col, int kind)
{
  for (int i = 0; i < *n; i++)
    if (pk[i].col == col) return 0;
  pk[*n].col = col;
  pk[*n].kind = kind;
  pk[*n].shade = -1;
  (*n)++;
  return 1;
}

/* The columns to draw: --columns, else every p:, q: and state: column. State columns are
 * always read, for the shading, even when they are not drawn. */
static int choose(const fci_csv *c, const fci_plot_args *a, pick *pk, int *n, fc_error *err)
{
  *n = 0;
  if (a->columns) {
    char list[4096];
    snprintf(list, sizeof list, "%s", a->columns);
    for (char *save = NULL, *tok = strtok_r(list, ",", &save); tok; tok = strtok_r(NULL, ",", &save)) {
      int col = fci_csv_find(c, tok);
      char have[600];
      if (col < 0 || kind_of(c->name[col]) < 0)
        return fc_fail(err, FC_EUSAGE, NULL, "--columns: %s has no p:, q: or state: column \"%s\"; "
                       "its columns are: %s", c->file, tok, fci_csv_columns(c, have, sizeof have));
      add_pick(pk, n, col, kind_of(c->name[col]));
    }
  } else {
    for (int k = 1; k < c->nCol; k++)
      if (kind_of(c->name[k]) >= 0) add_pick(pk, n, k, kind_of(c->name[k]));
  }
  return FC_OK;
}

/* Pass 1: first and last time; times must not decrease. */
static int time_span(fci_csv *c, double *t0, double *t1, long *rows, fc_error *err)
{
  int r;
  *rows = 0;
  double last = -INFINITY;
  while ((r = fci_csv_next(c, err)) > 0) {
    double t = c->val[0];
    if (!isfinite(t) || t < last) {
      fc_fail(err, FC_EPARAM, NULL, "time %g is not finite or goes backwards (previous %g)", t, last);
      fc_error_set_file(err, c->file, (int)c->line, 1);
      return FC_EPARAM;
    }
    if (!(*rows)++) *t0 = t;
    last = *t1 = t;
  }
  if (r < 0) return -r;
  if (*rows == 0) return fc_fail(err, FC_EPARAM, NULL, "%s has a header but no data rows", c->file);
  return fci_csv_rewind(c, err);
}

static int window(const fci_plot_args *a, double t0, double t1, double *w0, double *w1,
                  char *what, size_t nw, fc_error *err)
{
  *w0 = t0;
  *w1 = t1;
  what[0] = '\0';
  if (a->cycles) {
    char *end;
    long n = strncmp(a->cycles, "last:", 5) ? 0 : strtol(a->cycles + 5, &end, 10);
    if (n < 1 || *end)
      return fc_fail(err, FC_EUSAGE, NULL, "--cycles: expected last:N with N >= 1, got \"%s\"", a->cycles);
    if (!(a->period > 0))
      return fc_fail(err, FC_EUSAGE, NULL, "--cycles needs the cycle period: give --period T "
                     "(seconds, e.g. --period 1 for 60 beats per minute)");
    *w0 = fmax(t0, t1 - (double)n * a->period);
    snprintf(what, nw, " (last %ld cycle%s of %g s)", n, n > 1 ? "s" : "", a->period);
  }
  if (!isnan(a->from)) *w0 = fmax(*w0, a->from);
  if (!isnan(a->to)) *w1 = fmin(*w1, a->to);
  if (!(*w1 > *w0))
    return fc_fail(err, FC_EUSAGE, NULL, "the time window [%g, %g] s is empty; the file spans "
                   "[%g, %g] s", *w0, *w1, t0, t1);
  return FC_OK;
}

/* Pass 2. */
static int stream(fci_csv *c, fci_figure *fig, pick *pk, int n, double w0, double w1, fc_error *err)
{
  double gap = (w1 - w0) / FC_PLOT_MAX_POINTS, t = w0;
  int r;
  while ((r = fci_csv_next(c, err)) > 0) {
    t = c->val[0];
    if (t > w1) break;
    for (int i = 0; i < n; i++) {
      fc_plot_bins_add(pk[i].bins, t, c->val[pk[i].col]);
      if (pk[i].shade < 0 || t < w0) continue;
      int open = c->val[pk[i].col] != 0.0 && !isnan(c->val[pk[i].col]);
      if (open && !pk[i].open) pk[i].since = t;
      else if (!open && pk[i].open &&
               fci_shade_add(&fig->shade[pk[i].shade], pk[i].since, t, gap))
        return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
      pk[i].open = open;
    }
  }
  if (r < 0) return -r;
  for (int i = 0; i < n; i++)
    if (pk[i].shade >= 0 && pk[i].open &&
        fci_shade_add(&fig->shade[pk[i].shade], pk[i].since, fmin(t, w1), gap))
      return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  return FC_OK;
}

static int setup_shades(const fci_csv *c, fci_figure *fig, pick *pk, int *n)
{
  int ns = 0;
  for (int k = 1; k < c->nCol; k++)
    if (kind_of(c->name[k]) == KIND_STATE) {
      add_pick(pk, n, k, KIND_STATE);
      ns++;
    }
  if (!ns) return FC_OK;
  if (!(fig->shade = fc_calloc((size_t)ns, sizeof *fig->shade))) return FC_ENOMEM;
  for (int i = 0; i < *n; i++) {
    if (pk[i].kind != KIND_STATE) continue;
    fci_shade *s = &fig->shade[fig->nShade];
    snprintf(s->label, sizeof s->label, "%s open", c->name[pk[i].col] + 6);
    s->colour = fig->nShade % FCI_NSHADE;
    pk[i].shade = fig->nShade++;
  }
  return FC_OK;
}

static const char *const kind_label[KIND_N] = {"pressure", "flow", "valve state"};

static int build_panels(const fci_csv *c, fci_figure *fig, const pick *pk, int ndrawn, fc_error *err)
{
  for (int kind = 0; kind < KIND_N; kind++) {
    fci_panel *p = NULL;
    for (int i = 0; i < ndrawn; i++) {
      if (pk[i].kind != kind) continue;
      if (!p) {
        char yl[128];
        char u[64];
        fci_unit_pretty(c->unit[pk[i].col], u, sizeof u);
        snprintf(yl, sizeof yl, u[0] ? "%s [%s]" : "%s", kind_label[kind], u);
        if (!(p = fci_fig_panel(fig, yl))) goto nomem;
        p->shaded = kind != KIND_STATE;
        p->states = kind == KIND_STATE;
      }
      const char *name = strchr(c->name[pk[i].col], ':') + 1;
      fci_series *s = fci_panel_series(p, name, FC_PLOT_MAX_POINTS);
      if (!s) goto nomem;
      s->n = fc_plot_bins_points(pk[i].bins, s->x, s->y);
      if (kind == KIND_STATE) {
        s->colour = pk[i].shade;
        s->tone = 1;
      }
    }
  }
  return FC_OK;
nomem:
  return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
}

/* "Pressure, flow and valve state" from the panels present. */
static void title_of_panels(fci_figure *fig)
{
  size_t w = 0;
  for (int i = 0; i < fig->np && w < sizeof fig->title; i++) {
    const char *sep = i == 0 ? "" : i == fig->np - 1 ? " and " : ", ";
    size_t len = strcspn(fig->p[i].ylabel, "[");
    while (len > 0 && fig->p[i].ylabel[len - 1] == ' ') len--;
    w += (size_t)snprintf(fig->title + w, sizeof fig->title - w, "%s%.*s", sep, (int)len, fig->p[i].ylabel);
  }
  if (fig->title[0] >= 'a' && fig->title[0] <= 'z') fig->title[0] = (char)(fig->title[0] - 'a' + 'A');
}

int fci_plot_trace(fci_csv *c, const fci_plot_args *a, fci_figure *fig, fc_error *err)
{
  pick *pk = fc_calloc((size_t)c->nCol, sizeof *pk);
  int n = 0, rc;
  double t0 = 0, t1 = 0, w0, w1;
  long rows;
  char what[96];
  if (!pk) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  if ((rc = choose(c, a, pk, &n, err))) goto fail;
  int ndrawn = n;
  if ((rc = setup_shades(c, fig, pk, &n))) { rc = fc_fail(err, rc, NULL, "out of memory"); goto fail; }
  if (ndrawn == 0) {
    rc = fc_fail(err, FC_EPARAM, NULL, "%s has no p:, q: or state: columns to plot", c->file);
    goto fail;
  }
  if ((rc = time_span(c, &t0, &t1, &rows, err)) || (rc = window(a, t0, t1, &w0, &w1, what, sizeof what, err)))
    goto fail;
  for (int i = 0; i < n; i++)
    if ((rc = fc_plot_bins_new(w0, w1, FC_PLOT_MAX_POINTS, &pk[i].bins, err))) goto fail;
  if ((rc = stream(c, fig, pk, n, w0, w1, err)) || (rc = build_panels(c, fig, pk, ndrawn, err)))
    goto fail;
  const char *base = strrchr(c->file, '/');
  base = base ? base + 1 : c->file;
  if (a->title) snprintf(fig->title, sizeof fig->title, "%s", a->title);
  else title_of_panels(fig);
  snprintf(fig->subtitle, sizeof fig->subtitle, "%s: t = %g to %g s%s, %ld samples%s", base,
           w0, w1, what, rows, fig->nShade ? "; shaded: valve open" : "");
  snprintf(fig->xlabel, sizeof fig->xlabel, "time [s]");
  fig->x0 = w0;
  fig->x1 = w1;
fail:
  for (int i = 0; i < n; i++) fc_plot_bins_free(pk[i].bins);
  fc_free(pk);
  return rc;
}
