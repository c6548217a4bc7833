/* ferrocirc — draw a figure (plot_int.h) as a self-contained SVG 1.1 file.
 *
 * Layout: a title and subtitle, then the panels stacked on one shared x axis, each with its own
 * y axis on the left and its legend in a column on the right (outside the data, so a legend
 * never hides a curve). Only the bottom panel carries x tick labels. Colours are the Okabe-Ito
 * palette (M. Okabe and K. Ito, "Color Universal Design", 2008 [from memory]), chosen because
 * its hues stay distinguishable for the common colour-vision deficiencies; after seven series the
 * colours repeat dashed, then dotted. Text uses generic font families that rsvg and browsers
 * resolve locally. */
#include <math.h>
#include <string.h>

#include "plot_int.h"

#define FIG_W      1200.0  /* px */
#define MARGIN_L   104.0   /* room for tick labels and the rotated axis label */
#define LEGEND_W   230.0   /* legend column */
#define TOP        84.0    /* title block */
#define PANEL_H    250.0
#define STATE_H    130.0
#define PANEL_GAP  30.0
#define BOTTOM     66.0    /* x tick labels and axis label */
#define ROW_H      20.0    /* legend row */
#define FONT "DejaVu Sans, Helvetica, Arial, sans-serif"

static const char *const palette[FCI_NPALETTE] = {
  "#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000"};
/* Valve-open shading and the state lines use their own muted tones, so that a shaded span is
 * never mistaken for a curve of the same hue. */
static const char *const shade_tone[FCI_NSHADE] = {"#5b7fb5", "#c9a227", "#6a9f58", "#b0555a"};
static const char *const dashes[3] = {"", " stroke-dasharray=\"8 4\"", " stroke-dasharray=\"2 3\""};

static const char *colour_of(const fci_series *s)
{
  return s->tone ? shade_tone[s->colour % FCI_NSHADE] : palette[s->colour % FCI_NPALETTE];
}

typedef struct frame {
  double L, T, W, H;       /* data area [px] */
  double x0, x1, y0, y1;   /* data range */
} frame;

static double px(const frame *f, double x) { return f->L + (x - f->x0) / (f->x1 - f->x0) * f->W; }
static double py(const frame *f, double y) { return f->T + f->H - (y - f->y0) / (f->y1 - f->y0) * f->H; }

static int legend_rows(const fci_figure *fig, const fci_panel *p)
{
  return p->ns + (p->shaded ? fig->nShade : 0) + (p->nFail > 0);
}

static double panel_height(const fci_figure *fig, const fci_panel *p)
{
  double h = p->states ? STATE_H : PANEL_H, need = legend_rows(fig, p) * ROW_H + 16;
  return h > need ? h : need;
}

static void data_range(const fci_panel *p, double *lo, double *hi)
{
  *lo = INFINITY;
  *hi = -INFINITY;
  for (int k = 0; k < p->ns; k++)
    for (size_t i = 0; i < p->s[k].n; i++) {
      double a = p->s[k].y[i], b = p->s[k].y2 ? p->s[k].y2[i] : a;
      if (isfinite(a)) { *lo = fmin(*lo, a); *hi = fmax(*hi, a); }
      if (isfinite(b)) { *lo = fmin(*lo, b); *hi = fmax(*hi, b); }
    }
  if (!(*lo <= *hi)) { *lo = 0; *hi = 1; }
  if (p->zero) { *lo = fmin(*lo, 0); *hi = fmax(*hi, 0); }
  /* Markers are drawn whole: keep them off the frame. */
  for (int k = 0; k < p->ns; k++)
    if (p->s[k].style == FCI_MARKERS) {
      double w = 0.04 * (*hi - *lo);
      *lo -= w;
      *hi += w;
      break;
    }
}

