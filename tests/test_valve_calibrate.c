/* Tests of valve calibration (src/valve/calibrate*.c): recovery of known parameters from
 * synthetic bench data, coverage of the reported standard errors, reduced chi-square,
 * identifiability, leave-one-out, the calibrated design file, and bad measurement files.
 *
 * Synthetic data are generated from the model itself with known "true" values plus Gaussian
 * noise of known sigma. For a model that is close to linear in its parameters over +-few SE,
 * the estimate is normal with the reported covariance, so |theta_hat - theta| < SE holds with
 * probability erf(1/sqrt 2) = 0.6827 (standard normal table), and chi^2 / nu has mean 1 and
 * standard deviation sqrt(2/nu) (chi-square distribution; e.g. Bevington & Robinson 2003,
 * Data Reduction and Error Analysis, ch. 11 [from memory]). */
#define _POSIX_C_SOURCE 200809L /* mkdtemp */
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
#include <unistd.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/valve.h"
#include "valve/calibrate.h"
#include "valve/valve_int.h"

#ifndef M_SQRT2
#define M_SQRT2 1.41421356237309504880
#define M_SQRT1_2 0.70710678118654752440
#endif

#define MMHG 133.322387415 /* Pa, NIST SP 811 App. B (conventional mmHg) */

static char dir[64];
static fc_units *units;

/* One magnet below a 2 mm channel stepping out to 6 mm (as networks/valves/one-magnet-step.json,
 * with an explicit remanence and a coarse grid so that the tests are fast). */
static const char *design_json =
  "{\"format\": \"ferrocirc-valve/1\", \"name\": \"test valve\",\n"
  " \"channel\": {\"start\": \"-20 mm\", \"sections\": [\n"
  "   {\"length\": \"20 mm\", \"width\": \"2 mm\", \"height\": \"2 mm\"},\n"
  "   {\"length\": \"20 mm\", \"width\": \"6 mm\", \"height\": \"2 mm\"}]},\n"
  " \"ferrofluid\": {\"saturation_magnetization\": \"22.3 kA/m\", \"initial_susceptibility\": 0.53,\n"
  "   \"density\": \"1100 kg/m3\", \"volume\": \"50 uL\",\n"
  "   \"contact_angle\": {\"advancing\": \"40 deg\", \"receding\": \"20 deg\"}},\n"
  " \"carrier\": {\"type\": \"air\", \"interfacial_tension\": \"28 mN/m\"},\n"
  " \"magnets\": [{\"shape\": \"cylinder\", \"diameter\": \"6 mm\", \"length\": \"3 mm\",\n"
  "   \"remanence\": \"1.30 T\", \"side\": \"below\", \"gap\": \"1 mm\", \"x\": \"-1.5 mm\"}],\n"
  " \"numerics\": {\"points\": 401, \"paths\": 3}}\n";

static void write_file(const char *name, const char *text)
{
  char p[256];
  snprintf(p, sizeof p, "%s/%s", dir, name);
  FILE *f = fopen(p, "w");
  assert_non_null(f);
  fputs(text, f);
  fclose(f);
}

static const char *path_of(const char *name)
{
  static char p[256];
  snprintf(p, sizeof p, "%s/%s", dir, name);
  return p;
}

static int setup(void **state)
{
  (void)state;
  snprintf(dir, sizeof dir, "/tmp/fc-cal-XXXXXX");
  if (!mkdtemp(dir)) return -1;
  write_file("v.json", design_json);
  fc_error e;
  return fc_units_open(&units, &e);
}

static int teardown(void **state)
{
  (void)state;
  char cmd[128];
  snprintf(cmd, sizeof cmd, "rm -rf %s", dir);
  fc_units_free(units);
  return system(cmd);
}

/* splitmix64 (Steele, Lea & Flood 2014) and Box-Muller (Box & Muller 1958) for the noise. */
static uint64_t rng_next(uint64_t *s)
{
  uint64_t z = (*s += 0x9E3779B97F4A7C15ull);
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
  return z ^ (z >> 31);
}

static double gauss(uint64_t *s)
{
  double u1 = ((rng_next(s) >> 11) + 1.0) * 0x1.0p-53, u2 = (rng_next(s) >> 11) * 0x1.0p-53;
  return sqrt(-2.0 * log(u1)) * cos(6.283185307179586 * u2);
}

