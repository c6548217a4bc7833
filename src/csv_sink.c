/* ferrocirc — time-series CSV writer (see output.h). Values are converted from SI to the report
 * units once per number, at the edge; rows are written through a 64 KiB stdio buffer. */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/output.h"
#include "net.h"

struct fc_csv_sink {
  const fc_net *net;
  FILE *f;
  double pf, qf;      /* SI -> report unit factors */
  int *qcol;          /* elements with a q column */
  int nq;
  int *scol;          /* elements with a state column */
  int ns;
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
  fc_free(c);
}

static int row(void *ctx, double t, const double *p, const double *q, const int *mode)
{
  fc_csv_sink *c = ctx;
  FILE *f = c->f;
  fprintf(f, "%.9g", t);
  for (int n = 0; n < c->net->nNode; n++) fprintf(f, ",%.9g", p[n] * c->pf + 0.0);
  for (int k = 0; k < c->nq; k++) fprintf(f, ",%.9g", q[c->qcol[k]] * c->qf + 0.0);
  for (int k = 0; k < c->ns; k++) fprintf(f, ",%d", mode[c->scol[k]]);
  fputc('\n', f);
  return ferror(f) ? -1 : 0;
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
