/* ferrocirc — fast number formatting for the time-series CSV (src/fmt_g.c). Internal. */
#ifndef FERROCIRC_FMT_G_H
#define FERROCIRC_FMT_G_H

/* Longest text fci_fmt_g9 writes, with its terminating NUL ("-1.23456789e-308"). */
#define FCI_FMT_G9_MAX 32

/* Writes v into buf exactly as snprintf(buf, FCI_FMT_G9_MAX, "%.9g", v) does in the C locale
 * (correctly rounded, ties to even, the same choice of fixed or exponent form, trailing zeros
 * removed), NUL-terminated; returns the length. buf holds at least FCI_FMT_G9_MAX bytes. */
int fci_fmt_g9(char *buf, double v);

#endif
