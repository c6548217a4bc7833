/* ferrocirc — tests of the picture module: axis ticks, min/max decimation, the CSV reader, the
 * valve-open spans of a trace, and the values printed in schematic labels. */
#define _POSIX_C_SOURCE 200809L
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/network.h"
#include "ferrocirc/plot.h"
#include "ferrocirc/units.h"
#include "study/plot_int.h"

static char *write_temp(const char *text)
{
  static char name[64];
  snprintf(name, sizeof name, "/tmp/fc_test_plot_XXXXXX");
  int fd = mkstemp(name);
  assert_true(fd >= 0);
  FILE *f = fdopen(fd, "w");
  fputs(text, f);
  fclose(f);
  return name;
}

/* Expected values worked by hand through Heckbert's algorithm (Graphics Gems I, 1990, 61-63):
 * range = nicenum(hi - lo, no rounding), step = nicenum(range / (target - 1), rounding). */
static void ticks_follow_heckbert(void **state)
{
  (void)state;
  fc_plot_ticks t;
  char buf[32];
  /* 0..95, 6 ticks: range 100, step nicenum(20) = 20: 0, 20, ..., 100 */
  fc_plot_ticks_make(0, 95, 6, &t);
  assert_float_equal(t.lo, 0, 1e-12);
  assert_float_equal(t.hi, 100, 1e-12);
  assert_float_equal(t.step, 20, 1e-12);
  assert_int_equal(t.n, 6);
  assert_int_equal(t.decimals, 0);
  /* -0.013..0.087, 5 ticks: range 0.1, step nicenum(0.025) = 0.02: -0.02 .. 0.10 */
  fc_plot_ticks_make(-0.013, 0.087, 5, &t);
  assert_float_equal(t.step, 0.02, 1e-15);
  assert_float_equal(t.lo, -0.02, 1e-15);
  assert_float_equal(t.hi, 0.10, 1e-15);
  assert_int_equal(t.n, 7);
  assert_int_equal(t.decimals, 2);
  assert_string_equal(fc_plot_tick_label(&t, t.lo + 1 * t.step, buf, sizeof buf), "0.00");
  assert_string_equal(fc_plot_tick_label(&t, t.lo + 4 * t.step, buf, sizeof buf), "0.06");
  /* 7..10 s, 10 ticks: range 5, step nicenum(5/9) = 0.5 */
  fc_plot_ticks_make(7, 10, 10, &t);
  assert_float_equal(t.step, 0.5, 1e-12);
  assert_int_equal(t.n, 7);
  assert_string_equal(fc_plot_tick_label(&t, 7.5, buf, sizeof buf), "7.5");
}

static void ticks_widen_a_constant_and_sort_the_ends(void **state)
{
  (void)state;
  fc_plot_ticks t;
  fc_plot_ticks_make(5, 5, 6, &t);
  assert_true(t.lo < 5 && t.hi > 5 && t.n >= 2 && t.n <= FC_PLOT_MAX_TICKS);
  fc_plot_ticks_make(0, 0, 6, &t);
  assert_true(t.lo <= -1 + 1e-12 && t.hi >= 1 - 1e-12);
  fc_plot_ticks_make(3, -2, 6, &t);
  assert_true(t.lo <= -2 && t.hi >= 3);
  /* a wide range never exceeds the tick limit */
  fc_plot_ticks_make(-1e9, 3e9, 200, &t);
  assert_true(t.n <= FC_PLOT_MAX_TICKS);
}

/* 10^6 samples of a sine with one narrow spike and one narrow dip: the decimated series has at
 * most FC_PLOT_MAX_POINTS points, keeps both extremes exactly, and in every bin keeps the
 * bin's own minimum and maximum (checked against brute force over the full series). */
static size_t bin_of(double x, double x1, size_t nb)
{
  size_t j = (size_t)(x / x1 * (double)nb);
  return j < nb ? j : nb - 1;
}

