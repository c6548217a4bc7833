/* fc_csv_sink: the rows it writes through its writer thread are byte for byte what formatting
 * each row at once with snprintf("%.9g") gives (the file format, network-format.md), across
 * many blocks and with unit factors applied; rows of states, evaluated by the sink itself,
 * are the run's own pressures and flows, and leave the run's results untouched; a write that
 * fails is reported by fc_csv_sink_finish with the system's errno and the time of the first
 * row it lost. */
#define _POSIX_C_SOURCE 200809L
#include <errno.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include "ferrocirc/output.h"
#include "ferrocirc/sim.h"
#include "net.h"
#include "test_rng.h"
#include "test_sim_rec.h"

/* Three nodes (a, b, g), two two-terminal elements, one element with modes (the valve). */
static const char net_json[] =
  "{\"format\":\"ferrocirc-network/1\",\"simulation\":{\"duration\":\"1 s\"},\"elements\":["
  "{\"id\":\"A\",\"type\":\"reservoir\",\"node\":\"a\",\"pressure\":\"10 mbar\"},"
  "{\"id\":\"G\",\"type\":\"reservoir\",\"node\":\"g\"},"
  "{\"id\":\"R1\",\"type\":\"resistor\",\"from\":\"a\",\"to\":\"b\",\"resistance\":1e12},"
  "{\"id\":\"V\",\"type\":\"check_valve\",\"from\":\"b\",\"to\":\"g\",\"crack_forward\":\"2 mbar\","
  "\"reseat_forward\":\"1 mbar\",\"crack_reverse\":\"100 mbar\",\"open_resistance\":1e12}]}";

static fc_net *load_json(const char *json)
{
  fc_net *net = NULL;
  fc_error err = {0};
  int rc = fc_net_load_buffer(json, strlen(json), "t.json", "", g_units, &net, &err);
  if (rc) print_error("%s: %s\n", err.path, err.msg);
  assert_int_equal(rc, FC_OK);
  return net;
}

static fc_net *load(void) { return load_json(net_json); }

static double draw(uint64_t *s)
{
  uint64_t u = test_rng_next(s);
  double x = pow(10.0, -12 + 24 * (double)(u >> 11) / 9007199254740992.0);
  return (u & 1) ? -x : (u & 2) ? x : (u % 97 == 0 ? 0.0 : x);
}

static void rows_across_blocks_match_snprintf(void **state)
{
  (void)state;
  fc_net *net = load();
  fc_error err = {0};
  char *got = NULL, *want = NULL;
  size_t ngot = 0, nwant = 0;
  FILE *f = open_memstream(&got, &ngot), *g = open_memstream(&want, &nwant);
  fc_csv_sink *c = NULL;
  assert_int_equal(fc_csv_sink_new(net, f, 0.01, 6e10, "mbar", "uL/min", &c, &err), FC_OK);
  fc_sim_sink sink = {0};
  fc_csv_sink_bind(c, &sink);
  fflush(f);
  fputs(got, g); /* the header, written at once */
  int np = net->nNode, ne = net->nElem;
  double p[8], q[8];
  int mode[8];
  uint64_t s = 12345;
  const int rows = 200000; /* many blocks of 256 kB */
  for (int i = 0; i < rows; i++) {
    double t = i * 1e-5;
    for (int n = 0; n < np; n++) p[n] = draw(&s);
    for (int k = 0; k < ne; k++) { q[k] = draw(&s); mode[k] = (int)(test_rng_next(&s) % 4) - 1; }
    mode[ne - 1] = i % 1000 == 0 ? 12 : mode[ne - 1]; /* a two-digit mode */
    assert_int_equal(sink.xSample(sink.ctx, t, p, q, mode), 0);
    fprintf(g, "%.9g", t);
    for (int n = 0; n < np; n++) fprintf(g, ",%.9g", p[n] * 0.01 + 0.0);
    for (int k = 0; k < ne; k++) if (net->elem[k].nTerm == 2) fprintf(g, ",%.9g", q[k] * 6e10 + 0.0);
    for (int k = 0; k < ne; k++) if (net->elem[k].nRoot > 0) fprintf(g, ",%d", mode[k]);
    fputc('\n', g);
  }
  assert_int_equal(fc_csv_sink_finish(c, NULL), 0);
  fclose(f);
  fclose(g);
  assert_true(nwant > 200000 * 40);
  assert_int_equal(ngot, nwant);
  assert_memory_equal(got, want, nwant);
  fc_csv_sink_free(c);
  free(got);
  free(want);
  fc_net_free(net);
}

