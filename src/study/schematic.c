/* ferrocirc — `ferrocirc schematic NETWORK.json -o OUT.dot`: the circuit as a Graphviz digraph.
 *
 * Drawing: in the direction of positive flow, left to right, a long chain folded into rows
 * (schematic_layout.c). Junctions (network nodes) are small pills with the node name; a node held by exactly one reservoir is drawn as the reservoir
 * itself. Two-terminal elements are shapes between their junctions (junction -> element ->
 * junction, the arrow giving the positive flow direction); one-terminal stores (chambers) hang
 * off their junction by a dashed line in the same column. Key values are in designer's units:
 * R in mbar/(uL/min) (1 mbar/(uL/min) = 6e12 Pa s/m^3), C in uL/mbar or nL/mbar (1 uL/mbar =
 * 1e-11 m^3/Pa), valve thresholds in mmHg (1 mmHg = 133.322387 Pa, conventional, common
 * practice), lengths in mm or um.
 *
 * The numbers come from the element types' xInfo: R, C and the period as fields, crack and
 * geometry values from its one-line text, whose formats are fixed in elements/ *.c and guarded
 * by tests/test_plot.c. */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/output.h"
#include "ferrocirc/plot.h"
#include "ferrocirc/units.h"
#include "net.h"
#include "plot_int.h"

#define PA_PER_MMHG 133.322387415
#define R_UNIT 6e12  /* Pa s/m^3 per mbar/(uL/min) */
#define C_UNIT 1e-11 /* m^3/Pa per uL/mbar */

typedef struct look {
  const char *type;               /* element type name, NULL = any other */
  const char *shape, *fill, *line, *font;
  const char *kind;               /* shown under the id */
} look;

static const look looks[] = {
  {"reservoir", "cylinder", "#d6eaf8", "#2e86c1", "#17202a", "reservoir"},
  {"flow_source", "cds", "#fdebd0", "#ca6f1e", "#17202a", "flow pump"},
  {"pressure_source", "cds", "#fadbd8", "#c0392b", "#17202a", "pressure source"},
  {"channel", "box", "#f2f3f4", "#566573", "#17202a", "channel"},
  {"resistor", "box", "#ffffff", "#566573", "#17202a", "resistor"},
  {"chamber", "box3d", "#e8daef", "#7d3c98", "#17202a", "chamber"},
  {"check_valve", "box", "#fcf3cf", "#b7950b", "#17202a", "\xe2\x96\xb6 check valve"},
  {"ferrofluid_valve", "box", "#2c3e50", "#f1c40f", "#ffffff", "\xe2\x96\xb6 ferrofluid valve"},
  {NULL, "box", "#ffffff", "#7f8c8d", "#17202a", NULL},
};

static const look *look_of(const char *type)
{
  const look *l = looks;
  while (l->type && strcmp(l->type, type)) l++;
  return l;
}

/* HTML-label text: escape the markup characters. */
static void html(FILE *f, const char *s)
{
  for (; *s; s++) {
    if (*s == '&') fputs("&amp;", f);
    else if (*s == '<') fputs("&lt;", f);
    else if (*s == '>') fputs("&gt;", f);
    else if (*s == '"') fputs("&quot;", f);
    else fputc(*s, f);
  }
}

/* A quoted DOT id with a prefix keeping node and element names apart. */
static void id(FILE *f, const char *prefix, const char *s)
{
  fprintf(f, "\"%s", prefix);
  for (; *s; s++) {
    if (*s == '"' || *s == '\\') fputc('\\', f);
    fputc(*s, f);
  }
  fputc('"', f);
}

static void len_text(char *buf, size_t n, double m)
{
  if (m >= 1e-3) snprintf(buf, n, "%.3g mm", m * 1e3);
  else snprintf(buf, n, "%.3g \xc2\xb5m", m * 1e6);
}

static const char *num_after(const char *text, const char *key, double *v)
{
  const char *p = strstr(text, key);
  return p && sscanf(p + strlen(key), "%lg", v) == 1 ? p : NULL;
}

static void r_line(FILE *f, double R)
{
  if (R > 0) fprintf(f, "<br/>R = %.3g mbar/(\xc2\xb5L/min)", R / R_UNIT);
}

