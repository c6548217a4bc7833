/* Tests of unit parsing (src/units.c): every supported unit string against its SI value, wrong
 * dimensions, garbage, JSON values and output factors. Check values: physics-reference §9/§11. */
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
#include "ferrocirc/units.h"
#include "units_quick.h"

#define PI 3.14159265358979323846

static fc_units *U;

static int setup(void **state)
{
  (void)state;
  fc_error err;
  fc_error_clear(&err);
  return fc_units_open(&U, &err) == FC_OK ? 0 : -1;
}

static int teardown(void **state)
{
  (void)state;
  fc_units_free(U);
  return 0;
}

/* Parse text as dim and compare with expected at relative tolerance rtol. */
static void expect_si(const char *text, fc_dim dim, double expected, double rtol)
{
  fc_error err;
  double v = NAN;
  fc_error_clear(&err);
  int rc = fc_units_parse(U, text, dim, &v, "$.x", &err);
  if (rc) print_error("%s: %s\n", text, err.msg);
  assert_int_equal(rc, FC_OK);
  if (fabs(v - expected) > rtol * fabs(expected)) {
    print_error("%s: got %.15g, expected %.15g\n", text, v, expected);
    fail();
  }
}

static void pressure_units_match_nist_sp811(void **state)
{
  (void)state;
  expect_si("1 psi", FC_DIM_PRESSURE, 6894.757293, 1e-9);    /* U1: NIST SP 811 App. B */
  expect_si("1 mmHg", FC_DIM_PRESSURE, 133.3223874, 1e-9);   /* U1: conventional mmHg */
  expect_si("1 Torr", FC_DIM_PRESSURE, 133.3223684, 1e-9);   /* U1: 101325/760 exact */
  expect_si("1 torr", FC_DIM_PRESSURE, 133.3223684, 1e-9);   /* U1 */
  expect_si("1 cmH2O", FC_DIM_PRESSURE, 98.0665, 1e-12);     /* U1: 1000 kg/m3 gn 1 cm, exact */
  expect_si("20 mbar", FC_DIM_PRESSURE, 2000.0, 1e-15);      /* §9: 1 mbar = 100 Pa exact */
  expect_si("10 kPa", FC_DIM_PRESSURE, 1e4, 1e-15);          /* SI prefix, exact */
  expect_si("1 atm", FC_DIM_PRESSURE, 101325.0, 1e-15);      /* §9: exact */
  expect_si("0.5 Pa", FC_DIM_STRESS, 0.5, 1e-15);            /* identity */
}

static void flow_and_volume_units(void **state)
{
  (void)state;
  expect_si("1 uL/min", FC_DIM_FLOW, 1.666667e-11, 1e-6);     /* §9: 1 µL/min = 1.666 667e-11 */
  expect_si("1 \xc2\xb5L/min", FC_DIM_FLOW, 1.666667e-11, 1e-6); /* MICRO SIGN U+00B5 */
  expect_si("1 \xce\xbcL/min", FC_DIM_FLOW, 1.666667e-11, 1e-6); /* GREEK MU U+03BC */
  expect_si("36 mL/h", FC_DIM_FLOW, 1e-8, 1e-12);             /* 36e-6 m3 / 3600 s, exact */
  expect_si("10 uL", FC_DIM_VOLUME, 1e-8, 1e-12);             /* SI prefix, exact */
  expect_si("500 um", FC_DIM_LENGTH, 5e-4, 1e-12);            /* SI prefix, exact */
  expect_si("500 \xc2\xb5m", FC_DIM_LENGTH, 5e-4, 1e-12);     /* SI prefix, exact */
  expect_si("0.01 mm2", FC_DIM_AREA, 1e-8, 1e-12);            /* SI prefix, exact */
  expect_si("  2.5e-3 m  ", FC_DIM_LENGTH, 2.5e-3, 1e-15);    /* blanks trimmed */
  expect_si("2mm", FC_DIM_LENGTH, 2e-3, 1e-15);               /* no blank needed */
}

