/* Monte Carlo over calibrated valve designs (src/study/mc_cov.c, mc_joint.c, sweep.c).
 *
 * Network: tests/data/mc-calibrated-pump.json, a diaphragm pump whose two valves both link
 * tests/data/valves/calibrated-gap.json, a copy of networks/valves/one-magnet-calibrated.json
 * (calibration block unchanged) with a fabrication tolerance of ±0.05 mm (2 sigma) on the gap.
 *
 * Check values come from the calibration block of networks/valves/one-magnet-calibrated.json and
 * the definition of the bivariate normal: mean = fitted value, sigma_i = sqrt(C_ii),
 * rho = C_12 / (sigma_1 sigma_2) (the block's own "correlation" entry, -0.37868179818410169,
 * agrees). Statistical tolerances are 4 standard errors of the estimate, with the large-sample
 * standard errors sigma/sqrt(n) of a mean, sigma/sqrt(2(n-1)) of a standard deviation and
 * (1 - rho^2)/sqrt(n - 1) of a correlation coefficient (Kendall & Stuart, The Advanced Theory of
 * Statistics, vol. 1, ch. 10 and 16 [from memory]). The seed is fixed, so the test is
 * deterministic; a correct generator fails it with probability about 6e-5 per check. */
#define _POSIX_C_SOURCE 200809L /* open_memstream */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "study/sweep.h"

#define NET FC_SOURCE_DIR "/tests/data/mc-calibrated-pump.json"
#define RECT FC_SOURCE_DIR "/tests/data/mc-rectifier.json"
#define MS_I "$.elements[2].design.ferrofluid.saturation_magnetization"
#define V_I "$.elements[2].design.ferrofluid.volume"
#define GAP_I "$.elements[2].design.magnets[0].gap"
#define MS_O "$.elements[4].design.ferrofluid.saturation_magnetization"
#define V_O "$.elements[4].design.ferrofluid.volume"
#define GAP_O "$.elements[4].design.magnets[0].gap"

/* networks/valves/one-magnet-calibrated.json, "calibration": parameters[].value, covariance */
#define MS_MEAN 15608.435349940572      /* A/m */
#define V_MEAN 4.5047607685955859e-08   /* m^3 */
#define C11 3655.874359044662           /* (A/m)^2 */
#define C12 -6.38727202251494e-09       /* A/m m^3 */
#define C22 7.78199059064761e-20        /* m^6 */

static fc_units *units;

static int setup(void **state)
{
  (void)state;
  fc_error e;
  return fc_units_open(&units, &e);
}

static int teardown(void **state)
{
  (void)state;
  fc_units_free(units);
  return 0;
}

static int col(const fci_study *S, const char *path)
{
  for (int i = 0; i < S->np; i++)
    if (!strcmp(S->p[i].path, path)) return i;
  fail_msg("no toleranced value %s", path);
  return -1;
}

static void open_study(fci_study *S, const char *file)
{
  fc_error e = {0};
  int rc = fci_study_open(S, file, units, &e);
  if (rc) fail_msg("%s: %s", file, e.msg);
}

static void start_mc(fci_study *S, long n, uint64_t seed)
{
  fc_error e = {0};
  int rc = fci_study_monte_carlo(S, n, seed, &e);
  if (rc) fail_msg("monte carlo: %s: %s", e.path, e.msg);
}

/* The inlined design of element i in the study tree. */
static cJSON *design_of(fci_study *S, int i)
{
  cJSON *el = cJSON_GetArrayItem(cJSON_GetObjectItemCaseSensitive(S->base, "elements"), i);
  return cJSON_GetObjectItemCaseSensitive(el, "design");
}