static void text(FILE *out, double x, double y, double size, const char *anchor, const char *fill,
                 const char *extra, const char *s)
{
  char esc[512];
  fprintf(out, "<text x=\"%.1f\" y=\"%.1f\" font-size=\"%.0f\" text-anchor=\"%s\" fill=\"%s\"%s>%s</text>\n",
          x, y, size, anchor, fill, extra, fci_xml_escape(s, esc, sizeof esc));
}

static const char *const state_name[4] = {"reverse", "sealed", "forward", "blown"};

/* Y axis: grid, ticks, labels. States get named ticks at -1, 0, 1, 2 within the range. */
static void y_axis(FILE *out, frame *f, const fci_panel *p)
{
  double lo, hi;
  data_range(p, &lo, &hi);
  fc_plot_ticks t;
  if (p->states) {
    t.lo = fmin(lo, 0) - 0.25;
    t.hi = fmax(hi, 1) + 0.25;
    f->y0 = t.lo;
    f->y1 = t.hi;
    for (int v = -1; v <= 2; v++) {
      if (v < lo && v != 0) continue;
      if (v > hi && v != 1) continue;
      double y = py(f, v);
      fprintf(out, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"#e4e4e4\"/>\n",
              f->L, y, f->L + f->W, y);
      text(out, f->L - 8, y + 4.5, 13, "end", "#333", "", state_name[v + 1]);
    }
    return;
  }
  /* Loose labels may add up to a whole step at each end; a curve that dips just below zero would
   * then waste a sixth of the panel. Finer steps are tried until the axis is at most 25 % wider
   * than the data. */
  for (int target = 6; target <= 10; target += 2) {
    fc_plot_ticks_make(lo, hi, target, &t);
    if (t.hi - t.lo <= 1.25 * (hi - lo)) break;
  }
  f->y0 = t.lo;
  f->y1 = t.hi;
  for (int i = 0; i < t.n; i++) {
    double v = t.lo + i * t.step, y = py(f, v);
    char lab[64];
    int zero = fabs(v) < 1e-9 * t.step;
    fprintf(out, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"%s\"/>\n",
            f->L, y, f->L + f->W, y, zero ? "#9a9a9a" : "#e4e4e4");
    fprintf(out, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"#444\"/>\n",
            f->L - 5, y, f->L, y);
    text(out, f->L - 8, y + 4.5, 13, "end", "#333", "", fc_plot_tick_label(&t, v, lab, sizeof lab));
  }
}

/* Vertical grid and, on the bottom panel, x tick labels and the axis label. */
static void x_axis(FILE *out, const frame *f, const fc_plot_ticks *t, int labels, const char *xlabel)
{
  for (int i = 0; i < t->n; i++) {
    double v = t->lo + i * t->step, x = px(f, v);
    char lab[64];
    fprintf(out, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"#e4e4e4\"/>\n",
            x, f->T, x, f->T + f->H);
    if (!labels) continue;
    fprintf(out, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"#444\"/>\n",
            x, f->T + f->H, x, f->T + f->H + 5);
    text(out, x, f->T + f->H + 21, 13, "middle", "#333", "", fc_plot_tick_label(t, v, lab, sizeof lab));
  }
  if (labels) text(out, f->L + f->W / 2, f->T + f->H + 48, 15, "middle", "#222", "", xlabel);
}

static void polyline(FILE *out, const frame *f, const fci_series *s, size_t a, size_t b)
{
  if (b - a < 2) return;
  fprintf(out, "<polyline fill=\"none\" stroke=\"%s\" stroke-width=\"1.8\" stroke-linejoin=\"round\"%s points=\"",
          colour_of(s), dashes[s->dash]);
  for (size_t i = a; i < b; i++)
    if (isfinite(s->y[i])) fprintf(out, "%s%.2f,%.2f", i > a ? " " : "", px(f, s->x[i]), py(f, s->y[i]));
  fputs("\"/>\n", out);
}

