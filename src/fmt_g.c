/* ferrocirc — "%.9g" without printf, for the time-series CSV.
 *
 * Why: glibc's printf converts through its general multi-precision path, about 4-5 M numbers
 * per second here; a CSV of 10^6 rows x 100 columns then takes longer to write than to
 * simulate. The output must stay byte for byte what "%.9g" gives (the CSV format, and the
 * tests that compare CSV bytes, rely on it), so this is the same conversion, done fast where
 * it is provably exact and by snprintf where it is not.
 *
 * Method. For finite v != 0 with |v| = d, let X = floor(log10 d) and s = d 10^(8 - X), so
 * 10^8 <= s < 10^9 and "%.9g" prints round-half-even(s) as 9 digits with exponent X (X + 1 if
 * s rounds up to 10^9). For |8 - X| <= 22, 10^(8-X) is exact in double and s = d * 10^k or
 * d / 10^-k is one correctly rounded operation: error below 2^-53 x 10^9 = 1.2e-7. Otherwise s
 * is formed in x87 extended precision (64-bit significand) from a product of at most nine
 * powers 10^(2^i), each a correctly rounded literal (relative error below 20 x 2^-64), and
 * rounded to double: error below 1.3e-7. In the one-operation case the rounding is decided
 * exactly: the computed s is within half an ulp of the true one, and its fraction is a multiple
 * of that ulp, so a computed fraction other than 1/2 lies on the same side of 1/2 as the true
 * one; a computed fraction of exactly 1/2 is decided by the sign of the operation's exact error,
 * fma(d, 10^k, -s) or the division's remainder fma(-s, 10^-k, d) (both exact: Boldo and
 * Muller, "Exact and approximated error of the FMA", IEEE Trans. Computers 60(2), 2011), a
 * zero error being a true tie, rounded to even. In the extended case, whenever the fraction of
 * the computed s is within 1e-6 of 1/2, snprintf does the conversion instead, so the rounding
 * is always the exact one. Non-finite values, zero, and |8 - X| > 22 on platforms
 * without a 64-bit long double significand go to snprintf as well.
 * The %g rule (C11 7.21.6.1): exponent form if X < -4 or X >= precision (9), else fixed; then
 * trailing zeros, and a trailing decimal point, are removed; the exponent has at least two
 * digits. tests/test_fmt.c compares with snprintf on millions of values. */
#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include "fmt_g.h"

static int slow(char *buf, double v)
{
  return snprintf(buf, FCI_FMT_G9_MAX, "%.9g", v);
}

/* 10^k, k = 0..22: exact in double. */
static const double p10[23] = {1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11,
                               1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};

#if LDBL_MANT_DIG >= 64
/* 10^(2^i), i = 0..8; literals are rounded correctly by the compiler. */
static const long double pow2k[9] = {1e1L, 1e2L, 1e4L, 1e8L, 1e16L, 1e32L, 1e64L, 1e128L, 1e256L};
#endif

/* s = d 10^k (s < 10^9 where it matters) and whether it could be formed: in double when 10^k
 * is exact (one rounding, error below 2^-53 s <= 1.2e-7), else in extended precision and then
 * rounded to double (error below 1.1e-9 + 1.2e-7), else not (returns 0). */
static int scale(double d, int k, double *s)
{
  if (k >= 0 && k <= 22) { *s = d * p10[k]; return 1; }
  if (k < 0 && k >= -22) { *s = d / p10[-k]; return 1; }
#if LDBL_MANT_DIG >= 64
  long double p = 1.0L;
  for (int i = 0, m = k < 0 ? -k : k; m; i++, m >>= 1)
    if (m & 1) p *= pow2k[i];
  long double x = k >= 0 ? (long double)d * p : (long double)d / p;
  *s = (double)x; /* one more rounding: below 1.2e-7 + 1.1e-9 in all */
  return 2;
#else
  (void)s;
  return 0;
#endif
}

/* Writes the P digits of c (10^(P-1) <= c < 10^P, P <= 17) with decimal exponent X, as
 * "%.Pg" lays them out (shared with src/fmt_short.c). */