static void decimation_keeps_extremes(void **state)
{
  (void)state;
  const size_t n = 1000000, nb = FC_PLOT_MAX_POINTS / 2;
  double *y = malloc(n * sizeof *y), *kx = malloc(FC_PLOT_MAX_POINTS * sizeof *kx),
         *ky = malloc(FC_PLOT_MAX_POINTS * sizeof *ky);
  assert_non_null(y);
  fc_plot_bins *b = NULL;
  fc_error err;
  assert_int_equal(fc_plot_bins_new(0, (double)(n - 1), FC_PLOT_MAX_POINTS, &b, &err), FC_OK);
  for (size_t i = 0; i < n; i++) {
    y[i] = sin(6.283185307179586 * (double)i / 50000.0);
    if (i == 123457) y[i] = 10;
    if (i == 765433) y[i] = -7;
    fc_plot_bins_add(b, (double)i, y[i]);
  }
  size_t m = fc_plot_bins_points(b, kx, ky);
  assert_true(m <= FC_PLOT_MAX_POINTS && m >= nb);
  double lo = INFINITY, hi = -INFINITY;
  for (size_t k = 0; k < m; k++) {
    lo = fmin(lo, ky[k]);
    hi = fmax(hi, ky[k]);
    if (k) assert_true(kx[k] > kx[k - 1]);
  }
  assert_float_equal(hi, 10, 0);
  assert_float_equal(lo, -7, 0);
  double rmin, rmax;
  fc_plot_bins_range(b, &rmin, &rmax);
  assert_float_equal(rmin, -7, 0);
  assert_float_equal(rmax, 10, 0);
  double *bmin = malloc(nb * sizeof *bmin), *bmax = malloc(nb * sizeof *bmax);
  double *kmin = malloc(nb * sizeof *kmin), *kmax = malloc(nb * sizeof *kmax);
  for (size_t j = 0; j < nb; j++) bmin[j] = kmin[j] = INFINITY, bmax[j] = kmax[j] = -INFINITY;
  for (size_t i = 0; i < n; i++) {
    size_t j = bin_of((double)i, (double)(n - 1), nb);
    bmin[j] = fmin(bmin[j], y[i]);
    bmax[j] = fmax(bmax[j], y[i]);
  }
  for (size_t q = 0; q < m; q++) {
    size_t j = bin_of(kx[q], (double)(n - 1), nb);
    kmin[j] = fmin(kmin[j], ky[q]);
    kmax[j] = fmax(kmax[j], ky[q]);
  }
  for (size_t j = 0; j < nb; j++) {
    assert_float_equal(kmin[j], bmin[j], 0);
    assert_float_equal(kmax[j], bmax[j], 0);
  }
  free(bmin);
  free(bmax);
  free(kmin);
  free(kmax);
  fc_plot_bins_free(b);
  free(y);
  free(kx);
  free(ky);
}

static void csv_header_splits_names_and_units(void **state)
{
  (void)state;
  const char *f = write_temp("t [s],p:chamber [mbar],\"q:a,b [uL/min]\",state:v1,plain\n"
                             "0,1.5,-2e-3,0,7\n"
                             "# a comment line is skipped\n"
                             "0.01,,nan,1,8\n");
  fci_csv *c = NULL;
  fc_error err;
  fc_error_clear(&err);
  assert_int_equal(fci_csv_open(f, &c, &err), FC_OK);
  assert_int_equal(c->nCol, 5);
  assert_string_equal(c->name[0], "t");
  assert_string_equal(c->unit[0], "s");
  assert_string_equal(c->name[1], "p:chamber");
  assert_string_equal(c->unit[1], "mbar");
  assert_string_equal(c->name[2], "q:a,b");
  assert_string_equal(c->unit[2], "uL/min");
  assert_string_equal(c->unit[3], "");
  assert_int_equal(fci_csv_find(c, "q:a,b [uL/min]"), 2);
  assert_int_equal(fci_csv_find(c, "plain"), 4);
  assert_int_equal(fci_csv_find(c, "p:nothing"), -1);
  assert_int_equal(fci_csv_next(c, &err), 1);
  assert_float_equal(c->val[2], -2e-3, 1e-18);
  assert_int_equal(fci_csv_next(c, &err), 1);
  assert_int_equal(c->line, 4);
  assert_true(isnan(c->val[1]) && isnan(c->val[2]));
  assert_float_equal(c->val[3], 1, 0);
  assert_int_equal(fci_csv_next(c, &err), 0);
  assert_int_equal(fci_csv_rewind(c, &err), FC_OK);
  assert_int_equal(fci_csv_next(c, &err), 1);
  assert_float_equal(c->val[1], 1.5, 0);
  fci_csv_free(c);
  remove(f);
}

