/* ferrocirc — fast number formatting: the time-series CSV (src/fmt_g.c) and the summary JSON
 * (src/fmt_short.c). Internal. */
#ifndef FERROCIRC_FMT_G_H
#define FERROCIRC_FMT_G_H

#include <stdint.h>

/* Longest text fci_fmt_g9 writes, with its terminating NUL ("-1.23456789e-308"). */
#define FCI_FMT_G9_MAX 32

/* Writes v into buf exactly as snprintf(buf, FCI_FMT_G9_MAX, "%.9g", v) does in the C locale
 * (correctly rounded, ties to even, the same choice of fixed or exponent form, trailing zeros
 * removed), NUL-terminated; returns the length. buf holds at least FCI_FMT_G9_MAX bytes. */
int fci_fmt_g9(char *buf, double v);

/* The n numbers v[0..n-1], each after a comma, as fci_fmt_g9 writes them, from o on; returns
 * the new end (not NUL-terminated). o has room for n * FCI_FMT_G9_MAX bytes. Faster than n
 * calls: the digits of many numbers are found at once (src/fmt_g.c). */
char *fci_fmt_g9_list(char *o, const double *v, int n);

/* The P significant digits of c (10^(P-1) <= c < 10^P, P <= 17) with decimal exponent X,
 * laid out as "%.Pg" does (fixed or exponent form, trailing zeros removed); returns length. */
int fci_fmt_layout(char *buf, int neg, uint64_t c, int P, int X);

/* Longest text fci_fmt_shortest writes, with its NUL ("-1.2345678901234567e-308"). */
#define FCI_FMT_SHORT_MAX 32

/* Writes v into buf (FCI_FMT_SHORT_MAX bytes) as the first of snprintf "%.15g", "%.16g",
 * "%.17g" (C locale) that strtod reads back as v, NUL-terminated; returns the length.
 * fci_fmt_shortest_slow is that loop itself (src/fmt_short.c). */
int fci_fmt_shortest(char *buf, double v);
int fci_fmt_shortest_slow(char *buf, double v);

#endif