static void viscosity_field_and_other_units(void **state)
{
  (void)state;
  expect_si("0.72 mPa.s", FC_DIM_VISCOSITY, 7.2e-4, 1e-12);   /* SI prefix, exact */
  expect_si("0.72 mPa s", FC_DIM_VISCOSITY, 7.2e-4, 1e-12);   /* SI prefix, exact */
  expect_si("1 cP", FC_DIM_VISCOSITY, 1e-3, 1e-12);           /* 1 P = 0.1 Pa s (SP 811) */
  expect_si("20 kA/m", FC_DIM_FIELD, 2e4, 1e-15);             /* SI prefix, exact */
  expect_si("300 mT", FC_DIM_FLUX_DENSITY, 0.3, 1e-15);       /* SI prefix, exact */
  expect_si("1.3 T", FC_DIM_FLUX_DENSITY, 1.3, 1e-15);        /* identity */
  expect_si("400 G", FC_DIM_FLUX_DENSITY, 0.04, 1e-12);       /* §9: 1 G = 1e-4 T */
  /* U2: 4 pi Ms = 400 G (cgs) is Ms = 400 Oe-equivalent = 31 830.99 A/m */
  expect_si("400 Oe", FC_DIM_FIELD, 31830.99, 1e-6);
  expect_si("1 Oe", FC_DIM_FIELD, 1000.0 / (4.0 * PI), 1e-12); /* §9: 1000/(4 pi) A/m */
  expect_si("37 degC", FC_DIM_TEMPERATURE, 310.15, 1e-12);   /* ITS-90: 0 degC = 273.15 K */
  expect_si("300 K", FC_DIM_TEMPERATURE, 300.0, 1e-15);
  expect_si("90 deg", FC_DIM_ANGLE, PI / 2.0, 1e-12);       /* 1 deg = pi/180 rad */
  expect_si("60 1/min", FC_DIM_FREQUENCY, 1.0, 1e-12);        /* 60 per 60 s */
  expect_si("72 bpm", FC_DIM_FREQUENCY, 1.2, 1e-12);          /* beats per minute */
  expect_si("30 rpm", FC_DIM_FREQUENCY, 0.5, 1e-12);          /* §8: rpm/60 = rev/s */
  expect_si("4 Hz", FC_DIM_FREQUENCY, 4.0, 1e-15);
  expect_si("250 ms", FC_DIM_TIME, 0.25, 1e-15);
  expect_si("72 mN/m", FC_DIM_TENSION, 0.072, 1e-12);
  expect_si("998 kg/m3", FC_DIM_DENSITY, 998.0, 1e-15);
  expect_si("1 mbar.s/uL", FC_DIM_RESISTANCE, 1e11, 1e-12);   /* 100 Pa s / 1e-9 m3 */
  expect_si("1 uL/mbar", FC_DIM_COMPLIANCE, 1e-11, 1e-12);    /* 1e-9 m3 / 100 Pa */
  expect_si("0.5", FC_DIM_NONE, 0.5, 1e-15);                  /* bare number is dimensionless */
  expect_si("40 %", FC_DIM_NONE, 0.4, 1e-15);                 /* 1 % = 0.01 */
}

static void wrong_dimension_names_path_and_expectation(void **state)
{
  (void)state;
  fc_error err;
  double v = 0;
  fc_error_clear(&err);
  assert_int_equal(fc_units_parse(U, "5 mbar", FC_DIM_LENGTH, &v, "$.elements[2].length", &err),
                   FC_EPARAM);
  assert_string_equal(err.path, "$.elements[2].length");
  assert_string_equal(err.msg, "\"5 mbar\" is a pressure, expected a length (m)");
  assert_int_equal(fc_units_parse(U, "10 uL", FC_DIM_FLOW, &v, "$.q", &err), FC_EPARAM);
  assert_string_equal(err.msg, "\"10 uL\" is a volume, expected a flow rate (m3/s)");
  assert_int_equal(fc_units_parse(U, "37 degC", FC_DIM_PRESSURE, &v, "$.p", &err), FC_EPARAM);
  assert_non_null(strstr(err.msg, "expected a pressure (Pa)"));
}