/* Four gaps, both directions, crack and reseat: 16 values; sigma 15 Pa on every row. */
static const char *family_csv =
  "# synthetic: values are overwritten by the tests\n"
  "design,override,direction,crack [Pa],reseat [Pa],sigma [Pa]\n"
  "v.json,magnets[0].gap=0.75 mm,forward,1,1,15\n"
  "v.json,magnets[0].gap=0.75 mm,reverse,1,1,15\n"
  "v.json,,forward,1,1,15\n"
  "v.json,,reverse,1,1,15\n"
  "v.json,magnets[0].gap=1.5 mm,forward,1,1,15\n"
  "v.json,magnets[0].gap=1.5 mm,reverse,1,1,15\n"
  "v.json,magnets[0].gap=2 mm,forward,1,1,15\n"
  "v.json,magnets[0].gap=2 mm,reverse,1,1,15\n";

typedef struct setup_t {
  fci_cal_data *d;
  fci_cal_model *m;
  double *truth;  /* [nValue] model at the true parameters */
} setup_t;

static void make(setup_t *s, const char *csv, const char *fit, const double *theta_true)
{
  fc_error e;
  write_file("m.csv", csv);
  assert_int_equal(fci_cal_data_load(path_of("m.csv"), units, &s->d, &e), FC_OK);
  assert_int_equal(fci_cal_model_new(s->d, units, fit, &s->m, &e), FC_OK);
  s->truth = fc_calloc((size_t)s->d->nValue, sizeof *s->truth);
  assert_int_equal(fci_cal_predict(s->m, theta_true, NULL, s->truth, &e), FC_OK);
}

static void set_data(setup_t *s, uint64_t seed, double sigma)
{
  fci_cal_data *d = s->d;
  for (int k = 0; k < d->nValue; k++)
    d->row[d->vrow[k]].meas[d->vq[k]] = s->truth[k] + (sigma > 0 ? sigma * gauss(&seed) : 0.0);
}

static void done(setup_t *s)
{
  fc_free(s->truth);
  fci_cal_model_free(s->m);
  fci_cal_data_free(s->d);
}

/* Effective Ms 70 % of nominal (physics reference sec. 7: real plugs hold well below the ideal
 * bound) and a plug volume 10 % below nominal. */
static const double theta_true[2] = {0.70 * 22.3e3, 45e-9};

static void fit_recovers_exact_data(void **state)
{
  (void)state;
  setup_t s;
  fc_error e;
  fci_cal_fit *f = NULL;
  make(&s, family_csv, "ferrofluid.saturation_magnetization,ferrofluid.volume", theta_true);
  set_data(&s, 0, 0.0);
  assert_int_equal(fci_cal_fit_run(s.m, NULL, NULL, &f, &e), FC_OK);
  /* noise-free data: the optimum is the truth, to the model's numerical smoothness */
  assert_true(fabs(f->theta[0] / theta_true[0] - 1) < 1e-5);
  assert_true(fabs(f->theta[1] / theta_true[1] - 1) < 1e-5);
  assert_true(f->chi2 < 1e-6);
  assert_int_equal(f->identifiable, 1);
  assert_int_equal(f->dof, 14);
  /* leave-one-out on exact data predicts every left-out row (up to the fit tolerance) */
  double loo[16];
  assert_int_equal(fci_cal_cross_validate(s.m, f, loo, &e), FC_OK);
  for (int k = 0; k < 16; k++) assert_true(fabs(loo[k]) < 0.05);
  fci_cal_fit_free(f);
  done(&s);
}

