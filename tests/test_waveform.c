/* Tests of waveforms (src/waveform.c): each shape against its hand formula (waveform.h),
 * smoothness of pulse ramps, beat mean (physics-reference §11 Q3), tables from points and CSV,
 * corners, and bad input with exact JSON paths. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/waveform.h"

#define PI 3.14159265358979323846
#define WP "$.elements[4].flow"

static fc_units *U;

static int setup(void **state)
{
  (void)state;
  fc_error err;
  return fc_units_open(&U, &err) == FC_OK ? 0 : -1;
}

static int teardown(void **state)
{
  (void)state;
  fc_units_free(U);
  return 0;
}

static fc_waveform *wave(const char *json, fc_dim dim)
{
  fc_error err;
  fc_waveform *w = NULL;
  cJSON *j = cJSON_Parse(json);
  assert_non_null(j);
  int rc = fc_waveform_parse(j, dim, U, "/tmp", WP, &w, &err);
  if (rc) print_error("%s: %s: %s\n", json, err.path, err.msg);
  assert_int_equal(rc, FC_OK);
  cJSON_Delete(j);
  return w;
}

/* Parse must fail with code and exactly this path; returns the message for further checks. */
static const char *wave_fails(const char *json, fc_dim dim, int code, const char *path)
{
  static fc_error err;
  fc_waveform *w = (fc_waveform *)&err; /* must be reset to NULL on failure */
  cJSON *j = cJSON_Parse(json);
  assert_non_null(j);
  fc_error_clear(&err);
  int rc = fc_waveform_parse(j, dim, U, "/tmp", WP, &w, &err);
  cJSON_Delete(j);
  if (rc != code || strcmp(err.path, path))
    print_error("%s: rc %d path %s: %s\n", json, rc, err.path, err.msg);
  assert_int_equal(rc, code);
  assert_string_equal(err.path, path);
  assert_null(w);
  return err.msg;
}

static void near(double got, double want, double atol)
{
  if (!(fabs(got - want) <= atol)) {
    print_error("got %.15g, expected %.15g (atol %g)\n", got, want, atol);
    fail();
  }
}

/* Simpson's rule of the waveform over [a, b] with n (even) intervals. */
static double simpson(const fc_waveform *w, double a, double b, int n)
{
  double h = (b - a) / n, s = fc_waveform_eval(w, a) + fc_waveform_eval(w, b);
  for (int i = 1; i < n; i++) s += (i % 2 ? 4.0 : 2.0) * fc_waveform_eval(w, a + i * h);
  return s * h / 3.0;
}

static void constants_from_numbers_strings_and_objects(void **state)
{
  (void)state;
  fc_waveform *w = wave("\"10 uL/min\"", FC_DIM_FLOW);
  near(fc_waveform_eval(w, 7.0), 1.666667e-10, 1e-16); /* §9: 1 uL/min = 1.666 667e-11 */
  assert_true(fc_waveform_deriv(w, 7.0) == 0.0);
  assert_true(fc_waveform_period(w) == 0.0);
  assert_true(isinf(fc_waveform_next_corner(w, 0.0)));
  fc_waveform_free(w);
  w = wave("{\"shape\":\"constant\",\"value\":\"20 mbar\"}", FC_DIM_PRESSURE);
  near(fc_waveform_mean(w), 2000.0, 1e-12);
  fc_waveform_free(w);
  w = fc_waveform_constant(3.5);
  assert_true(fc_waveform_eval(w, -1.0) == 3.5 && fc_waveform_mean(w) == 3.5);
  fc_waveform_free(w);
  fc_waveform_free(NULL);
}