/* UDUNITS-2 calls reciprocal units convertible; a conductance is not a resistance. */
static void reciprocal_units_are_refused(void **state)
{
  (void)state;
  fc_error err;
  double v = 0, f = 0;
  fc_error_clear(&err);
  assert_int_equal(fc_units_parse(U, "2 s", FC_DIM_FREQUENCY, &v, "$.f", &err), FC_EPARAM);
  assert_string_equal(err.msg, "\"2 s\" is a time, expected a frequency (Hz)");
  assert_int_equal(fc_units_parse(U, "1e-12 m3/(Pa.s)", FC_DIM_RESISTANCE, &v, "$.r", &err),
                   FC_EPARAM);
  assert_non_null(strstr(err.msg, "expected a hydraulic resistance"));
  assert_int_equal(fc_units_out_factor(U, "1/Pa", FC_DIM_PRESSURE, &f, "p unit", &err),
                   FC_EPARAM);
  assert_int_equal(fc_units_convert(U, 1.0, "s", "Hz", &v, &err), FC_EPARAM);
  expect_si("2 1/s", FC_DIM_FREQUENCY, 2.0, 1e-15);           /* the same dimension still works */
}

static void garbage_fails(void **state)
{
  (void)state;
  static const char *const bad[] = {"", "   ", "abc", "5 blorp", "mbar", "5 mbar mbar mbar x",
                                    "nan m", "inf m", "1e400 m", "0x10 m", "5", "- m", NULL};
  for (int i = 0; bad[i]; i++) {
    fc_error err;
    double v = 0;
    fc_error_clear(&err);
    int rc = fc_units_parse(U, bad[i], FC_DIM_LENGTH, &v, "$.elements[0].length", &err);
    if (rc != FC_EPARAM) print_error("\"%s\" was accepted (%g)\n", bad[i], v);
    assert_int_equal(rc, FC_EPARAM);
    assert_string_equal(err.path, "$.elements[0].length");
    assert_true(strlen(err.msg) > 10);
  }
}

static void json_numbers_are_si_strings_parsed_others_refused(void **state)
{
  (void)state;
  fc_error err;
  double v = 0;
  fc_error_clear(&err);
  cJSON *n = cJSON_CreateNumber(0.25), *s = cJSON_CreateString("20 mbar");
  cJSON *b = cJSON_CreateTrue(), *inf = cJSON_CreateNumber(INFINITY), *a = cJSON_CreateArray();
  assert_int_equal(fc_units_json(U, n, FC_DIM_PRESSURE, &v, "$.p", &err), FC_OK);
  assert_true(v == 0.25);
  assert_int_equal(fc_units_json(U, s, FC_DIM_PRESSURE, &v, "$.p", &err), FC_OK);
  assert_true(fabs(v - 2000.0) < 1e-12);
  assert_int_equal(fc_units_json(U, b, FC_DIM_PRESSURE, &v, "$.nodes[1].p", &err), FC_EJSON);
  assert_string_equal(err.path, "$.nodes[1].p");
  assert_non_null(strstr(err.msg, "a number in SI"));
  assert_non_null(strstr(err.msg, "a string such as \"20 mbar\""));
  assert_int_equal(fc_units_json(U, a, FC_DIM_PRESSURE, &v, "$.p", &err), FC_EJSON);
  assert_int_equal(fc_units_json(U, NULL, FC_DIM_PRESSURE, &v, "$.p", &err), FC_EJSON);
  assert_int_equal(fc_units_json(U, inf, FC_DIM_PRESSURE, &v, "$.p", &err), FC_EPARAM);
  cJSON_Delete(n), cJSON_Delete(s), cJSON_Delete(b), cJSON_Delete(inf), cJSON_Delete(a);
}

static void output_factors(void **state)
{
  (void)state;
  fc_error err;
  double f = 0;
  fc_error_clear(&err);
  assert_int_equal(fc_units_out_factor(U, "mbar", FC_DIM_PRESSURE, &f, "p unit", &err), FC_OK);
  assert_true(fabs(f - 0.01) < 1e-15);                        /* 1 Pa = 0.01 mbar exact */
  assert_int_equal(fc_units_out_factor(U, "uL/min", FC_DIM_FLOW, &f, "q unit", &err), FC_OK);
  assert_true(fabs(f / 6e10 - 1.0) < 1e-12);                  /* 1 m3/s = 6e10 uL/min exact */
  assert_int_equal(fc_units_out_factor(U, "mmHg", FC_DIM_PRESSURE, &f, "p unit", &err), FC_OK);
  assert_true(fabs(100.0 * f / 0.750062 - 1.0) < 1e-6);       /* §9: 1 mbar = 0.750 062 mmHg */
  assert_int_equal(fc_units_out_factor(U, "degC", FC_DIM_TEMPERATURE, &f, "T unit", &err),
                   FC_EPARAM);                                  /* offset unit: no factor */
  assert_int_equal(fc_units_out_factor(U, "m", FC_DIM_PRESSURE, &f, "p unit", &err), FC_EPARAM);
  assert_non_null(strstr(err.msg, "p unit"));
  assert_int_equal(fc_units_out_factor(U, "zorg", FC_DIM_PRESSURE, &f, "p unit", &err),
                   FC_EPARAM);
}

