/* ferrocirc — axis ticks and min/max decimation for plots (see plot.h).
 *
 * Ticks: P. S. Heckbert, "Nice numbers for graph labels", Graphics Gems I (1990) 61-63: the
 * spacing is 1, 2 or 5 x 10^k and the axis runs from the tick at or below the data minimum to the
 * tick at or above the maximum, so every label is short and the data fill the panel.
 *
 * Decimation: a polyline with more vertices than the figure has pixels only costs file size and
 * rendering time, but dropping points naively (every k-th) loses the valve spikes a designer is
 * looking for. Keeping the lowest and the highest point of each of max_points/2 bins draws the
 * same envelope at pixel resolution with at most max_points vertices. */
#include <assert.h>
#include <math.h>
#include <stdio.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/plot.h"

/* Heckbert's nicenum: a 1, 2, 5 x 10^k close to x (> 0); round: nearest, else not below x. */
static double nicenum(double x, int round)
{
  double e = floor(log10(x)), f = x / pow(10.0, e), nf;
  if (round) nf = f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10;
  else nf = f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10;
  return nf * pow(10.0, e);
}

void fc_plot_ticks_make(double lo, double hi, int target, fc_plot_ticks *out)
{
  assert(isfinite(lo) && isfinite(hi));
  if (lo > hi) { double t = lo; lo = hi; hi = t; }
  if (hi - lo <= 1e-12 * fmax(fabs(lo), fabs(hi))) {
    double w = lo == 0.0 ? 1.0 : 0.1 * fabs(lo);
    lo -= w;
    hi += w;
  }
  if (target < 2) target = 2;
  if (target > FC_PLOT_MAX_TICKS - 4) target = FC_PLOT_MAX_TICKS - 4;
  double d = nicenum(nicenum(hi - lo, 0) / (target - 1), 1);
  out->lo = floor(lo / d + 1e-9) * d;
  out->hi = ceil(hi / d - 1e-9) * d;
  out->step = d;
  out->n = (int)lround((out->hi - out->lo) / d) + 1;
  int dec = (int)-floor(log10(d) + 1e-9);
  out->decimals = dec > 0 ? dec : 0;
}

const char *fc_plot_tick_label(const fc_plot_ticks *t, double v, char *buf, size_t n)
{
  if (fabs(v) < 1e-9 * t->step) v = 0.0;
  double big = fmax(fabs(t->lo), fabs(t->hi));
  if (t->decimals > 5 || big >= 1e6) snprintf(buf, n, "%.3g", v);
  else snprintf(buf, n, "%.*f", t->decimals, v);
  return buf;
}

typedef struct bin {
  double xlo, ylo;  /* the lowest point of the bin */
  double xhi, yhi;  /* the highest point */
  int    used;
} bin;

struct fc_plot_bins {
  double x0, x1;
  size_t nb;          /* number of bins */
  bin   *b;
  double ymin, ymax;
};

int fc_plot_bins_new(double x0, double x1, size_t max_points, fc_plot_bins **out, fc_error *err)
{
  *out = NULL;
  if (!(x1 >= x0) || max_points < 2)
    return fc_fail(err, FC_EPARAM, NULL, "empty plot range [%g, %g] or fewer than 2 points", x0, x1);
  fc_plot_bins *p = fc_calloc(1, sizeof *p);
  if (!p || !(p->b = fc_calloc(max_points / 2, sizeof *p->b))) {
    fc_free(p);
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  }
  p->x0 = x0;
  p->x1 = x1;
  p->nb = max_points / 2;
  p->ymin = INFINITY;
  p->ymax = -INFINITY;
  *out = p;
  return FC_OK;
}

void fc_plot_bins_add(fc_plot_bins *p, double x, double y)
{
  if (!(x >= p->x0 && x <= p->x1) || isnan(y)) return;
  size_t i = p->x1 > p->x0 ? (size_t)((x - p->x0) / (p->x1 - p->x0) * (double)p->nb) : 0;
  if (i >= p->nb) i = p->nb - 1;
  bin *b = &p->b[i];
  if (!b->used) {
    b->xlo = b->xhi = x;
    b->ylo = b->yhi = y;
    b->used = 1;
  } else if (y < b->ylo) {
    b->xlo = x;
    b->ylo = y;
  } else if (y > b->yhi) {
    b->xhi = x;
    b->yhi = y;
  }
  if (y < p->ymin) p->ymin = y;
  if (y > p->ymax) p->ymax = y;
}

size_t fc_plot_bins_points(const fc_plot_bins *p, double *x, double *y)
{
  size_t n = 0;
  for (size_t i = 0; i < p->nb; i++) {
    const bin *b = &p->b[i];
    if (!b->used) continue;
    int lo_first = b->xlo <= b->xhi;
    x[n] = lo_first ? b->xlo : b->xhi;
    y[n++] = lo_first ? b->ylo : b->yhi;
    if (b->xlo != b->xhi || b->ylo != b->yhi) {
      x[n] = lo_first ? b->xhi : b->xlo;
      y[n++] = lo_first ? b->yhi : b->ylo;
    }
  }
  return n;
}

void fc_plot_bins_range(const fc_plot_bins *p, double *ymin, double *ymax)
{
  *ymin = p->ymin;
  *ymax = p->ymax;
}

void fc_plot_bins_free(fc_plot_bins *p)
{
  if (!p) return;
  fc_free(p->b);
  fc_free(p);
}
