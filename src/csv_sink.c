/* ferrocirc — time-series CSV writer (see output.h). Values are converted from SI to the report
 * units once per number, at the edge.
 *
 * Why a second thread: the run produces samples far faster than text can be made of them (a
 * row of 100 numbers is about 3 us of formatting and 1.2 kB to write), so on a machine with
 * two cores the rows are formatted and written while the integrator goes on. The run copies
 * each row's raw doubles into a block of a ring; when a block is full it is queued for the
 * writer thread, which formats it ("%.9g" by src/fmt_g.c, the same bytes as printf) into one
 * buffer and writes it with one fwrite, while the run fills the next block. When the writer
 * is behind, the run formats its block itself before queueing it. The bytes are the
 * same as writing each row at once; only when a failed write is noticed changes (at the next
 * hand-over, or at fc_csv_sink_finish). Where no thread can be started, blocks are written by
 * the caller. */
#define _GNU_SOURCE /* sync_file_range (Linux) */
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <pthread.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/output.h"
#include "fmt_g.h"
#include "net.h"

/* Raw doubles per block: 256 kB, well inside L2 and L3. NBLOCK blocks in a ring, so that
 * neither thread waits for the other at each hand-over (a sleeping thread takes tens of
 * microseconds to wake on a virtual machine). */
enum { BLOCK_BYTES = 1 << 18, NBLOCK = 4 };