static void coverage_and_chi_square(void **state)
{
  (void)state;
  enum { SEEDS = 50 };
  setup_t s;
  fc_error e;
  int in1 = 0, trials = 0;
  double sum_red = 0.0;
  make(&s, family_csv, "ferrofluid.saturation_magnetization,ferrofluid.volume", theta_true);
  for (uint64_t seed = 1; seed <= SEEDS; seed++) {
    fci_cal_fit *f = NULL;
    set_data(&s, seed, 15.0);
    assert_int_equal(fci_cal_fit_run(s.m, NULL, NULL, &f, &e), FC_OK);
    for (int i = 0; i < 2; i++, trials++) in1 += fabs(f->theta[i] - theta_true[i]) < f->se[i];
    sum_red += f->redchi2;
    assert_int_equal(f->identifiable, 1);
    fci_cal_fit_free(f);
  }
  double cov = (double)in1 / trials, mean_red = sum_red / SEEDS;
  print_message("coverage within 1 SE: %d/%d = %.3f; mean reduced chi-square %.3f\n", in1,
                trials, cov, mean_red);
  /* binomial(100, 0.6827): sd 0.047; accept +-3 sd */
  assert_true(cov > 0.6827 - 3 * 0.0465 && cov < 0.6827 + 3 * 0.0465);
  /* mean of 50 values of chi^2/14: sd sqrt(2/14)/sqrt(50) = 0.053; accept +-4 sd */
  assert_true(fabs(mean_red - 1.0) < 0.21);
  done(&s);
}

/* Repeated measurements of one valve: one number cannot give two parameters. */
static void replicates_not_identifiable(void **state)
{
  (void)state;
  static const char *csv =
    "design,direction,crack [mmHg],sigma [mmHg]\n"
    "v.json,forward,4.2,0.1\nv.json,forward,4.3,0.1\nv.json,forward,4.1,0.1\n";
  setup_t s;
  fc_error e;
  fci_cal_fit *f = NULL;
  const double th[2] = {22.3e3, 1.30};
  make(&s, csv, "ferrofluid.saturation_magnetization,magnets[0].remanence", th);
  assert_int_equal(fci_cal_fit_run(s.m, NULL, NULL, &f, &e), FC_OK);
  assert_int_equal(f->identifiable, 0);
  assert_int_equal(f->ident[0], FCI_CAL_NOT_IDENTIFIABLE);
  assert_int_equal(f->ident[1], FCI_CAL_NOT_IDENTIFIABLE);
  assert_true(f->cond > 1e8);
  /* the writer refuses a design without finite uncertainties */
  assert_int_equal(fci_cal_write(path_of("no.json"), s.m, NULL, f, NULL, &e), FC_EPARAM);
  assert_int_equal(access(path_of("no.json"), F_OK), -1);
  fci_cal_fit_free(f);
  done(&s);
}

/* Only forward cracks over four small gaps (strong, nearly saturating fields): Ms and remanence
 * then enter nearly as the product Ms*Br (saturated limit of the plug balance, physics
 * reference sec. 5), so the fit is flagged as weakly determined (correlation beyond 0.99). */
static void ms_and_remanence_weak_from_cracks(void **state)
{
  (void)state;
  static const char *csv =
    "design,override,direction,crack [Pa],sigma [Pa]\n"
    "v.json,magnets[0].gap=0.25 mm,forward,1,15\nv.json,magnets[0].gap=0.5 mm,forward,1,15\n"
    "v.json,magnets[0].gap=0.75 mm,forward,1,15\nv.json,,forward,1,15\n";
  setup_t s;
  fc_error e;
  fci_cal_fit *f = NULL;
  const double th[2] = {15.61e3, 1.30};
  make(&s, csv, "ferrofluid.saturation_magnetization,magnets[0].remanence", th);
  set_data(&s, 7, 15.0);
  assert_int_equal(fci_cal_fit_run(s.m, NULL, NULL, &f, &e), FC_OK);
  print_message("Ms-Br from forward cracks: corr %.4f, condition %.3g\n", f->corr[1], f->cond);
  assert_true(f->corr[1] < -0.99);
  assert_int_equal(f->ident[0], FCI_CAL_WEAK);
  assert_int_equal(f->ident[1], FCI_CAL_WEAK);
  fci_cal_fit_free(f);
  done(&s);
}