static void channel_lines(FILE *f, const fci_info *in)
{
  double a, b, len;
  char s1[32], s2[32], s3[32];
  if (num_after(in->text, "length ", &len)) len_text(s3, sizeof s3, len);
  else snprintf(s3, sizeof s3, "?");
  if (num_after(in->text, "bore ", &a)) {
    len_text(s1, sizeof s1, a);
    fprintf(f, "<br/>%s long, bore %s", s3, s1);
  } else if (sscanf(in->text, "channel: %lg x %lg m", &a, &b) == 2) {
    len_text(s1, sizeof s1, a);
    len_text(s2, sizeof s2, b);
    fprintf(f, "<br/>%s long, %s \xc3\x97 %s", s3, s1, s2);
  }
  r_line(f, in->resistance);
}

static void valve_lines(FILE *f, const fci_info *in)
{
  double cf, cr, rf, rr, bf, br;
  const char *p = strstr(in->text, "crack ");
  if (p && sscanf(p, "crack %lg / %lg Pa, reseat %lg / %lg Pa, blowout %lg / %lg Pa",
                  &cf, &cr, &rf, &rr, &bf, &br) == 6) {
    fprintf(f, "<br/>crack %.3g / %.3g mmHg", cf / PA_PER_MMHG, cr / PA_PER_MMHG);
    fprintf(f, "<br/>reseat %.3g / %.3g mmHg", rf / PA_PER_MMHG, rr / PA_PER_MMHG);
    if (isfinite(bf) || isfinite(br)) {
      char b1[32] = "never", b2[32] = "never";
      if (isfinite(bf)) snprintf(b1, sizeof b1, "%.3g", bf / PA_PER_MMHG);
      if (isfinite(br)) snprintf(b2, sizeof b2, "%.3g", br / PA_PER_MMHG);
      fprintf(f, "<br/>blowout %s / %s mmHg", b1, b2);
    }
    fputs("<br/><font point-size=\"9\">(forward / reverse)</font>", f);
  }
  if (strstr(in->text, "(model)")) fputs("<br/><i>thresholds from the valve model</i>", f);
  r_line(f, in->resistance);
}

static void period_text(FILE *f, double period)
{
  if (period > 0) fprintf(f, "<br/>period %.3g s", period);
}

/* The value lines under the id and kind, by type. */
static void values(FILE *f, const fc_elem *e, const fci_info *in)
{
  const char *t = e->type->name;
  double v, h;
  if (!strcmp(t, "channel")) {
    channel_lines(f, in);
    if (in->inertance > 0) fputs("<br/>with inertance", f);
    if (e->culture) fputs("<br/><b>culture region</b>", f);
  } else if (!strcmp(t, "check_valve") || !strcmp(t, "ferrofluid_valve")) {
    valve_lines(f, in);
  } else if (!strcmp(t, "chamber")) {
    double c = in->compliance;
    if (c >= 0.1 * C_UNIT) fprintf(f, "<br/>C = %.3g \xc2\xb5L/mbar", c / C_UNIT);
    else fprintf(f, "<br/>C = %.3g nL/mbar", c / C_UNIT * 1e3);
    if (strstr(in->text, "gas")) fputs(" (gas pocket)", f);
    else if (strstr(in->text, "tube")) fputs(" (elastic tube)", f);
    if (strstr(in->text, "backing")) fputs("<br/>driven membrane", f);
  } else if (!strcmp(t, "flow_source") && num_after(in->text, "mean ", &v)) {
    fprintf(f, "<br/>mean %.3g \xc2\xb5L/min", v * 6e10);
    period_text(f, in->period);
  } else if (!strcmp(t, "pressure_source") && num_after(in->text, "mean rise ", &v)) {
    fprintf(f, "<br/>mean rise %.3g mbar", v / 100);
    period_text(f, in->period);
    r_line(f, in->resistance);
  } else if (!strcmp(t, "reservoir") && num_after(in->text, "surface pressure ", &v)) {
    fprintf(f, "<br/>p = %.3g mbar", v / 100);
    period_text(f, in->period);
    if (num_after(in->text, "liquid ", &h) && h != 0) {
      char s[32];
      len_text(s, sizeof s, fabs(h));
      fprintf(f, "<br/>liquid %s%s", h < 0 ? "-" : "", s);
    }
  } else {
    r_line(f, in->resistance);
  }
}