static void csv_errors_name_file_and_line(void **state)
{
  (void)state;
  const char *f = write_temp("t [s],p:x [mbar]\n0,1\n0.1,abc\n");
  fci_csv *c = NULL;
  fc_error err;
  fc_error_clear(&err);
  assert_int_equal(fci_csv_open(f, &c, &err), FC_OK);
  assert_int_equal(fci_csv_next(c, &err), 1);
  assert_true(fci_csv_next(c, &err) < 0);
  assert_int_equal(err.code, FC_EPARAM);
  assert_string_equal(err.file, f);
  assert_int_equal(err.line, 3);
  assert_int_equal(err.col, 5); /* "abc" starts at the 5th character of "0.1,abc" */
  assert_non_null(strstr(err.msg, "p:x"));
  assert_non_null(strstr(err.msg, "abc"));
  fci_csv_free(c);
  remove(f);
  fc_error_clear(&err);
  f = write_temp("a [m],b [m]\n1,2,3\n");
  assert_int_equal(fci_csv_open(f, &c, &err), FC_OK);
  assert_true(fci_csv_next(c, &err) < 0);
  assert_int_equal(err.line, 2);
  fci_csv_free(c);
  remove(f);
  f = write_temp("");
  assert_int_equal(fci_csv_open(f, &c, &err), FC_EPARAM);
  assert_null(c);
  remove(f);
}

static void csv_error_column_is_text(void **state)
{
  (void)state;
  const char *f = write_temp("gap [mm],flow [uL/min],error\n0.5,12,\n0.7,nan,\"solver: step, too small\"\n");
  fci_csv *c = NULL;
  fc_error err;
  assert_int_equal(fci_csv_open(f, &c, &err), FC_OK);
  assert_int_equal(c->iErr, 2);
  assert_int_equal(fci_csv_next(c, &err), 1);
  assert_string_equal(c->errText, "");
  assert_int_equal(fci_csv_next(c, &err), 1);
  assert_string_equal(c->errText, "solver: step, too small");
  fci_csv_free(c);
  remove(f);
}

/* A valve opens at the sample t = 0.2 and seals at t = 0.5; opens again at 0.8 until the end. */
static void trace_shades_valve_open_spans(void **state)
{
  (void)state;
  char text[4096] = "t [s],p:a [mbar],q:v [uL/min],state:v\n";
  for (int i = 0; i <= 10; i++) {
    char row[96];
    int open = (i >= 2 && i < 5) || i >= 8;
    snprintf(row, sizeof row, "%g,%g,%g,%d\n", i * 0.1, sin(i * 1.0), open ? 5.0 : 0.0, open);
    strcat(text, row);
  }
  const char *f = write_temp(text);
  fci_csv *c = NULL;
  fci_figure fig;
  fci_plot_args a;
  fc_error err;
  memset(&fig, 0, sizeof fig);
  memset(&a, 0, sizeof a);
  a.from = a.to = a.period = NAN;
  assert_int_equal(fci_csv_open(f, &c, &err), FC_OK);
  assert_int_equal(fci_plot_trace(c, &a, &fig, &err), FC_OK);
  assert_int_equal(fig.np, 3); /* pressure, flow, state */
  assert_int_equal(fig.nShade, 1);
  assert_int_equal((int)fig.shade[0].n, 2);
  assert_float_equal(fig.shade[0].span[0].x0, 0.2, 1e-12);
  assert_float_equal(fig.shade[0].span[0].x1, 0.5, 1e-12);
  assert_float_equal(fig.shade[0].span[1].x0, 0.8, 1e-12);
  assert_float_equal(fig.shade[0].span[1].x1, 1.0, 1e-12);
  assert_string_equal(fig.p[1].ylabel, "flow [\xc2\xb5L/min]");
  FILE *out = tmpfile();
  assert_int_equal(fci_svg_write(out, &fig, &err), FC_OK);
  fclose(out);
  fci_fig_free(&fig);
  /* --cycles needs --period */
  assert_int_equal(fci_csv_rewind(c, &err), FC_OK);
  a.cycles = "last:3";
  assert_int_equal(fci_plot_trace(c, &a, &fig, &err), FC_EUSAGE);
  assert_non_null(strstr(err.msg, "--period"));
  fci_fig_free(&fig);
  fci_csv_free(c);
  remove(f);
}