static void sine_amplitude_phase_and_derivative(void **state)
{
  (void)state;
  /* v = M + A sin(2 pi f t + phase), M = 1000 Pa, A = 500 Pa, f = 2 Hz, phase = pi/2 */
  fc_waveform *w = wave("{\"shape\":\"sine\",\"mean\":\"10 mbar\",\"amplitude\":\"5 mbar\","
                        "\"frequency\":\"2 Hz\",\"phase\":\"90 deg\"}", FC_DIM_PRESSURE);
  near(fc_waveform_eval(w, 0.0), 1500.0, 1e-9);            /* 1000 + 500 sin(pi/2) */
  near(fc_waveform_eval(w, 0.125), 1000.0, 1e-9);          /* sin(pi) = 0 */
  near(fc_waveform_eval(w, 0.25), 500.0, 1e-9);            /* sin(3 pi/2) = -1 */
  near(fc_waveform_eval(w, 0.1), 1000.0 + 500.0 * sin(0.4 * PI + PI / 2), 1e-9);
  near(fc_waveform_deriv(w, 0.125), -500.0 * 4.0 * PI, 1e-9); /* A omega cos(pi) */
  near(fc_waveform_period(w), 0.5, 1e-15);
  near(fc_waveform_mean(w), 1000.0, 1e-12);
  near(simpson(w, 0.3, 0.8, 200) / 0.5, 1000.0, 1e-6);     /* mean over any period */
  assert_true(isinf(fc_waveform_next_corner(w, 0.0)));
  fc_waveform_free(w);
  w = wave("{\"shape\":\"sine\",\"amplitude\":2,\"period\":\"4 s\"}", FC_DIM_NONE);
  near(fc_waveform_eval(w, 1.0), 2.0, 1e-12);              /* mean 0, phase 0: 2 sin(pi/2) */
  fc_waveform_free(w);
}

static const char *PULSE = "{\"shape\":\"pulse\",\"low\":0,\"high\":10,\"period\":\"1 s\","
                           "\"duty\":0.4,\"rise\":\"100 ms\",\"delay\":\"200 ms\"}";

static void pulse_levels_ramps_and_mean(void **state)
{
  (void)state;
  fc_waveform *w = wave(PULSE, FC_DIM_NONE);
  /* t0 = 0.2, rise [0.2, 0.3], high until 0.6, fall [0.6, 0.7], low until 1.2 */
  near(fc_waveform_eval(w, 0.1), 0.0, 1e-12);              /* before the delay: low */
  near(fc_waveform_eval(w, 0.25), 5.0, 1e-12);             /* ramp mid-point: (L+H)/2 */
  near(fc_waveform_eval(w, 0.22), 10.0 * 0.5 * (1 - cos(PI * 0.2)), 1e-12); /* raised cosine */
  near(fc_waveform_eval(w, 0.45), 10.0, 1e-12);            /* plateau */
  near(fc_waveform_eval(w, 0.65), 5.0, 1e-12);             /* falling mid-point */
  near(fc_waveform_eval(w, 0.9), 0.0, 1e-12);
  near(fc_waveform_eval(w, 3.25), 5.0, 1e-9);              /* periodic */
  near(fc_waveform_mean(w), 4.0, 1e-12);                   /* L + (H-L) D */
  near(simpson(w, 0.2, 1.2, 4000), 4.0, 1e-6);             /* high D T between mid-points */
  near(fc_waveform_period(w), 1.0, 1e-15);
  fc_waveform_free(w);
}

static void pulse_value_and_slope_are_continuous_at_ramp_edges(void **state)
{
  (void)state;
  fc_waveform *w = wave(PULSE, FC_DIM_NONE);
  const double edges[] = {0.2, 0.3, 0.6, 0.7, 1.2, 1.3};
  const double h = 1e-6, smax = 10.0 * PI / (2.0 * 0.1); /* steepest slope of the ramp */
  for (int i = 0; i < 6; i++) {
    double t = edges[i], vm = fc_waveform_eval(w, t - h), v0 = fc_waveform_eval(w, t);
    double vp = fc_waveform_eval(w, t + h);
    near(vp - vm, 0.0, 1e-8 * 10.0);                       /* C0: no jump */
    double left = (v0 - vm) / h, right = (vp - v0) / h;    /* C1: one-sided slopes agree */
    near(right - left, 0.0, 1e-4 * smax);
    near(fc_waveform_deriv(w, t - h), fc_waveform_deriv(w, t + h), 1e-4 * smax);
  }
  /* analytic derivative against a central difference inside the ramps */
  const double inner[] = {0.23, 0.27, 0.61, 0.68};
  for (int i = 0; i < 4; i++) {
    double t = inner[i], fd = (fc_waveform_eval(w, t + h) - fc_waveform_eval(w, t - h)) / (2 * h);
    near(fc_waveform_deriv(w, t), fd, 1e-6 * smax);
  }
  fc_waveform_free(w);
}

