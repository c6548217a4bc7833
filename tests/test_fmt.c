/* ferrocirc — tests of the "%.9g" formatter (src/fmt_g.c) against the C library's own
 * snprintf("%.9g") (glibc, correctly rounded: the reference). Every value must give the same
 * bytes, and the text must read back (strtod) to the value snprintf's text reads back to. */
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

static uint64_t rng = 0x9e3779b97f4a7c15u;

static uint64_t next(void) { return test_rng_next(&rng); }

static long mismatches;

static void check(double v)
{
  char a[FCI_FMT_G9_MAX], b[64];
  int na = fci_fmt_g9(a, v);
  int nb = snprintf(b, sizeof b, "%.9g", v);
  if (na != nb || strcmp(a, b) != 0) {
    if (mismatches++ < 10) print_error("%a: fmt \"%s\", printf \"%s\"\n", v, a, b);
    return;
  }
  if (isfinite(v) && strtod(a, NULL) != strtod(b, NULL)) mismatches++;
}

static void from_bits(uint64_t u)
{
  double v;
  memcpy(&v, &u, sizeof v);
  check(v);
}

static void test_special_values(void **state)
{
  (void)state;
  mismatches = 0;
  const double v[] = {0.0, -0.0, 1.0, -1.0, 0.5, 0.1, 1e9, 1e8, 999999999.0, 999999999.5,
                      999999998.5, 1000000005.0, 1234567885.0, 1234567895.0, 9.999999995e-5,
                      1e-4, 9.99999999e-5, 1e-5, 123456789.0, 1e22, 1e23, 5e-324, -5e-324,
                      DBL_MIN, DBL_MAX, -DBL_MAX, DBL_EPSILON, 1.0 / 3, 2.0 / 3, 100.0,
                      HUGE_VAL, -HUGE_VAL, NAN, 6.02214076e23, 1.380649e-23};
  for (size_t i = 0; i < sizeof v / sizeof v[0]; i++) check(v[i]);
  for (int e = -330; e <= 310; e++) {
    double p = pow(10.0, e);
    check(p);
    check(nextafter(p, 0));
    check(nextafter(p, INFINITY));
  }
  assert_int_equal(mismatches, 0);
}

/* Uniform bit patterns: every exponent, subnormals, NaNs and infinities alike. */
static void test_random_bit_patterns(void **state)
{
  (void)state;
  mismatches = 0;
  for (long i = 0; i < 2000000; i++) from_bits(next());
  for (long i = 0; i < 200000; i++) from_bits(next() >> 12); /* subnormals */
  assert_int_equal(mismatches, 0);
}

/* Values of the size a CSV holds (1e-12 .. 1e12), log-uniform. */
static void test_random_report_range(void **state)
{
  (void)state;
  mismatches = 0;
  for (long i = 0; i < 2000000; i++) {
    double u = (double)(next() >> 11) / 9007199254740992.0;
    double v = pow(10.0, -12 + 24 * u);
    check(next() & 1 ? v : -v);
  }
  assert_int_equal(mismatches, 0);
}

/* Near-ties: the double nearest to a 10-digit decimal ending in 5, and its neighbours, where
 * the 9-digit rounding is decided by the last bits (the formatter must defer to snprintf). */
/* Nine significant digits 10^8 + n, for n on a stride of 73 through [0, 10^8) and for every n
 * with one to seven trailing zeros on a coarser grid: as integers (every digit printed) and
 * divided by 10^8 (1.nnnnnnnn: the trailing zeros dropped), so that each digit position and
 * each count of trailing zeros is met. */
static void nine_digits(uint32_t n)
{
  check(1e8 + n);
  check((1e8 + n) / 1e8);
}

static void test_nine_significant_digits(void **state)
{
  (void)state;
  mismatches = 0;
  for (uint32_t n = 0; n < 100000000u; n += 73) nine_digits(n);
  for (uint32_t z = 10; z <= 10000000u; z *= 10)
    for (uint32_t n = 0; n < 100000000u; n += z * 9973u % 100000000u + z) nine_digits(n);
  for (uint32_t n = 0; n < 1000; n++) nine_digits(n * 99999u);
  assert_int_equal(mismatches, 0);
}

/* fci_fmt_g9_list gives the bytes of fci_fmt_g9 (itself checked above against snprintf) for
 * every number of a list, commas between: lists of every length around its chunk of 64, of
 * values mixing the special cases that its first pass only flags (zeros of both signs,
 * subnormals, infinities, NaN, exponents beyond 10^+-22, ties, values that round up to the
 * next power of ten) with ordinary ones. */
static void test_list_equals_single_numbers(void **state)
{
  (void)state;
  static const double special[] = {0.0, -0.0, 5e-324, -2.2250738585072014e-308, HUGE_VAL,
                                   -HUGE_VAL, NAN, 1e-30, -3e25, 999999999.5, 9.9999999995e-5,
                                   0.5, 1e8, 1e9, 123456788.5, 1.0 / 3, 12345678.75,
                                   -1234567.875 /* exact ties of the fast path */};
  double v[300];
  char got[300 * FCI_FMT_G9_MAX], want[300 * FCI_FMT_G9_MAX], one[FCI_FMT_G9_MAX];
  long bad = 0;
  for (int rep = 0; rep < 2000; rep++) {
    int n = 1 + (int)(next() % 300);
    for (int i = 0; i < n; i++) {
      uint64_t u = next();
      if (u % 5 == 0) v[i] = special[(u >> 8) % (sizeof special / sizeof special[0])];
      else if (u % 5 == 1) memcpy(&v[i], &u, sizeof v[i]); /* any bit pattern */
      else v[i] = ((u >> 9) & 1 ? -1 : 1) * pow(10.0, -6.0 + 12.0 * (double)(u >> 11) * 0x1p-53);
    }
    char *w = want;
    for (int i = 0; i < n; i++) {
      *w++ = ',';
      int len = fci_fmt_g9(one, v[i]);
      memcpy(w, one, (size_t)len);
      w += len;
    }
    char *e = fci_fmt_g9_list(got, v, n);
    if (e - got != w - want || memcmp(got, want, (size_t)(w - want)) != 0) {
      if (bad++ < 3) print_error("list of %d numbers differs from single numbers\n", n);
    }
  }
  assert_int_equal(bad, 0);
}

static void test_near_ties(void **state)
{
  (void)state;
  mismatches = 0;
  for (long i = 0; i < 300000; i++) {
    long long m = 1000000000LL + (long long)(next() % 9000000000ULL);
    m = m / 10 * 10 + 5;
    int e = (int)(next() % 60) - 30;
    char txt[64];
    snprintf(txt, sizeof txt, "%llde%d", m, e);
    double v = strtod(txt, NULL);
    check(v);
    check(nextafter(v, 0));
    check(nextafter(v, INFINITY));
  }
  /* integers up to 2^53 are exact: true ties, rounded to even */
  for (long long m = 1000000005LL; m < 1000000005LL + 2000000; m += 10) check((double)m);
  assert_int_equal(mismatches, 0);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(test_special_values),
    cmocka_unit_test(test_random_bit_patterns),
    cmocka_unit_test(test_random_report_range),
    cmocka_unit_test(test_nine_significant_digits),
    cmocka_unit_test(test_list_equals_single_numbers),
    cmocka_unit_test(test_near_ties),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
