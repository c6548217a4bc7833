/* ferrocirc — shortest round-trip number text for the summary JSON, without printf.
 *
 * Why: the summary of a 458 754-element network holds some 5 million numbers; choosing the
 * shortest of "%.15g", "%.16g", "%.17g" that reads back exactly took up to three snprintf and
 * three strtod calls each (about 6000 instructions: 7 s of a 28 s run, docs/performance.md).
 * The text must stay exactly what that loop gives (tests/test_fmt.c compares the two), so this
 * is the same choice made with one scaled value, and the loop itself wherever the choice cannot
 * be decided with certainty.
 *
 * Method. For finite v != 0, |v| = d = m 2^q with m < 2^53, let X = floor(log10 d) and
 * S = d 10^(16 - X), so 10^16 <= S < 10^17. S is formed in x87 extended precision (64-bit
 * significand) by multiplying or dividing by exact powers 10^j, j <= 27 (5^27 < 2^64), one
 * rounding each: relative error below r 2^-64 after r of them, i.e. below r x 0.0055 in units
 * of S. The decimal that "%.Pg" prints is C_P = round-half-even(S / 10^(17-P)) 10^(17-P) (in
 * units of S), decided unless S / 10^(17-P) lies within the error of a half-integer. It reads
 * back as v (round to nearest, ties to even; C11 7.22.1.3 with IEEE 754 arithmetic) iff it lies
 * inside v's rounding interval: C_P - S in (-h_lo, h_hi), h = half the gap to the neighbour in
 * that direction (the gap below a power of two is half as wide); decided unless C_P - S lies
 * within the error of an end point (where ties-to-even on m would decide). The shortest P of
 * 15, 16, 17 that reads back is taken (17 always does: DBL_DECIMAL_DIG, C11 5.2.4.2.2), and
 * laid out as "%.Pg" does (C11 7.21.6.1: exponent form if X < -4 or X >= P; trailing zeros
 * and a trailing point removed; at least two exponent digits). Zero, non-finite and subnormal
 * values, and any undecided case, take the snprintf/strtod loop. */
#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "fmt_g.h"

int fci_fmt_shortest_slow(char *buf, double v)
{
  int n = 0;
  for (int prec = 15; prec <= 17; prec++) {
    n = snprintf(buf, FCI_FMT_SHORT_MAX, "%.*g", prec, v);
    if (prec == 17 || strtod(buf, NULL) == v) break;
  }
  return n;
}

#if LDBL_MANT_DIG >= 64

/* 10^j, j = 0..27: exact in a 64-bit significand (10^j = 2^j 5^j, 5^27 < 2^64), so the
 * literals are the values themselves. */
static const long double p10l[28] = {
  1e0L,  1e1L,  1e2L,  1e3L,  1e4L,  1e5L,  1e6L,  1e7L,  1e8L,  1e9L,  1e10L, 1e11L, 1e12L, 1e13L,
  1e14L, 1e15L, 1e16L, 1e17L, 1e18L, 1e19L, 1e20L, 1e21L, 1e22L, 1e23L, 1e24L, 1e25L, 1e26L, 1e27L};

/* x 10^k in steps of exact powers; *r counts the roundings. */
static long double scale10(long double x, int k, int *r)
{
  while (k > 0) { int j = k > 27 ? 27 : k; x *= p10l[j]; k -= j; ++*r; }
  while (k < 0) { int j = -k > 27 ? 27 : -k; x /= p10l[j]; k += j; ++*r; }
  return x;
}

int fci_fmt_shortest(char *buf, double v)
{
  if (!isfinite(v) || v == 0 || fabs(v) < DBL_MIN) return fci_fmt_shortest_slow(buf, v);
  int neg = signbit(v) != 0;
  double d = fabs(v);
  uint64_t bits;
  memcpy(&bits, &d, sizeof bits);
  int e2 = (int)(bits >> 52) - 1022; /* d in [2^(e2-1), 2^e2) */
  uint64_t m = (bits & ((1ull << 52) - 1)) | (1ull << 52);
  /* floor((e2 - 1) log10 2), log10 2 ~ 1233/4096: X or one below */
  int X = (e2 - 1) * 1233;
  X = X >= 0 ? X / 4096 : -((-X + 4095) / 4096);
  int r = 0;
  long double S = scale10((long double)d, 16 - X, &r);
  if (S >= 1e17L) { X++; r = 0; S = scale10((long double)d, 16 - X, &r); }
  if (S < 1e16L) { X--; r = 0; S = scale10((long double)d, 16 - X, &r); }
  long double E = (long double)(r + 1) * 0.0055L; /* bound on |S - exact|, units of S */
  /* within the error of a decade's end, X itself is undecided */
  if (!(S >= 1e16L + E && S < 1e17L - E)) return fci_fmt_shortest_slow(buf, v);
  /* Half-gaps to the neighbours, in units of S: ulp(d) = 2^(e2 - 53) = d / m, so S / m. */
  long double ulp = S / (long double)m;
  long double h_hi = 0.5L * ulp, h_lo = m == (1ull << 52) ? 0.25L * ulp : 0.5L * ulp;
  int64_t f17 = (int64_t)S;                 /* S < 10^17 < 2^63; the one conversion */
  long double r17 = S - (long double)f17; /* exact: the fraction of S */
  static const int64_t units[3] = {100, 10, 1};
  for (int P = 15; P <= 17; P++) {
    int64_t unit = units[P - 15];
    /* S / unit = fl + frac, the remainder formed exactly before the one division */
    int64_t fl = f17 / unit;
    long double frac = ((long double)(f17 - fl * unit) + r17) / (long double)unit;
    long double tol = E / (long double)unit + 1e-12L;
    if (fabsl(frac - 0.5L) <= tol) return fci_fmt_shortest_slow(buf, v);
    uint64_t c = (uint64_t)fl + (frac > 0.5L);
    /* Does c 10^(17-P) read back as v? */
    long double diff = (long double)(c * (uint64_t)unit) - S;
    /* the end points themselves (where ties-to-even would decide) fall in this guard band */
    if (fabsl(diff - h_hi) <= 2 * E || fabsl(diff + h_lo) <= 2 * E)
      return fci_fmt_shortest_slow(buf, v);
    int inside = diff < h_hi && diff > -h_lo;
    if (!inside && P < 17) continue;
    if (!inside) return fci_fmt_shortest_slow(buf, v); /* cannot happen: 17 digits suffice */
    uint64_t top = 1;
    for (int i = 0; i < P; i++) top *= 10;
    int Xp = X;
    if (c >= top) { c /= 10; Xp++; } /* rounded up to 10^P: one more decade */
    return fci_fmt_layout(buf, neg, c, P, Xp);
  }
  return fci_fmt_shortest_slow(buf, v);
}

#else

int fci_fmt_shortest(char *buf, double v) { return fci_fmt_shortest_slow(buf, v); }

#endif