static void joint_draws_have_the_calibration_covariance(void **state)
{
  (void)state;
  enum { N = 20000 };
  fci_study S;
  open_study(&S, NET);
  start_mc(&S, N, 11);
  int nf = 0, nd = -1;
  assert_int_equal(fci_mc_joint_groups(S.joint, &nf, &nd), 1);
  assert_int_equal(nf, 2);
  assert_int_equal(nd, 0);
  int ims = col(&S, MS_I), iv = col(&S, V_I);
  double s1 = 0, s2 = 0, s11 = 0, s22 = 0, s12 = 0, v[64];
  for (long k = 0; k < N; k++) {
    fci_study_point(&S, k, v);
    double a = v[ims] * 1e3 - MS_MEAN, b = v[iv] * 1e-9 - V_MEAN; /* kA/m, uL -> SI */
    s1 += a; s2 += b; s11 += a * a; s22 += b * b; s12 += a * b;
  }
  double m1 = s1 / N, m2 = s2 / N;
  double sd1 = sqrt((s11 - N * m1 * m1) / (N - 1)), sd2 = sqrt((s22 - N * m2 * m2) / (N - 1));
  double r = (s12 - N * m1 * m2) / ((N - 1) * sd1 * sd2);
  double sig1 = sqrt(C11), sig2 = sqrt(C22), rho = C12 / (sig1 * sig2);
  assert_true(fabs(rho - -0.37868179818410169) < 1e-12); /* the file's correlation entry */
  printf("  n %d: mean offsets %.4g A/m, %.4g m3; sd %.6g A/m (exp %.6g), %.6g m3 (exp %.6g); "
         "r %.5f (exp %.5f)\n", N, m1, m2, sd1, sig1, sd2, sig2, r, rho);
  assert_true(fabs(m1) < 4 * sig1 / sqrt(N));
  assert_true(fabs(m2) < 4 * sig2 / sqrt(N));
  assert_true(fabs(sd1 - sig1) < 4 * sig1 / sqrt(2.0 * (N - 1)));
  assert_true(fabs(sd2 - sig2) < 4 * sig2 / sqrt(2.0 * (N - 1)));
  assert_true(fabs(r - rho) < 4 * (1 - rho * rho) / sqrt(N - 1.0));
  fci_study_free(&S);
}

/* Both valves link one calibrated file: identical fitted values at every point, their own gaps. */
static void valves_of_one_calibration_share_the_draw(void **state)
{
  (void)state;
  enum { N = 400 };
  fci_study S;
  open_study(&S, NET);
  start_mc(&S, N, 5);
  int a[2] = {col(&S, MS_I), col(&S, V_I)}, b[2] = {col(&S, MS_O), col(&S, V_O)};
  int gi = col(&S, GAP_I), go = col(&S, GAP_O);
  double v[64], ms0 = 0, sg = 0, sgg = 0, so = 0, soo = 0, sgo = 0;
  for (long k = 0; k < N; k++) {
    fci_study_point(&S, k, v);
    for (int j = 0; j < 2; j++) assert_true(v[a[j]] == v[b[j]]);
    assert_true(v[gi] != v[go]);
    if (k == 0) ms0 = v[a[0]];
    else assert_true(v[a[0]] != ms0); /* a new draw at every point */
    sg += v[gi]; sgg += v[gi] * v[gi]; so += v[go]; soo += v[go] * v[go]; sgo += v[gi] * v[go];
  }
  /* gaps: normal, 1 mm ± 0.05 mm = 2 sigma, independent between the valves */
  double mg = sg / N, mo = so / N;
  double sdg = sqrt((sgg - N * mg * mg) / (N - 1)), sdo = sqrt((soo - N * mo * mo) / (N - 1));
  double r = (sgo - N * mg * mo) / ((N - 1) * sdg * sdo);
  assert_true(fabs(mg - 1.0) < 4 * 0.025 / sqrt(N));
  assert_true(fabs(sdg - 0.025) < 4 * 0.025 / sqrt(2.0 * (N - 1)));
  assert_true(fabs(sdo - 0.025) < 4 * 0.025 / sqrt(2.0 * (N - 1)));
  assert_true(fabs(r) < 4 / sqrt(N - 1.0));
  /* end to end: a row runs the network with those values, the same for both valves */
  char *buf = NULL;
  size_t len = 0;
  FILE *f = open_memstream(&buf, &len);
  assert_int_equal(fci_study_row(&S, 3, f), 0);
  fclose(f);
  fci_study_point(&S, 3, v);
  char want[200];
  snprintf(want, sizeof want, "3,%.9g,%.9g,%.9g,%.9g,%.9g,%.9g,", v[0], v[1], v[2], v[3], v[4], v[5]);
  assert_int_equal(strncmp(buf, want, strlen(want)), 0);
  assert_non_null(strstr(buf, ",ok\n"));
  free(buf);
  fci_study_free(&S);
}

/* Designs that differ only in unfitted values (another gap) but carry the same calibration share
 * it too; a different calibration (here another covariance) is drawn on its own. */
static void same_block_shares_other_block_does_not(void **state)
{
  (void)state;
  fci_study S;
  open_study(&S, NET);
  cJSON *g = cJSON_GetObjectItemCaseSensitive(
      cJSON_GetArrayItem(cJSON_GetObjectItemCaseSensitive(design_of(&S, 4), "magnets"), 0), "gap");
  cJSON_ReplaceItemInObjectCaseSensitive(g, "value", cJSON_CreateString("1.5 mm"));
  start_mc(&S, 50, 3);
  assert_int_equal(fci_mc_joint_groups(S.joint, NULL, NULL), 1);
  double v[64];
  fci_study_point(&S, 7, v);
  assert_true(v[col(&S, MS_I)] == v[col(&S, MS_O)]);
  fci_study_free(&S);

  open_study(&S, NET);
  cJSON *cov = cJSON_GetObjectItemCaseSensitive(
      cJSON_GetObjectItemCaseSensitive(design_of(&S, 4), "calibration"), "covariance");
  cJSON_ReplaceItemInArray(cJSON_GetArrayItem(cov, 0), 1, cJSON_CreateNumber(0.0));
  cJSON_ReplaceItemInArray(cJSON_GetArrayItem(cov, 1), 0, cJSON_CreateNumber(0.0));
  start_mc(&S, 50, 3);
  assert_int_equal(fci_mc_joint_groups(S.joint, NULL, NULL), 2);
  fci_study_point(&S, 7, v);
  assert_true(v[col(&S, MS_I)] != v[col(&S, MS_O)]);
  fci_study_free(&S);
}