static void series(FILE *out, const frame *f, const fci_series *s)
{
  if (s->style == FCI_BAND) {
    fprintf(out, "<polygon fill=\"%s\" fill-opacity=\"0.22\" stroke=\"none\" points=\"", colour_of(s));
    for (size_t i = 0; i < s->n; i++) fprintf(out, "%.2f,%.2f ", px(f, s->x[i]), py(f, s->y2[i]));
    for (size_t i = s->n; i-- > 0;) fprintf(out, "%.2f,%.2f ", px(f, s->x[i]), py(f, s->y[i]));
    fputs("\"/>\n", out);
    return;
  }
  size_t a = 0;
  for (size_t i = 1; i <= s->n; i++)
    if (i == s->n || (s->breakAt && s->x[i] < s->x[i - 1]) || !isfinite(s->y[i])) {
      polyline(out, f, s, a, i);
      a = i < s->n && !isfinite(s->y[i]) ? i + 1 : i;
    }
  if (s->style != FCI_MARKERS) return;
  for (size_t i = 0; i < s->n; i++)
    if (isfinite(s->y[i]))
      fprintf(out, "<circle cx=\"%.2f\" cy=\"%.2f\" r=\"3.6\" fill=\"%s\" stroke=\"#fff\" stroke-width=\"0.8\"/>\n",
              px(f, s->x[i]), py(f, s->y[i]), colour_of(s));
}

static void cross(FILE *out, double x, double y)
{
  fprintf(out, "<path d=\"M%.1f %.1fl9 9m0 -9l-9 9\" stroke=\"#C00000\" stroke-width=\"2.2\"/>\n",
          x - 4.5, y - 4.5);
}

static void legend(FILE *out, const fci_figure *fig, const fci_panel *p, const frame *f)
{
  double x = f->L + f->W + 22, y = f->T + 14;
  char lab[100];
  for (int k = 0; k < p->ns; k++, y += ROW_H) {
    const fci_series *s = &p->s[k];
    if (s->style == FCI_BAND)
      fprintf(out, "<rect x=\"%.1f\" y=\"%.1f\" width=\"26\" height=\"12\" fill=\"%s\" fill-opacity=\"0.22\"/>\n",
              x, y - 6, colour_of(s));
    else
      fprintf(out, "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"%s\" stroke-width=\"2.4\"%s/>\n",
              x, y, x + 26, y, colour_of(s), dashes[s->dash]);
    if (s->style == FCI_MARKERS)
      fprintf(out, "<circle cx=\"%.1f\" cy=\"%.1f\" r=\"3.6\" fill=\"%s\" stroke=\"#fff\" stroke-width=\"0.8\"/>\n",
              x + 13, y, colour_of(s));
    if (strlen(s->label) > 27) snprintf(lab, sizeof lab, "%.25s...", s->label);
    else snprintf(lab, sizeof lab, "%s", s->label);
    text(out, x + 34, y + 4.5, 13, "start", "#222", "", lab);
  }
  for (int k = 0; p->shaded && k < fig->nShade; k++, y += ROW_H) {
    fprintf(out, "<rect x=\"%.1f\" y=\"%.1f\" width=\"26\" height=\"12\" fill=\"%s\" fill-opacity=\"0.16\" stroke=\"%s\" stroke-opacity=\"0.4\"/>\n",
            x, y - 6, shade_tone[fig->shade[k].colour], shade_tone[fig->shade[k].colour]);
    text(out, x + 34, y + 4.5, 13, "start", "#222", "", fig->shade[k].label);
  }
  if (p->nFail) {
    cross(out, x + 13, y);
    text(out, x + 34, y + 4.5, 13, "start", "#222", "", "failed point");
  }
}