struct fc_csv_sink {
  const fc_net *net;
  FILE *f;
  double pf, qf;      /* SI -> report unit factors */
  int *qcol;          /* elements with a q column */
  int nq;
  int *scol;          /* elements with a state column */
  int ns;
  int width;          /* doubles per raw row: t, pressures, flows, states */
  int rows;           /* rows per block */
  double *blk[NBLOCK]; /* raw rows: the run fills blk[cur], the writer empties them in turn */
  int fill[NBLOCK];   /* rows in each block when handed over */
  double t0[NBLOCK];  /* time of each block's first row */
  int cur, n;         /* block being filled, rows in it */
  int wr;             /* next block the writer takes */
  char *text[NBLOCK]; /* each block as text */
  size_t len[NBLOCK]; /* its length once formatted, 0 while the block is raw */
  pthread_t th;
  int threaded;       /* the writer thread runs */
  pthread_mutex_t mu;
  pthread_cond_t cv;
  int pending;        /* blocks handed to the writer and not yet written */
  int stop;           /* no more blocks */
  int werr;           /* errno of the first failed write, 0 if none */
  double werr_t;      /* time of the first row of the block whose write failed */
  size_t unsynced;    /* bytes written since the last write-back was started */
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

/* Formats block b into its text buffer (on either thread: its scratch is on the stack). */
static void format_block(fc_csv_sink *c, int b)
{
  const double *r = c->blk[b];
  const int np = c->net->nNode, nv = np + c->nq;
  char *o = c->text[b];
  double u[256]; /* a row's numbers in report units, a piece at a time */
  for (int i = 0; i < c->fill[b]; i++, r += c->width) {
    o += fci_fmt_g9(o, r[0]);
    for (int k0 = 1; k0 <= nv; k0 += 256) {
      int m = nv + 1 - k0 < 256 ? nv + 1 - k0 : 256;
      for (int j = 0; j < m; j++) u[j] = r[k0 + j] * (k0 + j <= np ? c->pf : c->qf) + 0.0;
      o = fci_fmt_g9_list(o, u, m);
    }
    for (int k = nv + 1; k < c->width; k++) {
      int m = (int)r[k];
      if (m >= 0 && m <= 9) { *o++ = ','; *o++ = (char)('0' + m); }
      else o += snprintf(o, 13, ",%d", m);
    }
    *o++ = '\n';
  }
  c->len[b] = (size_t)(o - c->text[b]);
}

/* Writes block b, formatting it first unless the run already did; returns 0 or an errno
 * value. */
static int write_block(fc_csv_sink *c, int b)
{
  if (!c->len[b]) format_block(c, b);
  size_t len = c->len[b];
  c->len[b] = 0;
  errno = 0;
  if (fwrite(c->text[b], 1, len, c->f) != len || ferror(c->f)) return errno ? errno : EIO;
#ifdef SYNC_FILE_RANGE_WRITE
  /* The file is made durable (fsync) before it is renamed into place; a CSV of a gigabyte
   * then waits about a second for the disk at the end. Starting the write-back of what is
   * written every 32 MB lets the disk work while the run goes on (sync_file_range(2),
   * SYNC_FILE_RANGE_WRITE: start write-out of dirty pages, do not wait). A hint: its result
   * does not matter, the final fsync checks. */
  c->unsynced += len;
  int fd = fileno(c->f);
  if (c->unsynced >= (32u << 20) && fd >= 0) {
    (void)sync_file_range(fd, 0, 0, SYNC_FILE_RANGE_WRITE);
    c->unsynced = 0;
  }
#endif
  return 0;
}

/* The first failed write wins: its errno and the time of its block's first row. */
static void note_failure(fc_csv_sink *c, int e, int b)
{
  if (e && !c->werr) {
    c->werr = e;
    c->werr_t = c->t0[b];
  }
}

static void *writer(void *arg)
{
  fc_csv_sink *c = arg;
  pthread_mutex_lock(&c->mu);
  for (;;) {
    while (!c->pending && !c->stop) pthread_cond_wait(&c->cv, &c->mu);
    if (!c->pending) break;
    int b = c->wr, failed = c->werr;
    pthread_mutex_unlock(&c->mu);
    int e = failed ? 0 : write_block(c, b); /* after a failure the rest is dropped */
    pthread_mutex_lock(&c->mu);
    note_failure(c, e, b);
    c->pending--;
    c->wr = (c->wr + 1) % NBLOCK;
    pthread_cond_broadcast(&c->cv);
  }
  pthread_mutex_unlock(&c->mu);
  return NULL;
}

/* Hands the current block to the writer (waiting while every other block is still queued), or
 * writes it here without a thread; returns 0 or an errno value of the first failed write. */
static int hand_over(fc_csv_sink *c)
{
  int b = c->cur;
  c->fill[b] = c->n;
  c->n = 0;
  if (!c->fill[b]) return c->werr;
  if (!c->threaded) {
    note_failure(c, c->werr ? 0 : write_block(c, b), b);
    return c->werr;
  }
  /* The writer still has blocks queued: the run formats this one itself, so that the
   * formatting is shared between the two threads as their loads allow. */
  pthread_mutex_lock(&c->mu);
  if (c->pending >= 2) {
    pthread_mutex_unlock(&c->mu);
    format_block(c, b);
    pthread_mutex_lock(&c->mu);
  }
  c->pending++;
  pthread_cond_broadcast(&c->cv);
  while (c->pending == NBLOCK) pthread_cond_wait(&c->cv, &c->mu); /* the next block is queued */
  int e = c->werr;
  pthread_mutex_unlock(&c->mu);
  c->cur = (c->cur + 1) % NBLOCK;
  return e;
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
  c->width = 1 + net->nNode + c->nq + c->ns;
  c->rows = BLOCK_BYTES / (int)sizeof(double) / c->width;
  if (c->rows < 1) c->rows = 1;
  /* every number: a comma and at most FCI_FMT_G9_MAX - 1 characters; modes: 12 each */
  size_t line = ((size_t)net->nNode + (size_t)c->nq + 1) * FCI_FMT_G9_MAX + (size_t)c->ns * 12 + 2;
  size_t raw = (size_t)c->rows * (size_t)c->width;
  for (int b = 0; b < NBLOCK; b++)
    if (!(c->blk[b] = fc_malloc(raw * sizeof(double))) ||
        !(c->text[b] = fc_malloc(line * (size_t)c->rows))) {
      fc_csv_sink_free(c);
      return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
    }
  if (!pthread_mutex_init(&c->mu, NULL)) {
    if (!pthread_cond_init(&c->cv, NULL)) {
      c->threaded = !pthread_create(&c->th, NULL, writer, c);
      if (!c->threaded) pthread_cond_destroy(&c->cv);
    }
    if (!c->threaded) pthread_mutex_destroy(&c->mu);
  }
  *out = c;
  return FC_OK;
}

int fc_csv_sink_finish(fc_csv_sink *c, double *fail_t)
{
  if (!c) return 0;
  hand_over(c);
  if (c->threaded) {
    pthread_mutex_lock(&c->mu);
    c->stop = 1;
    pthread_cond_broadcast(&c->cv);
    pthread_mutex_unlock(&c->mu);
    pthread_join(c->th, NULL);
    pthread_cond_destroy(&c->cv);
    pthread_mutex_destroy(&c->mu);
    c->threaded = 0;
  }
  if (!c->werr) return 0;
  if (fail_t) *fail_t = c->werr_t;
  errno = c->werr;
  return -1;
}

void fc_csv_sink_free(fc_csv_sink *c)
{
  if (!c) return;
  if (c->threaded) {
    c->n = 0; /* drop what was not handed over */
    fc_csv_sink_finish(c, NULL);
  }
  fc_free(c->qcol);
  fc_free(c->scol);
  for (int b = 0; b < NBLOCK; b++) {
    fc_free(c->blk[b]);
    fc_free(c->text[b]);
  }
  fc_free(c);
}

static int row(void *ctx, double t, const double *p, const double *q, const int *mode)
{
  fc_csv_sink *c = ctx;
  double *r = c->blk[c->cur] + (size_t)c->n * (size_t)c->width;
  const int np = c->net->nNode;
  if (!c->n) c->t0[c->cur] = t;
  r[0] = t;
  memcpy(r + 1, p, (size_t)np * sizeof *p);
  r += 1 + np;
  for (int k = 0; k < c->nq; k++) r[k] = q[c->qcol[k]];
  r += c->nq;
  for (int k = 0; k < c->ns; k++) r[k] = mode[c->scol[k]];
  if (++c->n < c->rows) return 0;
  int e = hand_over(c);
  if (e) errno = e;
  return e ? -1 : 0;
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