static void dimension_names(void **state)
{
  (void)state;
  assert_string_equal(fc_dim_si_name(FC_DIM_FLOW), "m3/s");
  assert_string_equal(fc_dim_name(FC_DIM_PRESSURE), "pressure");
  for (int d = 0; d < FC_DIM_COUNT; d++) {
    assert_true(strlen(fc_dim_name((fc_dim)d)) > 0);
    assert_true(strlen(fc_dim_si_name((fc_dim)d)) > 0);
  }
}

static void open_survives_allocation_failure(void **state)
{
  (void)state;
  fc_units *u = (fc_units *)&u;
  fc_error err;
  fc_alloc_fail_after(0);
  assert_int_equal(fc_units_open(&u, &err), FC_ENOMEM);
  fc_alloc_fail_after(-1);
  assert_null(u);
}

/* The quick table (src/units.c) gives what the UDUNITS-2 database gives, bit for bit: the
 * factor to SI and the output factor from SI of each entry, and the converted value of random
 * quantities in each unit (v * factor against the database's converter applied to v). The
 * database here is the general-purpose library itself, with the table switched off. */
static void quick_units_match_the_database_bit_for_bit(void **state)
{
  (void)state;
  fc_units *V = NULL;
  fc_error err;
  fc_error_clear(&err);
  assert_int_equal(fc_units_open(&V, &err), FC_OK);
  fci_units_set_quick(V, 0);
  const char *text;
  int dim, bad = 0;
  double to, from;
  uint64_t g = 0x9e3779b97f4a7c15ull;
  for (size_t k = 0, n = fci_units_quick(&text, &dim, &to, &from, 0); k < n; k++) {
    fci_units_quick(&text, &dim, &to, &from, k);
    char q[96];
    double a = NAN, b = NAN, f = NAN;
    snprintf(q, sizeof q, "1 %s", text);
    assert_int_equal(fc_units_parse(V, q, (fc_dim)dim, &a, "$.x", &err), FC_OK);
    assert_int_equal(fc_units_out_factor(V, text, (fc_dim)dim, &f, "unit", &err), FC_OK);
    if (memcmp(&a, &to, sizeof a) || memcmp(&f, &from, sizeof f)) {
      print_error("%s: the database gives to_si %.17g, from_si %.17g; the table %.17g, %.17g\n",
                  text, a, f, to, from);
      bad++;
      continue;
    }
    for (int r = 0; r < 2000; r++) { /* log-uniform magnitudes 1e-12 .. 1e12, both signs */
      g ^= g << 13; g ^= g >> 7; g ^= g << 17;
      double v = pow(10.0, -12.0 + 24.0 * (double)(g >> 11) * 0x1p-53) * (g & 1 ? -1 : 1);
      snprintf(q, sizeof q, "%.17g %s", v, text);
      assert_int_equal(fc_units_parse(U, q, (fc_dim)dim, &a, "$.x", &err), FC_OK);
      assert_int_equal(fc_units_parse(V, q, (fc_dim)dim, &b, "$.x", &err), FC_OK);
      if (memcmp(&a, &b, sizeof a)) {
        print_error("%s: %.17g gives %.17g from the table, %.17g from the database\n", text, v, a, b);
        bad++;
        break;
      }
    }
  }
  fc_units_free(V);
  assert_int_equal(bad, 0);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(pressure_units_match_nist_sp811),
    cmocka_unit_test(flow_and_volume_units),
    cmocka_unit_test(viscosity_field_and_other_units),
    cmocka_unit_test(wrong_dimension_names_path_and_expectation),
    cmocka_unit_test(reciprocal_units_are_refused),
    cmocka_unit_test(garbage_fails),
    cmocka_unit_test(json_numbers_are_si_strings_parsed_others_refused),
    cmocka_unit_test(output_factors),
    cmocka_unit_test(dimension_names),
    cmocka_unit_test(open_survives_allocation_failure),
    cmocka_unit_test(quick_units_match_the_database_bit_for_bit),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
