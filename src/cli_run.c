/* ferrocirc — `run` and `demo`: load, simulate, write the CSV, events and summary atomically.
 * SIGINT/SIGTERM ask the integrator to stop; outputs are then removed, or kept as
 * "PATH.partial" with --keep-partial, with a note of the last time reached. */
#define _POSIX_C_SOURCE 200809L
#include <errno.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "cli.h"
#include "ferrocirc/output.h"
#include "ferrocirc/sim.h"
#include "ferrocirc/summary.h"
#include "ferrocirc/units.h"
#include "net.h"

typedef struct run_args {
  const char *network, *csv, *summary, *events, *p_unit, *q_unit;
  int keep_partial, quiet;
} run_args;

typedef struct run_io {
  fc_outfile *csv, *events, *summary;
  fc_csv_sink *sink;
  int write_errno;    /* errno of the first failed write during the run, 0 if none */
  fc_outfile *failed; /* the output that write went to */
  double fail_t;      /* simulated time of that write [s] */
  const fc_net *net;
  double pf;
  double next_show;   /* wall-clock time of the next progress line [s] */
} run_io;

static double wall(void)
{
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* A progress line on a terminal, at most five times a second. */
static void progress(void *ctx, double t)
{
  run_io *io = ctx;
  double now = wall(), T = io->net->sim.cycle_period, end = io->net->sim.duration;
  if (now < io->next_show && t < end) return;
  io->next_show = now + 0.2;
  if (T > 0) {
    int nc = (int)(end / T + 0.5), c = (int)(t / T) + 1;
    fprintf(stderr, "\rt = %.4g of %.4g s, cycle %d of %d   ", t, end, c < nc ? c : nc, nc);
  } else {
    fprintf(stderr, "\rt = %.4g of %.4g s   ", t, end);
  }
  if (t >= end * (1 - 1e-12)) fputc('\n', stderr);
}

/* The shell convention for a process ended by a signal: status 128 + its number (130 for
 * SIGINT, 143 for SIGTERM), so scripts around ferrocirc can tell which one it was. */
static volatile sig_atomic_t caught_signal = 0;

static void on_signal(int sig)
{
  caught_signal = sig;
  fc_sim_request_stop();
}

static int parse_args(int argc, char **argv, run_args *a, int need_network, fc_error *err)
{
  memset(a, 0, sizeof *a);
  for (int i = 1; i < argc; i++) {
    const char *s = argv[i];
    const char **slot = !strcmp(s, "-o") ? &a->csv : !strcmp(s, "--summary") ? &a->summary
                      : !strcmp(s, "--events") ? &a->events : !strcmp(s, "--pressure-unit") ? &a->p_unit
                      : !strcmp(s, "--flow-unit") ? &a->q_unit : NULL;
    if (slot) {
      if (++i >= argc) return fc_fail(err, FC_EUSAGE, NULL, "%s needs a value", s);
      *slot = argv[i];
    } else if (!strcmp(s, "--keep-partial")) a->keep_partial = 1;
    else if (!strcmp(s, "--quiet")) a->quiet = 1;
    else if (s[0] == '-') return fc_fail(err, FC_EUSAGE, NULL, "unknown option %s", s);
    else if (need_network && !a->network) a->network = s;
    else return fc_fail(err, FC_EUSAGE, NULL, "unexpected argument %s", s);
  }
  if (need_network && !a->network)
    return fc_fail(err, FC_EUSAGE, NULL, "usage: ferrocirc run NETWORK.json [-o OUT.csv] ...");
  return FC_OK;
}

static int on_event(void *ctx, double t, int elem, int a, int b, double dp)
{
  run_io *io = ctx;
  if (!io->events) return 0;
  FILE *f = fc_outfile_stream(io->events);
  errno = 0;
  if (fprintf(f, "%.9g,%s,%d,%d,%.9g\n", t, fc_net_elem_id(io->net, elem), a, b, dp * io->pf) >= 0)
    return 0;
  io->write_errno = errno ? errno : EIO;
  io->failed = io->events;
  io->fail_t = t;
  return 1;
}

static fc_sim_sink bound;

/* A failed CSV row: the first one's errno and time name the output later. */
static int csv_row_result(run_io *io, int bad, double t)
{
  if (bad && !io->write_errno) {
    io->write_errno = errno ? errno : EIO;
    io->failed = io->csv;
    io->fail_t = t;
  }
  return bad;
}

static int sample(void *ctx, double t, const double *p, const double *q, const int *m)
{
  run_io *io = ctx;
  if (!io->sink) return 0;
  errno = 0;
  return csv_row_result(io, bound.xSample(bound.ctx, t, p, q, m), t);
}

static int state(void *ctx, double t, const double *x, const int *m)
{
  run_io *io = ctx;
  if (!io->sink) return 0;
  errno = 0;
  return csv_row_result(io, bound.xState(bound.ctx, t, x, m), t);
}

/* All outputs were opened before the run (so an unwritable folder stops it before any work);
 * they are completed here and committed together, or all removed. */
static int finish_outputs(run_io *io, const run_args *a, int rc, const fc_net *net,
                          const fc_sim_result *r, fc_error *err)
{
  if (rc == FC_EINTR && a->keep_partial) {
    char note[128];
    snprintf(note, sizeof note, "partial: interrupted, last time reached t = %.9g s", r ? r->t_end : 0.0);
    fc_error e2 = {0};
    if (io->csv) fc_outfile_keep_partial(io->csv, note, &e2);
    if (io->events) fc_outfile_keep_partial(io->events, note, &e2);
    fc_outfile_abort(io->summary); /* a summary of part of a run would mislead */
    return rc;
  }
  if (!rc && io->summary) {
    if (fc_summary_json_write(fc_outfile_stream(io->summary), net, r))
      rc = fc_fail(err, FC_EIO, NULL, "%s: could not write the summary JSON", a->summary);
  }
  if (rc) {
    fc_outfile_abort(io->csv);
    fc_outfile_abort(io->events);
    fc_outfile_abort(io->summary);
    return rc;
  }
  fc_outfile *all[3] = {io->csv, io->events, io->summary};
  return fc_outfile_commit_all(all, 3, err);
}

static int simulate(fc_net *net, const fc_units *u, const run_args *a, fc_error *err)
{
  run_io io = {0};
  fc_report_units ru = {a->p_unit ? a->p_unit : net->pressure_unit,
                        a->q_unit ? a->q_unit : net->flow_unit, 1, 1};
  fc_sim_result *r = NULL;
  int rc = fc_units_out_factor(u, ru.p_unit, FC_DIM_PRESSURE, &ru.pf, "--pressure-unit", err);
  if (!rc) rc = fc_units_out_factor(u, ru.q_unit, FC_DIM_FLOW, &ru.qf, "--flow-unit", err);
  if (rc) { err->code = FC_EUSAGE; return rc; }
  io.net = net;
  io.pf = ru.pf;
  if (a->csv && !(rc = fc_outfile_open(a->csv, &io.csv, err)))
    rc = fc_csv_sink_new(net, fc_outfile_stream(io.csv), ru.pf, ru.qf, ru.p_unit, ru.q_unit, &io.sink, err);
  if (!rc && a->events && !(rc = fc_outfile_open(a->events, &io.events, err)) &&
      fc_events_csv_header(fc_outfile_stream(io.events), ru.p_unit))
    rc = fc_fail(err, FC_EIO, NULL, "writing %s failed", a->events);
  if (!rc && a->summary) rc = fc_outfile_open(a->summary, &io.summary, err);
  if (!rc) {
    if (io.sink) fc_csv_sink_bind(io.sink, &bound);
    int show = !a->quiet && isatty(2);
    io.next_show = wall() + 0.5; /* short runs print nothing */
    fc_sim_sink sink = {&io, io.sink ? sample : NULL, on_event, show ? progress : NULL,
                        io.sink && bound.xState ? state : NULL};
    rc = fc_sim_run(net, &sink, &r, err);
    /* the writer thread may still hold rows, and a failed write may only show now */
    double ft = 0;
    if (io.sink && fc_csv_sink_finish(io.sink, &ft) && !io.write_errno) {
      io.write_errno = errno ? errno : EIO;
      io.failed = io.csv;
      io.fail_t = ft;
      if (!rc || rc == FC_EINTR) rc = FC_EIO;
    }
    if (rc && io.write_errno) { /* the disk, not the network: name the output, not the input */
      fc_error_clear(err);
      fc_fail(err, FC_EIO, NULL, "writing %s failed at t = %.9g s: %s; no output was written",
              fc_outfile_path(io.failed), io.fail_t, strerror(io.write_errno));
    } else if (rc && rc != FC_EINTR) fc_error_set_file(err, net->file, 0, 0);
  }
  rc = finish_outputs(&io, a, rc, net, r, err);
  if (!rc && !a->quiet) fc_summary_print(stdout, net, r, &ru);
  fc_csv_sink_free(io.sink);
  fc_sim_result_free(r);
  return rc;
}

static int run_common(const run_args *a, const char *buf, size_t len)
{
  fc_error err = {0};
  fc_units *u = NULL;
  fc_net *net = NULL;
  struct sigaction sa;
  memset(&sa, 0, sizeof sa);
  sa.sa_handler = on_signal;
  sigaction(SIGINT, &sa, NULL);
  sigaction(SIGTERM, &sa, NULL);
  int rc = fc_units_open(&u, &err);
  if (!rc) rc = buf ? fc_net_load_buffer(buf, len, "demo (built in)", "", u, &net, &err)
                    : fc_net_load(a->network, u, &net, &err);
  if (!rc) rc = simulate(net, u, a, &err);
  int status = rc ? fci_cli_report(&err) : 0;
  if (rc == FC_EINTR) status = 128 + (caught_signal ? (int)caught_signal : SIGINT);
  fc_net_free(net);
  fc_units_free(u);
  return status;
}

int fci_cli_run(int argc, char **argv)
{
  run_args a;
  fc_error err = {0};
  if (parse_args(argc, argv, &a, 1, &err)) return fci_cli_report(&err);
  return run_common(&a, NULL, 0);
}

int fci_cli_demo(int argc, char **argv)
{
  run_args a;
  fc_error err = {0};
  if (argc == 2 && !strcmp(argv[1], "--print")) {
    fputs(fci_demo_network, stdout);
    return 0;
  }
  if (parse_args(argc, argv, &a, 0, &err)) return fci_cli_report(&err);
  if (!a.csv) a.csv = "demo.csv";
  printf("ferrocirc demo: an invented organ-on-chip loop (pulsatile pump, bubble trap, culture\n"
         "chamber, drain); network text: `ferrocirc demo --print`. Writing %s.\n\n", a.csv);
  return run_common(&a, fci_demo_network, strlen(fci_demo_network));
}