static void elem_node(FILE *f, const fc_net *net, const fc_elem *e, const char *prefix,
                      const char *name)
{
  const look *l = look_of(e->type->name);
  fci_info in;
  memset(&in, 0, sizeof in);
  if (e->type->xInfo) e->type->xInfo(e, &net->fluid, &in);
  const char *fill = !strcmp(e->type->name, "channel") && e->culture ? "#d5f5e3" : l->fill;
  const char *line = !strcmp(e->type->name, "channel") && e->culture ? "#1e8449" : l->line;
  fprintf(f, "  ");
  id(f, prefix, name);
  int valve = e->nRoot > 0;
  const char *style = !strcmp(e->type->name, "resistor") ? "filled,rounded,dashed"
                    : valve ? "filled" : !strcmp(l->shape, "box") ? "filled,rounded" : "filled";
  fprintf(f, " [shape=%s, style=\"%s\", fillcolor=\"%s\", color=\"%s\", fontcolor=\"%s\", "
          "%slabel=<<b>", l->shape, style, fill, line, l->font, valve ? "peripheries=2, " : "");
  html(f, e->id);
  fputs("</b><br/><font point-size=\"10\">", f);
  html(f, l->kind ? l->kind : e->type->name);
  if (strcmp(e->id, name)) { fputs(" at ", f); html(f, name); }
  fputs("</font>", f);
  values(f, e, &in);
  fputs(">];\n", f);
}

/* The one reservoir holding node n, or -1 (then the node is drawn as a junction). */
static int sole_reservoir(const fc_net *net, int n)
{
  int r = -1;
  for (int i = 0; i < net->nElem; i++) {
    const fc_elem *e = &net->elem[i];
    if (e->nTerm != 1 || e->node[0] != n) continue;
    if (strcmp(e->type->name, "reservoir") || r >= 0) return -1;
    r = i;
  }
  return r;
}

static void header(FILE *f, const fc_net *net)
{
  fputs("digraph ferrocirc {\n"
        "  graph [rankdir=LR, nodesep=0.3, ranksep=0.35, pad=0.3, forcelabels=true, bgcolor=\"white\", "
        "fontname=\"DejaVu Sans\", fontsize=16, labelloc=t, label=<<b>", f);
  html(f, net->title[0] ? net->title : net->file);
  int valves = 0;
  for (int i = 0; i < net->nElem; i++) valves |= net->elem[i].nRoot > 0;
  fprintf(f, "</b><br/><font point-size=\"11\" color=\"#566573\">positive flow along the arrows%s"
          "</font><br/> >];\n", valves ? "; valve thresholds forward / reverse" : "");
  fputs("  node [fontname=\"DejaVu Sans\", fontsize=11, penwidth=1.4, margin=\"0.12,0.06\"];\n"
        "  edge [color=\"#34495e\", penwidth=1.4, arrowsize=0.7];\n", f);
}

#define MAX_COLS 7 /* columns before the chain folds into another row */

static void vertex(FILE *f, const fc_net *net, int v)
{
  if (v < net->nNode) id(f, "n:", net->nodeName[v]);
  else id(f, "e:", net->elem[v - net->nNode].id);
}

/* An edge u -> v in the direction of positive flow. dot ranks an edge's tail before its head, so
 * an edge running against the columns (an odd row runs right to left) is written v -> u and
 * drawn back (dir=back), keeping the arrow on the flow. */
static void edge(FILE *f, const fc_net *net, const fci_layout *L, int u, int v, int arrow)
{
  int back = L->col[u] > L->col[v];
  fputs("  ", f);
  vertex(f, net, back ? v : u);
  fputs(" -> ", f);
  vertex(f, net, back ? u : v);
  fprintf(f, " [%s%s];\n", back ? "dir=back, arrowtail=" : "arrowhead=", arrow ? "normal" : "none");
}

static void junction(FILE *f, const fc_net *net, int n)
{
  fputs("  ", f);
  id(f, "n:", net->nodeName[n]);
  fputs(" [shape=box, style=\"rounded,filled\", fillcolor=\"#ffffff\", color=\"#95a5a6\", "
        "fontsize=10, fontcolor=\"#34495e\", height=0.28, margin=\"0.06,0.02\", label=<", f);
  html(f, net->nodeName[n]);
  fputs(">];\n", f);
}