static void pulse_corners_are_ramp_ends(void **state)
{
  (void)state;
  fc_waveform *w = wave(PULSE, FC_DIM_NONE);
  near(fc_waveform_next_corner(w, 0.0), 0.2, 1e-12);
  near(fc_waveform_next_corner(w, 0.2), 0.3, 1e-12);
  near(fc_waveform_next_corner(w, 0.3), 0.6, 1e-12);
  near(fc_waveform_next_corner(w, 0.6), 0.7, 1e-12);
  near(fc_waveform_next_corner(w, 0.7), 1.2, 1e-12);
  near(fc_waveform_next_corner(w, 1.2 - 1e-15), 1.3, 1e-12); /* just stopped at 1.2 */
  near(fc_waveform_next_corner(w, 100.65), 100.7, 1e-9);
  assert_int_equal(fc_waveform_corners_smooth(w), 1); /* raised-cosine ramps: slope 0 at ends */
  fc_waveform_free(w);
  /* a step (rise 0) jumps at the edges and defaults duty 0.5 */
  w = wave("{\"shape\":\"pulse\",\"high\":1,\"period\":2,\"rise\":0}", FC_DIM_NONE);
  near(fc_waveform_eval(w, 0.5), 1.0, 0), near(fc_waveform_eval(w, 1.5), 0.0, 0);
  near(fc_waveform_next_corner(w, 0.0), 1.0, 1e-12);
  near(fc_waveform_next_corner(w, 1.0), 2.0, 1e-12);
  assert_int_equal(fc_waveform_corners_smooth(w), 0); /* value jumps: the integrator restarts */
  fc_waveform_free(w);
}

static void beat_half_sine_systole(void **state)
{
  (void)state;
  /* Q3: half-sine over T/3, then zero: mean = 2/(3 pi) peak = 0.2122066 peak */
  fc_waveform *w = wave("{\"shape\":\"beat\",\"peak\":\"10 uL/min\",\"rate\":\"60 1/min\"}",
                        FC_DIM_FLOW);
  double P = 1.666667e-10;
  near(fc_waveform_period(w), 1.0, 1e-12);
  near(fc_waveform_mean(w) / P, 0.2122066, 1e-6);           /* Q3 */
  near(simpson(w, 0.0, 1.0 / 3.0, 600) / P, 0.2122066, 1e-6); /* Q3, by quadrature */
  near(fc_waveform_eval(w, 1.0 / 6.0) / P, 1.0, 1e-6);        /* peak at S T/2 */
  near(fc_waveform_eval(w, 0.5), 0.0, 1e-20);                 /* diastole: base 0 */
  assert_int_equal(fc_waveform_corners_smooth(w), 0);         /* slope jumps at ejection ends */
  near(fc_waveform_eval(w, 2.0 + 1.0 / 12.0) / P, sin(PI / 4), 1e-6); /* periodic */
  near(fc_waveform_next_corner(w, 0.0), 1.0 / 3.0, 1e-12);
  near(fc_waveform_next_corner(w, 1.0 / 3.0), 1.0, 1e-12);
  fc_waveform_free(w);
  /* mean = B + 2 P S / pi, B = 0.1, P = 2, S = 0.25, T = 0.8 s */
  w = wave("{\"shape\":\"beat\",\"peak\":2,\"base\":0.1,\"period\":0.8,"
           "\"systolic_fraction\":0.25}", FC_DIM_NONE);
  near(fc_waveform_mean(w), 0.1 + 2.0 * 2.0 * 0.25 / PI, 1e-12);
  near(simpson(w, 0.2, 1.0, 8000) / 0.8, 0.1 + 1.0 / PI, 1e-5); /* straddles a corner */
  near(fc_waveform_deriv(w, 0.0), 2.0 * PI / 0.2, 1e-9);        /* P pi/(S T) */
  fc_waveform_free(w);
}

