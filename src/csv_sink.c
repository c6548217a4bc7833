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
 * the caller.
 *
 * With the writer thread, the rows do not even hold pressures and flows: the run hands over
 * its state at the sample time (the sim sink's xState), and whichever thread formats a block
 * evaluates the network at each of its rows with an evaluation of its own (a second fci_sys
 * over a copy of the element list, so that modes set for one row do not touch the run's). The
 * evaluations at the samples were a quarter of the run's instructions on pump loops sampled
 * every millisecond (docs/performance.md). Each block's evaluations start afresh (pressures from 0), so
 * the bytes do not depend on which thread formatted the block. */
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
#include "sys.h"

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
  int width;          /* doubles per raw row: t, pressures, flows, states; or, with evaluations
                         (estate), t, the run's state x and the modes */
  int estate;         /* rows hold states, evaluated when formatted */
  struct {
    fc_net net;       /* a copy of the network with elements of its own (their modes) */
    fci_sys *sys;
  } ev[2];            /* ev[0] for the writer thread, ev[1] for the run's own formatting */
  int rows;           /* rows per block */
  size_t cap;         /* doubles per raw block */
  int started;        /* a row was received: the kind of rows is settled */
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

/* The pressures and flows of a row of states: the modes of the row on the copy's elements,
 * then an evaluation. 0, or -1 if the network has no solution there. */
static int evaluate(fc_csv_sink *c, int who, const double *r)
{
  fc_net *net = &c->ev[who].net;
  fci_sys *s = c->ev[who].sys;
  const double *m = r + 1 + s->nx;
  int changed = 0;
  for (int k = 0; k < c->ns; k++) {
    fc_elem *e = &net->elem[c->scol[k]];
    if (e->mode != (int)m[k]) { e->mode = (int)m[k]; changed = 1; }
  }
  if (changed) fci_sys_invalidate(s);
  return fci_sys_eval(s, r[0], s->nx ? r + 1 : NULL) ? -1 : 0;
}

/* Formats block b into its text buffer; who: 0 the writer thread, 1 the run (each has its
 * evaluation, and its scratch is on the stack). 0, or -1 if a row of states has no solution. */
static int format_block(fc_csv_sink *c, int b, int who)
{
  const double *r = c->blk[b], *p = NULL, *q = NULL;
  const int np = c->net->nNode, nv = np + c->nq;
  const int nm = c->estate ? c->ev[who].sys->nx + 1 : 1 + nv; /* where the modes start */
  char *o = c->text[b];
  double u[256]; /* a row's numbers in report units, a piece at a time */
  if (c->estate) { /* afresh: the Newton iterations start from the same point on either thread */
    fci_sys *s = c->ev[who].sys;
    memset(s->p, 0, (size_t)s->nN * sizeof *s->p);
    fci_sys_invalidate(s);
    p = s->p;
    q = s->q;
  }
  for (int i = 0; i < c->fill[b]; i++, r += c->width) {
    if (c->estate && evaluate(c, who, r)) {
      c->len[b] = (size_t)(o - c->text[b]);
      return -1;
    }
    o += fci_fmt_g9(o, r[0]);
    for (int k0 = 1; k0 <= nv; k0 += 256) {
      int m = nv + 1 - k0 < 256 ? nv + 1 - k0 : 256;
      for (int j = 0; j < m; j++) {
        int k = k0 + j;
        double raw = !c->estate ? r[k] : k <= np ? p[k - 1] : q[c->qcol[k - np - 1]];
        u[j] = raw * (k <= np ? c->pf : c->qf) + 0.0;
      }
      o = fci_fmt_g9_list(o, u, m);
    }
    for (int k = nm; k < nm + c->ns; k++) {
      int m = (int)r[k];
      if (m >= 0 && m <= 9) { *o++ = ','; *o++ = (char)('0' + m); }
      else o += snprintf(o, 13, ",%d", m);
    }
    *o++ = '\n';
  }
  c->len[b] = (size_t)(o - c->text[b]);
  return 0;
}

/* Writes block b, formatting it first unless the run already did; returns 0 or an errno
 * value. */
static int write_block(fc_csv_sink *c, int b)
{
  /* a row of states without a solution: the interpolated state between two step ends where
   * the network was solved, so not met in practice; reported as a failed write at its block */
  if (!c->len[b] && format_block(c, b, 0)) { c->len[b] = 0; return EDOM; }
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
    if (format_block(c, b, 1)) c->len[b] = 0; /* the writer meets it again and reports it */
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

static void evaluations_free(fc_csv_sink *c)
{
  for (int k = 0; k < 2; k++) {
    fci_sys_free(c->ev[k].sys);
    c->ev[k].sys = NULL;
    fc_free(c->ev[k].net.elem);
    c->ev[k].net.elem = NULL;
  }
}

/* Rows of values (xSample) from now on: where there is no writer thread, or where the caller
 * hands over values instead of states. */
static void use_values(fc_csv_sink *c)
{
  c->estate = 0;
  evaluations_free(c);
  c->width = 1 + c->net->nNode + c->nq + c->ns;
  c->rows = (int)(c->cap / (size_t)c->width);
}

/* The two evaluations (see the top): returns the state length nx, or -1 where they cannot be
 * built (then the rows hold values, evaluated by the run). The run builds the same system
 * from the same network, so a network that fails here fails there, with its message. */
static int evaluations_new(fc_csv_sink *c)
{
  fc_error e2;
  for (int k = 0; k < 2; k++) {
    c->ev[k].net = *c->net; /* shares names, parameters and options, all read-only */
    c->ev[k].net.elem = fc_malloc((size_t)c->net->nElem * sizeof *c->net->elem);
    if (c->ev[k].net.elem)
      memcpy(c->ev[k].net.elem, c->net->elem, (size_t)c->net->nElem * sizeof *c->net->elem);
    if (!c->ev[k].net.elem || fci_sys_build(&c->ev[k].net, &c->ev[k].sys, &e2)) {
      evaluations_free(c);
      return -1;
    }
  }
  return c->ev[0].sys->nx;
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
  /* Raw blocks of BLOCK_BYTES, or of one row where a row is larger, in either kind of row. */
  int nx = evaluations_new(c), wv = 1 + net->nNode + c->nq + c->ns, ws = 1 + nx + c->ns;
  c->cap = (size_t)BLOCK_BYTES / sizeof(double);
  if (c->cap < (size_t)wv) c->cap = (size_t)wv;
  if (nx >= 0 && c->cap < (size_t)ws) c->cap = (size_t)ws;
  int rmax = (int)(c->cap / (size_t)wv); /* the most rows of either kind a block holds */
  if (nx >= 0 && (int)(c->cap / (size_t)ws) > rmax) rmax = (int)(c->cap / (size_t)ws);
  /* every number: a comma and at most FCI_FMT_G9_MAX - 1 characters; modes: 12 each */
  size_t line = ((size_t)net->nNode + (size_t)c->nq + 1) * FCI_FMT_G9_MAX + (size_t)c->ns * 12 + 2;
  for (int b = 0; b < NBLOCK; b++)
    if (!(c->blk[b] = fc_malloc(c->cap * sizeof(double))) ||
        !(c->text[b] = fc_malloc(line * (size_t)rmax))) {
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
  c->estate = c->threaded && nx >= 0;
  if (c->estate) {
    c->width = ws;
    c->rows = (int)(c->cap / (size_t)ws);
  } else use_values(c); /* no thread: rows of values, as the run evaluates anyway */
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
  evaluations_free(c);
  fc_free(c->qcol);
  fc_free(c->scol);
  for (int b = 0; b < NBLOCK; b++) {
    fc_free(c->blk[b]);
    fc_free(c->text[b]);
  }
  fc_free(c);
}

/* A row is complete: a full block goes to the writer. 0, or -1 with errno of a failed write. */
static int row_end(fc_csv_sink *c)
{
  if (++c->n < c->rows) return 0;
  int e = hand_over(c);
  if (e) errno = e;
  return e ? -1 : 0;
}

static int row(void *ctx, double t, const double *p, const double *q, const int *mode)
{
  fc_csv_sink *c = ctx;
  if (c->estate) { /* values after all: states and values do not mix in one file */
    if (c->started) { errno = EINVAL; return -1; }
    use_values(c);
  }
  c->started = 1;
  double *r = c->blk[c->cur] + (size_t)c->n * (size_t)c->width;
  const int np = c->net->nNode;
  if (!c->n) c->t0[c->cur] = t;
  r[0] = t;
  memcpy(r + 1, p, (size_t)np * sizeof *p);
  r += 1 + np;
  for (int k = 0; k < c->nq; k++) r[k] = q[c->qcol[k]];
  r += c->nq;
  for (int k = 0; k < c->ns; k++) r[k] = mode[c->scol[k]];
  return row_end(c);
}

/* A row of states (estate): the run's state and the modes, evaluated when formatted. */
static int row_state(void *ctx, double t, const double *x, const int *mode)
{
  fc_csv_sink *c = ctx;
  if (!c->estate) { errno = EINVAL; return -1; }
  c->started = 1;
  double *r = c->blk[c->cur] + (size_t)c->n * (size_t)c->width;
  const int nx = c->ev[0].sys->nx;
  if (!c->n) c->t0[c->cur] = t;
  r[0] = t;
  if (nx) memcpy(r + 1, x, (size_t)nx * sizeof *x);
  r += 1 + nx;
  for (int k = 0; k < c->ns; k++) r[k] = mode[c->scol[k]];
  return row_end(c);
}

void fc_csv_sink_bind(fc_csv_sink *c, fc_sim_sink *sink)
{
  sink->ctx = c;
  sink->xSample = row;
  sink->xState = c->estate ? row_state : NULL;
}

int fc_events_csv_header(FILE *f, const char *p_unit)
{
  return fprintf(f, "t [s],element,from,to,dp [%s]\n", p_unit) < 0 ? -1 : 0;
}
