/* ferrocirc — tests of the shortest round-trip formatter of the summary JSON (src/fmt_short.c)
 * against the definition it must reproduce, computed here with the C library (glibc's
 * correctly rounded snprintf and strtod: the reference): the first of "%.15g", "%.16g",
 * "%.17g" that reads back as the value. Every value must give the same bytes. */
#include <float.h>
#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "fmt_g.h"
#include "test_rng.h"

static uint64_t rng = 0xda3e39cb94b95bdbu;

static uint64_t next(void) { return test_rng_next(&rng); }

static long mismatches, checked;

static void reference(char *buf, double v)
{
  for (int prec = 15; prec <= 17; prec++) {
    snprintf(buf, 64, "%.*g", prec, v);
    if (strtod(buf, NULL) == v) return;
  }
}

static void check(double v)
{
  char a[FCI_FMT_SHORT_MAX], b[64];
  int na = fci_fmt_shortest(a, v);
  reference(b, v);
  checked++;
  if (na != (int)strlen(b) || strcmp(a, b) != 0)
    if (mismatches++ < 10) print_error("%a: fast \"%s\", reference \"%s\"\n", v, a, b);
}

static void check3(double v)
{
  check(v);
  check(nextafter(v, 0));
  check(nextafter(v, INFINITY));
}

static void special_values_and_decades_match_reference(void **state)
{
  (void)state;
  mismatches = 0;
  const double v[] = {0.0, -0.0, 1.0, -1.0, 0.5, 0.1, 0.2, 0.3, 1.0 / 3, 2.0 / 3, 1e15, 1e16,
                      1e17, 9007199254740992.0, 9007199254740993.0, 123456789012345678.0,
                      1e22, 1e23, 5e-324, DBL_MIN, DBL_MAX, -DBL_MAX, DBL_EPSILON,
                      HUGE_VAL, -HUGE_VAL, NAN, 6.02214076e23, 1.380649e-23, 2e-16, 1.5e-300,
                      0.83333333333333337, 9.7990442600323e-10};
  for (size_t i = 0; i < sizeof v / sizeof v[0]; i++) check(v[i]);
  for (int e = -330; e <= 310; e++) check3(pow(10.0, e));
  /* powers of two: the gap below is half the gap above */
  for (int e = -1074; e <= 1023; e++) check3(ldexp(1.0, e));
  assert_int_equal(mismatches, 0);
}

/* Uniform bit patterns: every exponent, subnormals, NaNs and infinities alike. */
static void random_bit_patterns_match_reference(void **state)
{
  (void)state;
  mismatches = 0;
  for (long i = 0; i < 500000; i++) {
    uint64_t u = next();
    double v;
    memcpy(&v, &u, sizeof v);
    check(v);
  }
  assert_int_equal(mismatches, 0);
}

/* The sizes a summary holds in SI units (volumes 1e-18 m^3 .. pressures 1e6 Pa), log-uniform. */
static void random_summary_range_matches_reference(void **state)
{
  (void)state;
  mismatches = 0;
  for (long i = 0; i < 500000; i++) {
    double u = (double)(next() >> 11) / 9007199254740992.0;
    double v = pow(10.0, -20 + 28 * u);
    check(next() & 1 ? v : -v);
  }
  assert_int_equal(mismatches, 0);
}

/* Short decimals (what a user types: 0.1, 2.5e-3, 1e-14) and the doubles next to them, and the
 * doubles nearest to 16- and 17-digit decimals ending in 5, where the rounding of the printed
 * digits or the read-back is decided by the last bits. */
static void short_decimals_and_near_ties_match_reference(void **state)
{
  (void)state;
  mismatches = 0;
  char txt[64];
  for (long i = 0; i < 200000; i++) {
    int nd = 1 + (int)(next() % 6), e = (int)(next() % 40) - 25;
    long long m = 1 + (long long)(next() % 999999ULL);
    while (m >= 10 && nd-- > 0) m /= 10;
    snprintf(txt, sizeof txt, "%llde%d", m, e);
    check3(strtod(txt, NULL));
  }
  for (int digits = 16; digits <= 18; digits++)
    for (long i = 0; i < 150000; i++) {
      unsigned long long lo = 1, m;
      for (int k = 1; k < digits; k++) lo *= 10;
      m = lo + next() % (9 * lo);
      m = m / 10 * 10 + 5;
      snprintf(txt, sizeof txt, "%llue%d", m, (int)(next() % 60) - 40);
      check3(strtod(txt, NULL));
    }
  assert_int_equal(mismatches, 0);
  print_message("fmt_short: %ld values compared with snprintf/strtod\n", checked);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(special_values_and_decades_match_reference),
    cmocka_unit_test(random_bit_patterns_match_reference),
    cmocka_unit_test(random_summary_range_matches_reference),
    cmocka_unit_test(short_decimals_and_near_ties_match_reference),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