static char *schematic_of(const char *file)
{
  fc_units *u = NULL;
  fc_net *net = NULL;
  fc_error err;
  char *buf = NULL;
  size_t len = 0;
  assert_int_equal(fc_units_open(&u, &err), FC_OK);
  assert_int_equal(fc_net_load(file, u, &net, &err), FC_OK);
  FILE *f = open_memstream(&buf, &len);
  assert_int_equal(fc_schematic_write(net, f, &err), FC_OK);
  fclose(f);
  fc_net_free(net);
  fc_units_free(u);
  return buf;
}

/* The labels read their numbers from the element types' descriptions; these checks fail if a
 * description's format changes. Expected values are the file's own inputs converted by hand,
 * and R of inlet_line (10 mm x 500 um x 200 um, mu = 0.75 mPa s) from the rectangular-duct
 * series of Bruus 2008, Theoretical Microfluidics, Ch. 4 [equation number from memory], summed
 * with /usr/bin/python3 over 100 odd terms: 3.0076e10 Pa s/m^3 = 0.00501 mbar/(uL/min). */
static void schematic_labels_show_designer_units(void **state)
{
  (void)state;
  char *s = schematic_of(FC_SOURCE_DIR "/networks/diaphragm-two-valves.json");
  assert_non_null(strstr(s, "digraph"));
  assert_non_null(strstr(s, "crack 4 / 70 mmHg"));      /* crack_forward "4 mmHg", reverse "70 mmHg" */
  assert_non_null(strstr(s, "reseat 1.5 / 25 mmHg"));
  assert_non_null(strstr(s, "blowout 150 / 150 mmHg"));
  assert_non_null(strstr(s, "10 mm long, 500 \xc2\xb5m \xc3\x97 200 \xc2\xb5m"));
  assert_non_null(strstr(s, "100 mm long, bore 500 \xc2\xb5m"));
  assert_non_null(strstr(s, "C = 50 nL/mbar"));         /* 5e-13 m^3/Pa */
  assert_non_null(strstr(s, "C = 3 nL/mbar"));          /* 3e-14 m^3/Pa */
  assert_non_null(strstr(s, "R = 0.00501 mbar/(\xc2\xb5L/min)"));
  assert_non_null(strstr(s, "culture region"));
  assert_non_null(strstr(s, "driven membrane"));
  free(s);
}

static void unit_pretty_uses_the_micro_sign(void **state)
{
  (void)state;
  char b[32];
  assert_string_equal(fci_unit_pretty("uL/min", b, sizeof b), "\xc2\xb5L/min");
  assert_string_equal(fci_unit_pretty("mbar/(uL/min)", b, sizeof b), "mbar/(\xc2\xb5L/min)");
  assert_string_equal(fci_unit_pretty("mmHg", b, sizeof b), "mmHg");
  assert_string_equal(fci_unit_pretty("um", b, sizeof b), "\xc2\xb5m");
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(ticks_follow_heckbert),
    cmocka_unit_test(ticks_widen_a_constant_and_sort_the_ends),
    cmocka_unit_test(decimation_keeps_extremes),
    cmocka_unit_test(csv_header_splits_names_and_units),
    cmocka_unit_test(csv_errors_name_file_and_line),
    cmocka_unit_test(csv_error_column_is_text),
    cmocka_unit_test(trace_shades_valve_open_spans),
    cmocka_unit_test(schematic_labels_show_designer_units),
    cmocka_unit_test(unit_pretty_uses_the_micro_sign),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