static void table_interpolates_and_repeats(void **state)
{
  (void)state;
  fc_waveform *w = wave("{\"shape\":\"table\",\"points\":[[0,0],[1,10],[3,10]],\"period\":4}",
                        FC_DIM_NONE);
  near(fc_waveform_eval(w, 0.5), 5.0, 1e-12);
  near(fc_waveform_eval(w, 2.0), 10.0, 1e-12);
  near(fc_waveform_eval(w, 3.5), 5.0, 1e-12);   /* back to v_first at t_first + T */
  assert_int_equal(fc_waveform_corners_smooth(w), 0); /* linear pieces: slope jumps */
  near(fc_waveform_eval(w, 4.5), 5.0, 1e-12);   /* repeated */
  near(fc_waveform_eval(w, -0.5), 5.0, 1e-12);  /* and backwards */
  near(fc_waveform_deriv(w, 0.5), 10.0, 1e-12);
  near(fc_waveform_deriv(w, 3.5), -10.0, 1e-12);
  near(fc_waveform_mean(w), (5.0 + 20.0 + 5.0) / 4.0, 1e-12); /* trapezoids */
  near(simpson(w, 0.0, 4.0, 4000) / 4.0, 7.5, 1e-6);
  near(fc_waveform_next_corner(w, 0.0), 1.0, 1e-12);
  near(fc_waveform_next_corner(w, 1.0), 3.0, 1e-12);
  near(fc_waveform_next_corner(w, 3.0), 4.0, 1e-12);
  near(fc_waveform_next_corner(w, 3.9999999), 4.0, 1e-12);
  near(fc_waveform_next_corner(w, 4.0), 5.0, 1e-12);
  near(fc_waveform_next_corner(w, 41.5), 43.0, 1e-9);
  fc_waveform_free(w);
  /* default period = last t; units inside points */
  w = wave("{\"shape\":\"table\",\"points\":[[\"0 s\",\"0 mbar\"],[\"500 ms\",\"20 mbar\"],"
           "[\"2 s\",\"0 mbar\"]]}", FC_DIM_PRESSURE);
  near(fc_waveform_period(w), 2.0, 1e-15);
  near(fc_waveform_eval(w, 0.25), 1000.0, 1e-9);
  near(fc_waveform_eval(w, 2.25), 1000.0, 1e-9);
  near(fc_waveform_eval(w, 1.25), 1000.0, 1e-9);
  fc_waveform_free(w);
}

static void write_file(const char *name, const char *text)
{
  FILE *f = fopen(name, "w");
  assert_non_null(f);
  fputs(text, f);
  fclose(f);
}

/* The phase within the period is C's fmod, bit for bit (fmod is exact, C11 F.10.7.1; the
 * waveform reduces without calling it): a table that is the identity over one period returns
 * the phase itself. Times at, just beside and between multiples of the period, up to 10^9
 * periods, and past 2^52 periods (where the library's fmod is used). */
static void phase_is_fmod_bit_for_bit(void **state)
{
  (void)state;
  const double P = 0.37;
  fc_waveform *w = wave("{\"shape\":\"table\",\"points\":[[0,0],[0.37,0.37]],\"period\":0.37}",
                        FC_DIM_NONE);
  uint64_t z = 88172645463325252u; /* xorshift64 (Marsaglia 2003) */
  long mismatches = 0, n = 0;
  for (int i = 0; i < 200000; i++) {
    z ^= z << 13, z ^= z >> 7, z ^= z << 17;
    double u = (double)(z >> 11) * 0x1p-53, t;
    switch (i % 5) {
    case 0: t = u * 1e3; break;
    case 1: t = floor(u * 1e9) * P; break; /* a rounded multiple */
    case 2: t = nextafter(floor(u * 1e6) * P, 0.0); break;
    case 3: t = nextafter(floor(u * 1e6) * P, 1e300); break;
    default: t = u * 0x1p53 * P; break; /* beyond 2^52 periods for half of these */
    }
    double want = fmod(t, P), got = fc_waveform_eval(w, t);
    if (want >= P) continue; /* not reached: fmod's result lies in [0, P) */
    n++;
    if (memcmp(&want, &got, sizeof got)) {
      if (mismatches++ < 5) print_error("t = %.17g: fmod %.17g, waveform %.17g\n", t, want, got);
    }
  }
  assert_int_equal(n, 200000);
  assert_int_equal(mismatches, 0);
  fc_waveform_free(w);
}