int fci_fmt_layout(char *buf, int neg, uint64_t c, int P, int X)
{
  char dig[17];
  for (int i = P - 1; i >= 0; i--) { dig[i] = (char)('0' + c % 10); c /= 10; }
  int nd = P;
  while (nd > 1 && dig[nd - 1] == '0') nd--;
  char *o = buf;
  if (neg) *o++ = '-';
  if (X < -4 || X >= P) {
    *o++ = dig[0];
    if (nd > 1) {
      *o++ = '.';
      for (int i = 1; i < nd; i++) *o++ = dig[i];
    }
    *o++ = 'e';
    *o++ = X < 0 ? '-' : '+';
    int ax = X < 0 ? -X : X;
    if (ax >= 100) *o++ = (char)('0' + ax / 100);
    *o++ = (char)('0' + ax / 10 % 10);
    *o++ = (char)('0' + ax % 10);
  } else if (X >= 0) {
    for (int i = 0; i <= X; i++) *o++ = dig[i];
    if (nd > X + 1) {
      *o++ = '.';
      for (int i = X + 1; i < nd; i++) *o++ = dig[i];
    }
  } else {
    *o++ = '0';
    *o++ = '.';
    for (int i = 0; i < -X - 1; i++) *o++ = '0';
    for (int i = 0; i < nd; i++) *o++ = dig[i];
  }
  *o = '\0';
  return (int)(o - buf);
}

/* "00", "01", ..., "99": two digits per division by 100 instead of one per division by 10. */
static const char pairs[201] =
    "00010203040506070809101112131415161718192021222324252627282930313233343536373839"
    "40414243444546474849505152535455565758596061626364656667686970717273747576777879"
    "8081828384858687888990919293949596979899";

/* fci_fmt_layout for P = 9, the CSV's every number: digits by pairs, and every piece copied
 * with a fixed length (16 bytes, or the 8 of "0.000000") and the end set after it, so there
 * is no variable-length copy and no loop; the bytes past the end are scratch that the next
 * number overwrites (buf holds FCI_FMT_G9_MAX = 32 bytes: at most 2 + 9 + 16 are touched).
 * Same bytes as fci_fmt_layout (tests/test_fmt.c). */
static int layout9(char *buf, int neg, uint32_t r, int X)
{
  char d[32];
  uint32_t hi = r / 100000000u, lo = r % 100000000u, a = lo / 10000u, b = lo % 10000u;
  d[0] = (char)('0' + hi);
  memcpy(d + 1, pairs + 2 * (a / 100u), 2);
  memcpy(d + 3, pairs + 2 * (a % 100u), 2);
  memcpy(d + 5, pairs + 2 * (b / 100u), 2);
  memcpy(d + 7, pairs + 2 * (b % 100u), 2);
  memset(d + 9, '0', 23);
  int nd = lo == 0 ? 1 : b == 0 ? 5 : 9; /* significant digits, trailing zeros dropped */
  while (d[nd - 1] == '0') nd--;
  char *o = buf;
  *o = '-';
  o += neg;
  if (X >= 0 && X < 9) { /* ddd.ddd: the digits, then the fraction again one place on */
    memcpy(o, d, 16);
    memcpy(o + X + 2, d + X + 1, 16);
    o[X + 1] = '.';
    o += nd > X + 1 ? nd + 1 : X + 1;
  } else if (X < 0 && X >= -4) { /* 0.000ddd */
    memcpy(o, "0.000000", 8);
    memcpy(o + 1 - X, d, 16);
    o += 1 - X + nd;
  } else { /* d.ddde+XX */
    o[0] = d[0];
    o[1] = '.';
    memcpy(o + 2, d + 1, 16);
    o += nd > 1 ? nd + 1 : 1;
    *o++ = 'e';
    *o++ = X < 0 ? '-' : '+';
    int ax = X < 0 ? -X : X;
    if (ax >= 100) { *o++ = (char)('0' + ax / 100); ax %= 100; }
    memcpy(o, pairs + 2 * ax, 2);
    o += 2;
  }
  *o = '\0';
  return (int)(o - buf);
}

/* fci_fmt_g9 for every value, with a branch wherever the value asks for one: zeros, non-finite
 * values, scalings beyond exact powers of ten, ties (see the top). */