/* The sine transform keeps a bounded value inside; a truth outside ends at the bound. */
static void bounds_hold(void **state)
{
  (void)state;
  setup_t s;
  fc_error e;
  fci_cal_fit *f = NULL;
  make(&s, family_csv, "ferrofluid.saturation_magnetization", theta_true);
  set_data(&s, 0, 0.0);
  assert_int_equal(fci_cal_model_bounds(s.m, "ferrofluid.saturation_magnetization=18..30", &e),
                   FC_OK); /* no unit: the design's unit, kA/m */
  assert_int_equal(fci_cal_fit_run(s.m, NULL, NULL, &f, &e), FC_OK);
  assert_true(f->theta[0] >= 18e3 && f->theta[0] < 18e3 * (1 + 1e-5));
  assert_int_equal(f->at_bound[0], 1);
  fci_cal_fit_free(f);
  assert_int_equal(fci_cal_model_bounds(s.m, "ferrofluid.saturation_magnetization=25kA/m..30kA/m",
                                        &e), FC_EUSAGE); /* start 22.3 outside */
  assert_int_equal(fci_cal_model_bounds(s.m, "ferrofluid.volume=1..2", &e), FC_EUSAGE);
  done(&s);
}

/* The calibrated design loads, gives the fitted pressures and carries toleranced values. */
static void calibrated_design_round_trip(void **state)
{
  (void)state;
  setup_t s;
  fc_error e;
  fci_cal_fit *f = NULL;
  make(&s, family_csv, "ferrofluid.saturation_magnetization,ferrofluid.volume", theta_true);
  set_data(&s, 3, 15.0);
  assert_int_equal(fci_cal_fit_run(s.m, NULL, NULL, &f, &e), FC_OK);
  assert_int_equal(fci_cal_write(path_of("cal.json"), s.m, NULL, f, NULL, &e), FC_OK);
  fc_valve_design *d = NULL, *ref = NULL;
  fc_valve_pressures p, q;
  assert_int_equal(fc_valve_design_load(path_of("cal.json"), units, &d, &e), FC_OK);
  assert_int_equal(fci_cal_model_design(s.m, NULL, f->theta, &ref, &e), FC_OK);
  assert_int_equal(fc_valve_design_solve(d, &p, &e), FC_OK);
  assert_int_equal(fc_valve_design_solve(ref, &q, &e), FC_OK);
  /* the file rounds the value to 7 digits */
  assert_true(fabs(p.crack_forward - q.crack_forward) < 1e-5 * q.crack_forward);
  const cJSON *ms = cJSON_GetObjectItemCaseSensitive(
    cJSON_GetObjectItemCaseSensitive(d->tree, "ferrofluid"),
    "saturation_magnetization");
  assert_non_null(ms);
  const cJSON *tol = cJSON_GetObjectItemCaseSensitive(ms, "tolerance");
  assert_true(cJSON_IsString(tol));
  double t = strtod(tol->valuestring + 2, NULL); /* after "±" (2 bytes in UTF-8) */
  assert_true(fabs(t * 1e3 - 2 * f->se[0]) < 1e-3 * 2 * f->se[0]); /* kA/m, 2 SE */
  fc_valve_design_free(d);
  fc_valve_design_free(ref);
  fci_cal_fit_free(f);
  done(&s);
}

/* Bad measurement files end with FC_EPARAM naming the file and line. */
static void expect_load_error(const char *csv, int line, const char *part)
{
  fc_error e;
  fci_cal_data *d = NULL;
  write_file("bad.csv", csv);
  fc_error_clear(&e);
  assert_int_equal(fci_cal_data_load(path_of("bad.csv"), units, &d, &e), FC_EPARAM);
  assert_null(d);
  if (!strstr(e.msg, part) || e.line != line || !strstr(e.file, "bad.csv"))
    fail_msg("expected \"%s\" at line %d, got %s:%d: %s", part, line, e.file, e.line, e.msg);
}

static void bad_measurement_files(void **state)
{
  (void)state;
  expect_load_error("design,crack [mmHg]\nv.json,4\n", 1, "missing column \"direction\"");
  expect_load_error("design,direction\nv.json,forward\n", 1, "no pressure column");
  expect_load_error("design,direction,crack [mm]\nv.json,forward,4\n", 1, "not a pressure unit");
  expect_load_error("design,direction,crack\nv.json,forward,4\n", 1, "needs a pressure unit");
  expect_load_error("design,direction,crack [mmHg]\nv.json,forward,-4\n", 2, "must be >= 0");
  expect_load_error("design,direction,crack [mmHg]\nv.json,sideways,4\n", 2, "\"forward\" or");
  expect_load_error("design,direction,crack [mmHg]\nv.json,forward,four\n", 2, "expected a number");
  expect_load_error("design,direction,crack [mmHg],sigma [mmHg]\nv.json,forward,4,0.1\n"
                    "v.json,reverse,8,\n", 3, "every row or on none");
  expect_load_error("design,direction,crack [mmHg],colour\nv.json,forward,4,red\n", 1,
                    "unknown column \"colour\"");
  expect_load_error("# only a comment\n", 0, "empty file");
}