/* Without the calibration blocks the study is the old independent one: no joint draw, and every
 * value that is not fitted gets the same number with or without calibration. */
static void calibration_changes_only_the_fitted_values(void **state)
{
  (void)state;
  enum { N = 500 };
  fci_study C, U;
  open_study(&C, NET);
  open_study(&U, NET);
  cJSON_DeleteItemFromObjectCaseSensitive(design_of(&U, 2), "calibration");
  cJSON_DeleteItemFromObjectCaseSensitive(design_of(&U, 4), "calibration");
  start_mc(&C, N, 9);
  start_mc(&U, N, 9);
  assert_non_null(C.joint);
  assert_null(U.joint);
  assert_int_equal(C.np, U.np);
  int ms = col(&C, MS_I), msu = col(&U, MS_I), mso = col(&U, MS_O);
  double vc[64], vu[64], sd = 0;
  for (long k = 0; k < N; k++) {
    fci_study_point(&C, k, vc);
    fci_study_point(&U, k, vu);
    for (int i = 0; i < C.np; i++) {
      int fitted = strstr(C.p[i].path, "ferrofluid.") != NULL;
      if (!fitted) assert_true(vc[i] == vu[i]);
    }
    assert_true(vc[ms] != vu[msu]);
    assert_true(vu[msu] != vu[mso]); /* independent per valve, as before */
    sd += (vu[msu] - 15.60844) * (vu[msu] - 15.60844);
  }
  /* tolerance ±0.1209 kA/m = 2 sigma of a normal */
  assert_true(fabs(sqrt(sd / N) - 0.06045) < 4 * 0.06045 / sqrt(2.0 * N));
  fci_study_free(&C);
  fci_study_free(&U);
  fci_study R;
  open_study(&R, RECT);
  start_mc(&R, 10, 1);
  assert_null(R.joint);
  fci_study_free(&R);
}

/* The draw of point k depends on seed and k only: the order of evaluation does not matter. */
static void draw_depends_on_seed_and_point_only(void **state)
{
  (void)state;
  enum { N = 64 };
  fci_study S, T;
  open_study(&S, NET);
  open_study(&T, NET);
  start_mc(&S, N, 21);
  start_mc(&T, N, 21);
  double fwd[N][6], v[64];
  for (long k = 0; k < N; k++) {
    fci_study_point(&S, k, v);
    memcpy(fwd[k], v, sizeof fwd[k]);
  }
  for (long k = N - 1; k >= 0; k -= 3) {
    fci_study_point(&T, k, v);
    assert_memory_equal(fwd[k], v, sizeof fwd[k]);
  }
  fci_study_free(&T);
  open_study(&T, NET);
  start_mc(&T, N, 22); /* another seed, other draws */
  fci_study_point(&T, 0, v);
  assert_true(v[0] != fwd[0][0] && v[2] != fwd[0][2]);
  fci_study_free(&T);
  fci_study_free(&S);
}

static void expect_mc_error(void (*edit)(fci_study *), const char *path, const char *words)
{
  fci_study S;
  fc_error e = {0};
  open_study(&S, NET);
  edit(&S);
  assert_int_equal(fci_study_monte_carlo(&S, 10, 1, &e), FC_EPARAM);
  if (strcmp(e.path, path) || !strstr(e.msg, words))
    fail_msg("got %s: %s; expected %s: ...%s...", e.path, e.msg, path, words);
  fci_study_free(&S);
}

static cJSON *ferrofluid(fci_study *S, const char *key)
{
  return cJSON_GetObjectItemCaseSensitive(
      cJSON_GetObjectItemCaseSensitive(design_of(S, 2), "ferrofluid"), key);
}

static void edit_value(fci_study *S)
{
  cJSON_ReplaceItemInObjectCaseSensitive(ferrofluid(S, "volume"), "value", cJSON_CreateString("46 uL"));
}

static void edit_tolerance(fci_study *S)
{
  cJSON_ReplaceItemInObjectCaseSensitive(ferrofluid(S, "volume"), "tolerance", cJSON_CreateString("±2 uL"));
}