static void panel(FILE *out, const fci_figure *fig, int ip, frame *f, const fc_plot_ticks *xt)
{
  const fci_panel *p = &fig->p[ip];
  fprintf(out, "<g id=\"panel%d\">\n", ip + 1);
  fprintf(out, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\" fill=\"#fff\"/>\n", f->L, f->T, f->W, f->H);
  y_axis(out, f, p);
  x_axis(out, f, xt, ip == fig->np - 1, fig->xlabel);
  fprintf(out, "<clipPath id=\"clip%d\"><rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\"/></clipPath>\n",
          ip + 1, f->L, f->T, f->W, f->H);
  fprintf(out, "<g clip-path=\"url(#clip%d)\">\n", ip + 1);
  for (int k = 0; p->shaded && k < fig->nShade; k++)
    for (size_t i = 0; i < fig->shade[k].n; i++) {
      double a = px(f, fig->shade[k].span[i].x0), b = px(f, fig->shade[k].span[i].x1);
      fprintf(out, "<rect x=\"%.2f\" y=\"%.1f\" width=\"%.2f\" height=\"%.1f\" fill=\"%s\" fill-opacity=\"0.16\"/>\n",
              a, f->T, fmax(b - a, 0.6), f->H, shade_tone[fig->shade[k].colour]);
    }
  for (int k = 0; k < p->ns; k++) series(out, f, &p->s[k]);
  for (size_t i = 0; i < p->nFail; i++) cross(out, px(f, p->fail[i]), f->T + f->H - 10);
  fputs("</g>\n", out);
  fprintf(out, "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" height=\"%.1f\" fill=\"none\" stroke=\"#444\"/>\n",
          f->L, f->T, f->W, f->H);
  char extra[96];
  snprintf(extra, sizeof extra, " transform=\"rotate(-90 %.1f %.1f)\"", 24.0, f->T + f->H / 2);
  text(out, 24, f->T + f->H / 2, 15, "middle", "#222", extra, p->ylabel);
  legend(out, fig, p, f);
  fputs("</g>\n", out);
}

int fci_svg_write(FILE *out, const fci_figure *fig, fc_error *err)
{
  double H = TOP + BOTTOM;
  for (int i = 0; i < fig->np; i++) H += panel_height(fig, &fig->p[i]) + (i ? PANEL_GAP : 0);
  fc_plot_ticks xt;
  fc_plot_ticks_make(fig->x0, fig->x1, 10, &xt);
  /* The x axis spans the data exactly (a trace starts at its first sample); ticks outside it
   * are dropped rather than widening the axis. */
  frame f = {MARGIN_L, TOP, FIG_W - MARGIN_L - LEGEND_W, 0, fig->x0, fig->x1, 0, 1};
  if (!(f.x1 > f.x0)) { f.x0 = xt.lo; f.x1 = xt.hi; }
  while (xt.n > 2 && xt.lo < f.x0 - 1e-9 * xt.step) { xt.lo += xt.step; xt.n--; }
  while (xt.n > 2 && xt.lo + (xt.n - 1) * xt.step > f.x1 + 1e-9 * xt.step) xt.n--;
  fprintf(out, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
          "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"%.0f\" height=\"%.0f\" "
          "viewBox=\"0 0 %.0f %.0f\" font-family=\"%s\">\n", FIG_W, H, FIG_W, H, FONT);
  fprintf(out, "<rect width=\"100%%\" height=\"100%%\" fill=\"#fff\"/>\n");
  char esc[512];
  fprintf(out, "<title>%s</title>\n", fci_xml_escape(fig->title, esc, sizeof esc));
  text(out, MARGIN_L, 36, 22, "start", "#111", " font-weight=\"bold\"", fig->title);
  if (fig->subtitle[0]) text(out, MARGIN_L, 62, 14, "start", "#555", "", fig->subtitle);
  for (int i = 0; i < fig->np; i++) {
    f.H = panel_height(fig, &fig->p[i]);
    panel(out, fig, i, &f, &xt);
    f.T += f.H + PANEL_GAP;
  }
  fputs("</svg>\n", out);
  if (ferror(out)) return fc_fail(err, FC_EIO, NULL, "writing the SVG failed");
  return FC_OK;
}