/* An invented pumped circuit with everything the evaluation at a sample carries over from one
 * point to the next: algebraic junctions (va, vb), a membrane driven by a beat, a gas pocket
 * (Newton iterations), and two valves switching every beat. */
static const char pump_json[] =
  "{\"format\":\"ferrocirc-network/1\",\"simulation\":{\"cycles\":3,\"sample_interval\":\"50 us\"},"
  "\"elements\":["
  "{\"id\":\"S\",\"type\":\"reservoir\",\"node\":\"s\"},"
  "{\"id\":\"Ri\",\"type\":\"resistor\",\"from\":\"s\",\"to\":\"va\",\"resistance\":5e10},"
  "{\"id\":\"Vi\",\"type\":\"check_valve\",\"from\":\"va\",\"to\":\"pump\",\"crack_forward\":\"3 mbar\","
  "\"reseat_forward\":\"1 mbar\",\"crack_reverse\":\"500 mbar\",\"open_resistance\":2e11},"
  "{\"id\":\"D\",\"type\":\"chamber\",\"node\":\"pump\",\"compliance\":5e-13,\"backing_pressure\":"
  "{\"shape\":\"beat\",\"peak\":\"60 mbar\",\"period\":\"1 s\",\"systolic_fraction\":0.3}},"
  "{\"id\":\"Vo\",\"type\":\"check_valve\",\"from\":\"pump\",\"to\":\"vb\",\"crack_forward\":\"3 mbar\","
  "\"reseat_forward\":\"1 mbar\",\"crack_reverse\":\"500 mbar\",\"open_resistance\":2e11},"
  "{\"id\":\"Ro\",\"type\":\"resistor\",\"from\":\"vb\",\"to\":\"c\",\"resistance\":5e10},"
  "{\"id\":\"B\",\"type\":\"chamber\",\"node\":\"c\",\"gas_volume\":\"2 uL\"},"
  "{\"id\":\"Rw\",\"type\":\"resistor\",\"from\":\"c\",\"to\":\"w\",\"resistance\":3e11},"
  "{\"id\":\"W\",\"type\":\"reservoir\",\"node\":\"w\"}]}";

/* With its writer thread the sink takes the run's state at each sample and evaluates the
 * network itself (xState): its rows must be the pressures and flows that the run's own
 * evaluation hands to a sink of values (xSample), to rounding (the Newton iterations start
 * elsewhere), over many blocks and valve switches; and the run itself must not notice the
 * CSV: every result equals, bit for bit, that of a run without any sink. */