static void edit_fixed(fci_study *S)
{
  cJSON_ReplaceItemInObjectCaseSensitive(cJSON_GetObjectItemCaseSensitive(design_of(S, 2), "ferrofluid"),
                                         "volume", cJSON_CreateString("45 uL"));
}

static void edit_not_psd(fci_study *S)
{
  /* |C_12| > sigma_1 sigma_2: correlation -1.5 */
  cJSON *cov = cJSON_GetObjectItemCaseSensitive(
      cJSON_GetObjectItemCaseSensitive(design_of(S, 2), "calibration"), "covariance");
  double c12 = -1.5 * sqrt(C11 * C22);
  cJSON_ReplaceItemInArray(cJSON_GetArrayItem(cov, 0), 1, cJSON_CreateNumber(c12));
  cJSON_ReplaceItemInArray(cJSON_GetArrayItem(cov, 1), 0, cJSON_CreateNumber(c12));
}

static void edit_shape(fci_study *S)
{
  cJSON *cov = cJSON_GetObjectItemCaseSensitive(
      cJSON_GetObjectItemCaseSensitive(design_of(S, 2), "calibration"), "covariance");
  cJSON_DeleteItemFromArray(cov, 1);
}

static void inconsistent_calibrations_are_errors(void **state)
{
  (void)state;
  expect_mc_error(edit_value, V_I, "differs from the calibration's fitted value");
  expect_mc_error(edit_tolerance, V_I, "is not the calibration's 2 standard errors");
  expect_mc_error(edit_fixed, "$.elements[2].design", "\"ferrofluid.volume\" is not a toleranced");
  expect_mc_error(edit_not_psd, "$.elements[2].design.calibration.covariance",
                  "not positive semi-definite");
  expect_mc_error(edit_shape, "$.elements[2].design", "expected a 2 x 2 array");
}

/* ---- the factor itself: L L^T = C by definition ---- */
static void check_factor(int m, const double *c, int want_rank)
{
  double l[16 * 16];
  char why[200];
  int rank = -1;
  assert_int_equal(fci_mc_cov_factor(m, c, l, &rank, why, sizeof why), 0);
  assert_int_equal(rank, want_rank);
  for (int i = 0; i < m; i++)
    for (int j = 0; j < m; j++) {
      double s = 0;
      for (int k = 0; k < m; k++) s += l[i * m + k] * l[j * m + k];
      double scale = sqrt(c[i * m + i] * c[j * m + j]);
      assert_true(fabs(s - c[i * m + j]) <= 1e-12 * (scale > 0 ? scale : 1));
    }
}

static void factor_reproduces_the_covariance(void **state)
{
  (void)state;
  const double ex[4] = {C11, C12, C12, C22};
  check_factor(2, ex, 2);
  const double pd3[9] = {4, 2, 0.4, 2, 10, -3, 0.4, -3, 6}; /* leading minors 4, 36, 173.6 > 0 */
  check_factor(3, pd3, 3);
  const double rank1[4] = {4, 6, 6, 9};         /* rho = 1: x2 = 1.5 x1 (semi-definite) */
  check_factor(2, rank1, 1);
  const double fixed[9] = {1, 0, 0.5, 0, 0, 0, 0.5, 0, 2}; /* a parameter with zero variance */
  check_factor(3, fixed, 2);
  /* three parameters, the third the sum of the first two: rank 2 (eigenvalue path) */
  const double sum[9] = {1, 0.2, 1.2, 0.2, 2, 2.2, 1.2, 2.2, 3.4};
  check_factor(3, sum, 2);
  double l[16];
  char why[200];
  int rank;
  const double neg[4] = {1, 2, 2, 1};           /* eigenvalues 3 and -1 */
  assert_int_equal(fci_mc_cov_factor(2, neg, l, &rank, why, sizeof why), -1);
  assert_non_null(strstr(why, "not positive semi-definite"));
  const double asym[4] = {1, 0.5, 0.2, 1};
  assert_int_equal(fci_mc_cov_factor(2, asym, l, &rank, why, sizeof why), -1);
  assert_non_null(strstr(why, "symmetric"));
  const double negvar[4] = {-1, 0, 0, 1};
  assert_int_equal(fci_mc_cov_factor(2, negvar, l, &rank, why, sizeof why), -1);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(joint_draws_have_the_calibration_covariance),
    cmocka_unit_test(valves_of_one_calibration_share_the_draw),
    cmocka_unit_test(same_block_shares_other_block_does_not),
    cmocka_unit_test(calibration_changes_only_the_fitted_values),
    cmocka_unit_test(draw_depends_on_seed_and_point_only),
    cmocka_unit_test(inconsistent_calibrations_are_errors),
    cmocka_unit_test(factor_reproduces_the_covariance),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