static void table_from_csv_file(void **state)
{
  (void)state;
  write_file("/tmp/fc_test_wave.csv", "# invented test record\ntime_ms,pressure_mbar\n"
             "0, 0\n500;20\n1000\t20\n\n1500 0\n");
  fc_waveform *w = wave("{\"shape\":\"table\",\"file\":\"fc_test_wave.csv\",\"time_unit\":\"ms\","
                        "\"unit\":\"mbar\",\"period\":\"2 s\"}", FC_DIM_PRESSURE);
  near(fc_waveform_eval(w, 0.25), 1000.0, 1e-9);  /* basedir /tmp resolved the file */
  near(fc_waveform_eval(w, 0.75), 2000.0, 1e-9);
  near(fc_waveform_eval(w, 1.75), 0.0, 1e-9);
  near(fc_waveform_next_corner(w, 0.6), 1.0, 1e-12);
  fc_waveform_free(w);
  write_file("/tmp/fc_test_bad.csv", "t,v\n0,1\n2,2\n1,3\n");
  const char *m = wave_fails("{\"shape\":\"table\",\"file\":\"fc_test_bad.csv\"}", FC_DIM_NONE,
                             FC_EPARAM, WP ".file");
  assert_non_null(strstr(m, "/tmp/fc_test_bad.csv:4: times must increase (1 after 2 s)"));
  write_file("/tmp/fc_test_bad.csv", "0,1\n1,2,3\n");
  m = wave_fails("{\"shape\":\"table\",\"file\":\"fc_test_bad.csv\"}", FC_DIM_NONE, FC_EPARAM,
                 WP ".file");
  assert_non_null(strstr(m, ":2: expected two numbers"));
  m = wave_fails("{\"shape\":\"table\",\"file\":\"fc_no_such_file.csv\"}", FC_DIM_NONE, FC_EIO,
                 WP ".file");
  assert_non_null(strstr(m, "/tmp/fc_no_such_file.csv"));
  remove("/tmp/fc_test_wave.csv");
}

static void table_sample_limit(void **state)
{
  (void)state;
  FILE *f = fopen("/tmp/fc_test_big.csv", "w");
  assert_non_null(f);
  for (long i = 0; i <= 1000000; i++) fprintf(f, "%ld,1\n", i);
  fclose(f);
  const char *m = wave_fails("{\"shape\":\"table\",\"file\":\"fc_test_big.csv\"}", FC_DIM_NONE,
                             FC_EPARAM, WP ".file");
  assert_non_null(strstr(m, "more than 1000000 samples"));
  remove("/tmp/fc_test_big.csv");
  remove("/tmp/fc_test_bad.csv");
}

static void bad_input_names_exact_paths(void **state)
{
  (void)state;
  const char *m;
  m = wave_fails("{\"shape\":\"table\",\"points\":[[0,0],[2,1],[5,2],[3,3]]}", FC_DIM_NONE,
                 FC_EPARAM, WP ".points[3][0]");
  assert_string_equal(m, "times must increase (3 after 5 s)");
  m = wave_fails("{\"shape\":\"table\",\"points\":[[0,0]]}", FC_DIM_NONE, FC_EPARAM,
                 WP ".points");
  assert_non_null(strstr(m, "at least 2 points"));
  wave_fails("{\"shape\":\"table\",\"points\":[[0,0],[1]]}", FC_DIM_NONE, FC_EJSON,
             WP ".points[1]");
  wave_fails("{\"shape\":\"table\",\"points\":[[0,0],[1,\"2 m\"]]}", FC_DIM_PRESSURE, FC_EPARAM,
             WP ".points[1][1]");
  wave_fails("{\"shape\":\"table\",\"points\":[[0,0],[3,1]],\"period\":2}", FC_DIM_NONE,
             FC_EPARAM, WP ".period");
  wave_fails("{\"shape\":\"table\"}", FC_DIM_NONE, FC_EPARAM, WP ".points");
  wave_fails("{\"shape\":\"sine\",\"amplitude\":1,\"period\":0}", FC_DIM_NONE, FC_EPARAM,
             WP ".period");
  wave_fails("{\"shape\":\"sine\",\"amplitude\":1}", FC_DIM_NONE, FC_EPARAM, WP ".period");
  wave_fails("{\"shape\":\"sine\",\"amplitude\":1,\"period\":1,\"frequency\":1}", FC_DIM_NONE,
             FC_EPARAM, WP ".frequency");
  m = wave_fails("{\"shape\":\"sine\",\"amplitud\":1,\"period\":1}", FC_DIM_NONE, FC_EPARAM,
                 WP ".amplitud");
  assert_string_equal(m, "unknown key \"amplitud\"; did you mean \"amplitude\"?");
  wave_fails("{\"shape\":\"sine\",\"amplitude\":\"1 m\",\"period\":1}", FC_DIM_PRESSURE,
             FC_EPARAM, WP ".amplitude");
  m = wave_fails("{\"shape\":\"pulse\",\"high\":1,\"period\":1,\"duty\":1.2}", FC_DIM_NONE,
                 FC_EPARAM, WP ".duty");
  assert_string_equal(m, "must be in (0, 1), got 1.2");
  wave_fails("{\"shape\":\"pulse\",\"high\":1,\"period\":1,\"duty\":0}", FC_DIM_NONE, FC_EPARAM,
             WP ".duty");
  wave_fails("{\"shape\":\"pulse\",\"high\":1,\"period\":1,\"duty\":0.2,\"rise\":0.15}",
             FC_DIM_NONE, FC_EPARAM, WP ".rise");              /* 2 R > D T = 0.2 */
  wave_fails("{\"shape\":\"pulse\",\"high\":1,\"period\":1,\"duty\":0.9,\"rise\":0.06}",
             FC_DIM_NONE, FC_EPARAM, WP ".rise");              /* 2 R > (1-D) T = 0.1 */
  wave_fails("{\"shape\":\"pulse\",\"high\":1,\"period\":1,\"rise\":-0.01}", FC_DIM_NONE,
             FC_EPARAM, WP ".rise");
  wave_fails("{\"shape\":\"beat\",\"peak\":1,\"period\":1,\"systolic_fraction\":1}",
             FC_DIM_NONE, FC_EPARAM, WP ".systolic_fraction");
  wave_fails("{\"shape\":\"beat\",\"peak\":1,\"rate\":\"-60 1/min\"}", FC_DIM_NONE, FC_EPARAM,
             WP ".rate");
  wave_fails("{\"shape\":\"wobble\"}", FC_DIM_NONE, FC_EPARAM, WP ".shape");
  wave_fails("{\"value\":1}", FC_DIM_NONE, FC_EPARAM, WP ".shape");
  wave_fails("true", FC_DIM_NONE, FC_EJSON, WP);
  wave_fails("\"5 mbar\"", FC_DIM_FLOW, FC_EPARAM, WP);
}