static void expect_model_error(const char *csv, const char *fit, int code, const char *part)
{
  fc_error e;
  fci_cal_data *d = NULL;
  fci_cal_model *m = NULL;
  write_file("bad.csv", csv);
  fc_error_clear(&e);
  assert_int_equal(fci_cal_data_load(path_of("bad.csv"), units, &d, &e), FC_OK);
  int rc = fci_cal_model_new(d, units, fit, &m, &e);
  if (!rc) {
    fci_cal_fit *f = NULL;
    rc = fci_cal_fit_run(m, NULL, NULL, &f, &e);
    fci_cal_fit_free(f);
  }
  if (rc != code || !strstr(e.msg, part))
    fail_msg("expected %d \"%s\", got %d: %s: %s", code, part, rc, e.path, e.msg);
  fci_cal_model_free(m);
  fci_cal_data_free(d);
}

static void bad_paths_and_sizes(void **state)
{
  (void)state;
  const char *two = "design,direction,crack [mmHg]\nv.json,forward,4\nv.json,reverse,8\n";
  expect_model_error(two, "ferrofluid.saturation_magnetisation", FC_EPARAM, "no such value");
  expect_model_error(two, "magnets[3].remanence", FC_EPARAM, "no such value");
  expect_model_error("design,override,direction,crack [mmHg]\nv.json,magnets[0].gapp=1 mm,"
                     "forward,4\nv.json,,reverse,8\n", "ferrofluid.volume", FC_EPARAM,
                     "override magnets[0].gapp");
  expect_model_error("design,direction,crack [mmHg]\nnone.json,forward,4\n", "ferrofluid.volume",
                     FC_EIO, "design none.json");
  expect_model_error("design,direction,crack [mmHg],reseat [mmHg]\nv.json,forward,4,3.9\n",
                     "ferrofluid.saturation_magnetization,ferrofluid.volume", FC_EPARAM,
                     "1 row for 2 fitted parameters");
  expect_model_error("design,direction,crack [mmHg]\nv.json,forward,4\n",
                     "ferrofluid.saturation_magnetization", FC_EPARAM, "need more values");
}

/* Jacobi eigenvalues against closed forms. */
static void eigen_small_matrices(void **state)
{
  (void)state;
  double a[4] = {2, 1, 1, 2}, w[3], v[9];
  fci_cal_eigen(2, a, w, v); /* [[2,1],[1,2]]: 1 and 3, vectors (1,-1)/sqrt2, (1,1)/sqrt2 */
  assert_true(fabs(w[0] - 1) < 1e-14 && fabs(w[1] - 3) < 1e-14);
  assert_true(fabs(fabs(v[0]) - M_SQRT1_2) < 1e-14 && v[0] * v[2] < 0);
  /* tridiagonal (-1, 2, -1) of order 3: 2 - 2 cos(k pi/4) = 2 - sqrt2, 2, 2 + sqrt2 */
  double b[9] = {2, -1, 0, -1, 2, -1, 0, -1, 2};
  fci_cal_eigen(3, b, w, v);
  assert_true(fabs(w[0] - (2 - M_SQRT2)) < 1e-13 && fabs(w[1] - 2) < 1e-13 &&
              fabs(w[2] - (2 + M_SQRT2)) < 1e-13);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(eigen_small_matrices),
    cmocka_unit_test(bad_measurement_files),
    cmocka_unit_test(bad_paths_and_sizes),
    cmocka_unit_test(fit_recovers_exact_data),
    cmocka_unit_test(bounds_hold),
    cmocka_unit_test(replicates_not_identifiable),
    cmocka_unit_test(ms_and_remanence_weak_from_cracks),
    cmocka_unit_test(calibrated_design_round_trip),
    cmocka_unit_test(coverage_and_chi_square),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