static void rows_of_states_are_the_runs_pressures_and_flows(void **state)
{
  (void)state;
  run A; /* values, through the run's own evaluation */
  run_json(&A, pump_json);
  assert_int_equal(A.rc_sim, FC_OK);
  fc_net *net = load_json(pump_json), *bare = load_json(pump_json);
  fc_error err = {0};
  char *got = NULL;
  size_t ngot = 0;
  FILE *f = open_memstream(&got, &ngot);
  fc_csv_sink *c = NULL;
  assert_int_equal(fc_csv_sink_new(net, f, 1, 1, "Pa", "m^3/s", &c, &err), FC_OK);
  fc_sim_sink sink = {0};
  fc_csv_sink_bind(c, &sink);
  assert_non_null(sink.xState); /* a writer thread runs here */
  fc_sim_result *rb = NULL, *rn = NULL;
  assert_int_equal(fc_sim_run(net, &sink, &rb, &err), FC_OK);
  assert_int_equal(fc_csv_sink_finish(c, NULL), 0);
  fclose(f);
  fc_sim_sink none = {0};
  assert_int_equal(fc_sim_run(bare, &none, &rn, &err), FC_OK);

  int nN = A.r.nN, nE = A.r.nE, nq = 0, switches = 0;
  int qel[16];
  assert_true(nE <= 16);
  for (int i = 0; i < nE; i++) if (A.net->elem[i].nTerm == 2) qel[nq++] = i;
  double pmax = 0, qmax = 0;
  for (size_t k = 0; k < A.r.n * (size_t)nN; k++) pmax = fmax(pmax, fabs(A.r.p[k]));
  for (size_t k = 0; k < A.r.n; k++)
    for (int j = 0; j < nq; j++) qmax = fmax(qmax, fabs(A.r.q[k * (size_t)nE + (size_t)qel[j]]));
  char *line = strchr(got, '\n') + 1;
  size_t rows = 0;
  double worst_p = 0, worst_q = 0, last_mode = 0;
  for (; *line && rows < A.r.n; rows++) {
    char *e;
    double t = strtod(line, &e);
    assert_true(fabs(t - A.r.t[rows]) <= 5e-9 * A.r.t[rows]); /* %.9g */
    for (int n = 0; n < nN; n++) {
      double v = strtod(e + 1, &e);
      worst_p = fmax(worst_p, fabs(v - A.r.p[rows * (size_t)nN + (size_t)n]) / pmax);
    }
    for (int j = 0; j < nq; j++) {
      double v = strtod(e + 1, &e);
      worst_q = fmax(worst_q, fabs(v - A.r.q[rows * (size_t)nE + (size_t)qel[j]]) / qmax);
    }
    double m = strtod(e + 1, &e); /* the first valve's mode */
    switches += rows && m != last_mode;
    last_mode = m;
    line = strchr(e, '\n') + 1;
  }
  assert_int_equal(rows, A.r.n);
  assert_true(rows > 50000); /* many blocks */
  assert_true(switches >= 4);  /* the valve opened and closed in every beat */
  /* %.9g: 5e-9 relative to the value; to the column's largest, a little more */
  if (!(worst_p < 1e-8 && worst_q < 1e-8)) {
    print_error("largest difference: pressures %.3g, flows %.3g of the largest\n", worst_p, worst_q);
    fail();
  }
  for (int n = 0; n < nN; n++) {
    assert_memory_equal(&rb->p_max[n], &rn->p_max[n], sizeof(double));
    assert_memory_equal(&rb->p_mean[n], &rn->p_mean[n], sizeof(double));
  }
  for (int i = 0; i < nE; i++) assert_memory_equal(&rb->v_net[i], &rn->v_net[i], sizeof(double));
  assert_int_equal(rb->stats.steps, rn->stats.steps);
  fc_sim_result_free(rb);
  fc_sim_result_free(rn);
  fc_csv_sink_free(c);
  free(got);
  fc_net_free(net);
  fc_net_free(bare);
  run_free(&A);
}

static void failed_write_is_reported_at_finish(void **state)
{
  (void)state;
  FILE *f = fopen("/dev/full", "w"); /* every write: ENOSPC (Linux, full(4)) */
  if (!f) skip();
  fc_net *net = load();
  fc_error err = {0};
  fc_csv_sink *c = NULL;
  assert_int_equal(fc_csv_sink_new(net, f, 1, 1, "Pa", "m^3/s", &c, &err), FC_OK);
  fc_sim_sink sink = {0};
  fc_csv_sink_bind(c, &sink);
  double p[8] = {0}, q[8] = {0};
  int mode[8] = {0}, bad = 0;
  for (int i = 0; i < 100000 && !bad; i++) bad = sink.xSample(sink.ctx, 0.5 + i, p, q, mode) != 0;
  double ft = -1;
  errno = 0;
  assert_int_equal(fc_csv_sink_finish(c, &ft), -1);
  assert_int_equal(errno, ENOSPC);
  assert_true(ft == 0.5); /* the header fits stdio's buffer; the first block is the first loss */
  fc_csv_sink_free(c);
  fclose(f);
  fc_net_free(net);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(rows_across_blocks_match_snprintf),
    cmocka_unit_test(rows_of_states_are_the_runs_pressures_and_flows),
    cmocka_unit_test(failed_write_is_reported_at_finish),
  };
  return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