/* Every allocation of a parse may fail: the parse reports FC_ENOMEM and frees what it had
 * (the sanitizer build checks for leaks); with enough allocations it succeeds. */
static void parse_unwinds_on_allocation_failure(void **state)
{
  (void)state;
  write_file("/tmp/fc_test_nomem.csv", "0,1\n1,2\n2,3\n");
  const char *cases[] = {"{\"shape\":\"table\",\"points\":[[0,0],[1,1],[2,0]]}",
                         "{\"shape\":\"table\",\"file\":\"fc_test_nomem.csv\"}",
                         "{\"shape\":\"beat\",\"peak\":1,\"period\":1}", "3"};
  for (int c = 0; c < 4; c++) {
    cJSON *j = cJSON_Parse(cases[c]);
    assert_non_null(j);
    int ok = 0;
    for (long n = 0; n < 20 && !ok; n++) {
      fc_error err;
      fc_waveform *w = NULL;
      fc_alloc_fail_after(n);
      int rc = fc_waveform_parse(j, FC_DIM_NONE, U, "/tmp", WP, &w, &err);
      fc_alloc_fail_after(-1);
      if (rc == FC_OK) ok = 1, assert_non_null(w);
      else assert_int_equal(rc, FC_ENOMEM), assert_null(w);
      fc_waveform_free(w);
    }
    assert_true(ok);
    cJSON_Delete(j);
  }
  remove("/tmp/fc_test_nomem.csv");
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(constants_from_numbers_strings_and_objects),
    cmocka_unit_test(sine_amplitude_phase_and_derivative),
    cmocka_unit_test(pulse_levels_ramps_and_mean),
    cmocka_unit_test(pulse_value_and_slope_are_continuous_at_ramp_edges),
    cmocka_unit_test(pulse_corners_are_ramp_ends),
    cmocka_unit_test(beat_half_sine_systole),
    cmocka_unit_test(table_interpolates_and_repeats),
    cmocka_unit_test(phase_is_fmod_bit_for_bit),
    cmocka_unit_test(table_from_csv_file),
    cmocka_unit_test(table_sample_limit),
    cmocka_unit_test(bad_input_names_exact_paths),
    cmocka_unit_test(parse_unwinds_on_allocation_failure),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