/* rank=same groups, one per column; invisible flat edges keep the rows in order. */
static void columns(FILE *f, const fc_net *net, const fci_layout *L)
{
  for (int c = 0; c < L->nCol; c++) {
    fputs("  { rank=same;", f);
    int prev = -1;
    for (int r = 0; r < L->nRow; r++)
      for (int v = 0; v < L->nV; v++) {
        if (L->col[v] != c || L->row[v] != r) continue;
        if (v >= net->nNode && net->elem[v - net->nNode].nTerm == 1) continue;
        if (prev >= 0 && L->row[prev] != r) {
          fputs(" ", f);
          vertex(f, net, prev);
          fputs(" -> ", f);
          vertex(f, net, v);
          fputs(" [style=invis];", f);
        }
        fputs(" ", f);
        vertex(f, net, v);
        fputs(";", f);
        if (prev < 0 || L->row[prev] != r) prev = v;
      }
    fputs(" }\n", f);
  }
}

int fc_schematic_write(const fc_net *net, FILE *f, fc_error *err)
{
  fci_layout L;
  int rc = fci_layout_make(net, MAX_COLS, &L, err);
  if (rc) return rc;
  header(f, net);
  for (int n = 0; n < net->nNode; n++) {
    int r = sole_reservoir(net, n);
    if (r >= 0) elem_node(f, net, &net->elem[r], "n:", net->nodeName[n]);
    else junction(f, net, n);
  }
  for (int i = 0; i < net->nElem; i++) {
    const fc_elem *e = &net->elem[i];
    if (e->nTerm == 1 && sole_reservoir(net, e->node[0]) == i) continue;
    elem_node(f, net, e, "e:", e->id);
    int v = net->nNode + i;
    if (e->nTerm == 2) {
      edge(f, net, &L, e->node[0], v, 0);
      edge(f, net, &L, v, e->node[1], 1);
    } else {
      /* A store hangs off its junction in the same column: above it in the first of several
       * rows (the rows below are taken by the folded chain), else below it. A flat edge's tail
       * is placed first. */
      int above = L.nRow > 1 && L.row[e->node[0]] == 0;
      fputs("  { rank=same; ", f);
      vertex(f, net, above ? v : e->node[0]);
      fputs(" -> ", f);
      vertex(f, net, above ? e->node[0] : v);
      fputs(" [dir=none, style=dashed, color=\"#7d3c98\"]; }\n", f);
    }
  }
  columns(f, net, &L);
  fputs("}\n", f);
  fci_layout_free(&L);
  return ferror(f) ? fc_fail(err, FC_EIO, NULL, "writing the schematic failed") : FC_OK;
}

static int report(const fc_error *err)
{
  char buf[1400];
  fprintf(stderr, "ferrocirc schematic: %s\n", fc_error_format(err, buf, sizeof buf));
  return fc_error_exit_status(err->code);
}

int fc_schematic_cli(int argc, char **argv)
{
  const char *in = NULL, *out = NULL;
  fc_error err;
  fc_error_clear(&err);
  for (int i = 1; i < argc; i++) {
    if (!strcmp(argv[i], "-o") && i + 1 < argc) out = argv[++i];
    else if (argv[i][0] != '-' && !in) in = argv[i];
    else {
      fprintf(stderr, "ferrocirc schematic: unexpected argument %s\n"
              "usage: ferrocirc schematic NETWORK.json -o OUT.dot\n", argv[i]);
      return 2;
    }
  }
  if (!in || !out) {
    fputs("usage: ferrocirc schematic NETWORK.json -o OUT.dot   (render: dot -Tsvg OUT.dot)\n", stderr);
    return 2;
  }
  fc_units *u = NULL;
  fc_net *net = NULL;
  fc_outfile *o = NULL;
  int rc = fc_units_open(&u, &err);
  if (!rc) rc = fc_net_load(in, u, &net, &err);
  if (!rc) rc = fc_outfile_open(out, &o, &err);
  if (!rc && (rc = fc_schematic_write(net, fc_outfile_stream(o), &err))) fc_outfile_abort(o);
  else if (!rc) rc = fc_outfile_commit(o, &err);
  fc_net_free(net);
  fc_units_free(u);
  return rc ? report(&err) : 0;
}
