/* ferrocirc — time-series CSV writer (see output.h). Values are converted from SI to the report
 * units once per number, at the edge. Each row is formatted into one buffer ("%.9g" by
 * src/fmt_g.c, the same bytes as printf, several times faster) and handed to stdio whole. */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/output.h"
#include "fmt_g.h"
#include "net.h"

struct fc_csv_sink {
  const fc_net *net;
  FILE *f;
  double pf, qf;      /* SI -> report unit factors */
  int *qcol;          /* elements with a q column */
  int nq;
  int *scol;          /* elements with a state column */
  int ns;
  char *buf;          /* one row */
};

static void put_name(FILE *f, const char *prefix, const char *name, const char *unit)
{
  int quote = strpbrk(name, ",\"\n") != NULL;
  fputc(',', f);
  if (quote) fputc('"', f);
  fputs(prefix, f);
  for (const char *c = name; *c; c++) {
    if (*c == '"') fputc('"', f);
    fputc(*c, f);
  }
  if (unit) fprintf(f, " [%s]", unit);
  if (quote) fputc('"', f);
}

int fc_csv_sink_new(const fc_net *net, FILE *f, double p_factor, double q_factor,
                    const char *p_unit, const char *q_unit, fc_csv_sink **out, fc_error *err)
{
  fc_csv_sink *c = fc_calloc(1, sizeof *c);
  *out = NULL;
  if (!c || !(c->qcol = fc_calloc((size_t)net->nElem, sizeof *c->qcol)) ||
      !(c->scol = fc_calloc((size_t)net->nElem, sizeof *c->scol))) {
    fc_csv_sink_free(c);
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  }
  for (int i = 0; i < net->nElem; i++) c->nq += net->elem[i].nTerm == 2;
  for (int i = 0; i < net->nElem; i++) c->ns += net->elem[i].nRoot > 0;
  /* every number: a comma and at most FCI_FMT_G9_MAX - 1 characters; modes: 12 each */
  size_t cap = ((size_t)net->nNode + (size_t)c->nq + 1) * FCI_FMT_G9_MAX + (size_t)c->ns * 12 + 2;
  if (!(c->buf = fc_malloc(cap))) {
    fc_csv_sink_free(c);
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  }
  c->nq = c->ns = 0;
  c->net = net;
  c->f = f;
  c->pf = p_factor;
  c->qf = q_factor;
  fputs("t [s]", f);
  for (int n = 0; n < net->nNode; n++) put_name(f, "p:", net->nodeName[n], p_unit);
  for (int i = 0; i < net->nElem; i++)
    if (net->elem[i].nTerm == 2) {
      c->qcol[c->nq++] = i;
      put_name(f, "q:", net->elem[i].id, q_unit);
    }
  for (int i = 0; i < net->nElem; i++)
    if (net->elem[i].nRoot > 0) {
      c->scol[c->ns++] = i;
      put_name(f, "state:", net->elem[i].id, NULL);
    }
  fputc('\n', f);
  *out = c;
  return FC_OK;
}

void fc_csv_sink_free(fc_csv_sink *c)
{
  if (!c) return;
  fc_free(c->qcol);
  fc_free(c->scol);
  fc_free(c->buf);
  fc_free(c);
}

static char *number(char *o, double v)
{
  *o++ = ',';
  return o + fci_fmt_g9(o, v);
}

static int row(void *ctx, double t, const double *p, const double *q, const int *mode)
{
  fc_csv_sink *c = ctx;
  char *o = c->buf + fci_fmt_g9(c->buf, t);
  for (int n = 0; n < c->net->nNode; n++) o = number(o, p[n] * c->pf + 0.0);
  for (int k = 0; k < c->nq; k++) o = number(o, q[c->qcol[k]] * c->qf + 0.0);
  for (int k = 0; k < c->ns; k++) {
    int m = mode[c->scol[k]];
    if (m >= 0 && m <= 9) { *o++ = ','; *o++ = (char)('0' + m); }
    else o += snprintf(o, 13, ",%d", m);
  }
  *o++ = '\n';
  size_t len = (size_t)(o - c->buf);
  return fwrite(c->buf, 1, len, c->f) != len || ferror(c->f) ? -1 : 0;
}

void fc_csv_sink_bind(fc_csv_sink *c, fc_sim_sink *sink)
{
  sink->ctx = c;
  sink->xSample = row;
}

int fc_events_csv_header(FILE *f, const char *p_unit)
{
  return fprintf(f, "t [s],element,from,to,dp [%s]\n", p_unit) < 0 ? -1 : 0;
}
