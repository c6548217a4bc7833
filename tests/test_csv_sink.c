/* fc_csv_sink: the rows it writes through its writer thread are byte for byte what formatting
 * each row at once with snprintf("%.9g") gives (the file format, network-format.md), across
 * many blocks and with unit factors applied; a write that fails is reported by
 * fc_csv_sink_finish with the system's errno and the time of the first row it lost. */
#define _POSIX_C_SOURCE 200809L
#include <errno.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include "ferrocirc/output.h"
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

static fc_net *load(void)
{
  fc_net *net = NULL;
  fc_error err = {0};
  int rc = fc_net_load_buffer(net_json, strlen(net_json), "t.json", "", g_units, &net, &err);
  if (rc) print_error("%s\n", err.msg);
  assert_int_equal(rc, FC_OK);
  return net;
}

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
    cmocka_unit_test(failed_write_is_reported_at_finish),
  };
  return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