static int g9_general(char *buf, double v)
{
  if (v == 0) { /* "0" or "-0", as printf writes them */
    int neg = signbit(v) != 0;
    memcpy(buf, neg ? "-0" : "0", (size_t)neg + 2);
    return 1 + neg;
  }
  if (!isfinite(v)) return slow(buf, v);
  int neg = signbit(v) != 0, e2;
  double d = fabs(v), s;
  uint64_t bits;
  memcpy(&bits, &d, sizeof bits);
  e2 = (int)(bits >> 52) - 1022; /* d in [2^(e2-1), 2^e2), as frexp gives */
  if (e2 == -1022) (void)frexp(d, &e2); /* subnormal */
  /* floor((e2 - 1) log10 2) with log10 2 ~ 1233/4096: X or one off either way */
  int X = (e2 - 1) * 1233;
  X = X >= 0 ? X / 4096 : -((-X + 4095) / 4096);
  if (!scale(d, 8 - X, &s)) return slow(buf, v);
  if (s >= 1e9) { X++; if (!scale(d, 8 - X, &s)) return slow(buf, v); }
  if (s < 1e8 - 0.5) { X--; if (!scale(d, 8 - X, &s)) return slow(buf, v); }
  if (!(s >= 1e8 - 0.5 && s < 1e9)) return slow(buf, v);
  uint32_t fl = (uint32_t)s;
  double frac = s - (double)fl; /* exact: s < 2^30 */
  uint32_t r = fl + (frac > 0.5);
  int k = 8 - X;
  if (k < -22 || k > 22) {
    if (fabs(frac - 0.5) < 1e-6) return slow(buf, v);
  } else if (frac == 0.5) {
    double e = k >= 0 ? fma(d, p10[k], -s) : fma(-s, p10[-k], d); /* true s - s, in sign */
    r = fl + (e > 0 || (e == 0 && (fl & 1)));
  }
  if (r >= 1000000000u) { r = 100000000u; X++; }
  return layout9(buf, neg, r, X);
}

/* The nine digits r and the exponent X of v as g9_general finds them, without a branch that
 * depends on the value: both candidate scalings are formed and one is selected. Returns 1,
 * leaving r and X meaningless, for whatever g9_general treats specially (zero, subnormal,
 * infinite or NaN, 10^k not exact, an estimate of X off the other way, a fraction of exactly
 * 1/2); those are rare in a CSV. */
static inline int digits_fast(double v, uint32_t *r, int *xp)
{
  uint64_t bits, b1, b0;
  double d = fabs(v), s1, s0, s;
  memcpy(&bits, &v, sizeof bits);
  int e = (int)(bits >> 52 & 0x7ff);
  int X = (e - 1023) * 1233 >> 12; /* floor((e2 - 1) log10 2) as in g9_general (arithmetic shift) */
  int k = 8 - X, kc = k < 1 ? 1 : k > 22 ? 22 : k;
  s1 = d * p10[kc];
  s0 = d * p10[kc - 1];
  uint64_t up = s1 >= 1e9;
  memcpy(&b1, &s1, 8);
  memcpy(&b0, &s0, 8);
  b1 ^= (b1 ^ b0) & (0 - up);
  memcpy(&s, &b1, 8);
  X += (int)up;
  uint32_t fl = (uint32_t)(s < 1e9 ? s : 0); /* in range whatever s is */
  double frac = s - (double)fl;
  uint32_t q = fl + (frac > 0.5);
  uint32_t carry = q >= 1000000000u;
  *r = carry ? 100000000u : q;
  *xp = X + (int)carry;
  return (e == 0) | (e == 0x7ff) | (k != kc) | !(s >= 1e8 - 0.5) | !(s < 1e9) | (frac == 0.5);
}

int fci_fmt_g9(char *buf, double v)
{
  uint32_t r;
  int X;
  return digits_fast(v, &r, &X) ? g9_general(buf, v) : layout9(buf, signbit(v) != 0, r, X);
}

/* A list of numbers, in two passes over chunks of it. The first finds each number's digits
 * and exponent (digits_fast) and only flags the rare ones it leaves; its iterations are
 * independent, so the processor overlaps many of them instead of waiting out each number's
 * chain of dependent operations (about 40 cycles). The second pass lays the digits out, and
 * hands the flagged numbers to g9_general. The bytes are fci_fmt_g9's (tests/test_fmt.c). */
enum { CHUNK = 64 };

char *fci_fmt_g9_list(char *o, const double *v, int n)
{
  uint32_t r[CHUNK];
  int x[CHUNK];
  unsigned char neg[CHUNK], odd[CHUNK];
  for (int c0 = 0; c0 < n; c0 += CHUNK) {
    int m = n - c0 < CHUNK ? n - c0 : CHUNK;
    for (int i = 0; i < m; i++) {
      odd[i] = (unsigned char)digits_fast(v[c0 + i], &r[i], &x[i]);
      neg[i] = (unsigned char)(signbit(v[c0 + i]) != 0);
    }
    for (int i = 0; i < m; i++) {
      *o++ = ',';
      o += odd[i] ? g9_general(o, v[c0 + i]) : layout9(o, neg[i], r[i], x[i]);
    }
  }
  return o;
}
