/* ferrocirc — benchmark of the CSV number formatter (src/fmt_g.c) against snprintf("%.9g").
 * Not a test: it prints nanoseconds per number for values spread like a CSV's (pressures in
 * mbar, flows in uL/min: log-uniform 1e-3..1e3, both signs, and some exact zeros), and a
 * checksum of the bytes so that the work cannot be optimised away; the same for
 * fci_fmt_g9_list, a row of numbers at a time (the CSV writer's call). docs/performance.md.
 * Usage: bench_fmt [N]; FMT_VALUES=FILE reads the values from a file of raw doubles. */
#define _POSIX_C_SOURCE 200809L
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <math.h>

#include "fmt_g.h"

static double now(void)
{
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return ts.tv_sec + 1e-9 * ts.tv_nsec;
}

enum { ROW = 100 }; /* numbers per call of fci_fmt_g9_list, about a CSV row */

int main(int argc, char **argv)
{
  long n = argc > 1 ? atol(argv[1]) : 10000000L;
  double *v = malloc((size_t)n * sizeof *v);
  if (!v) return 1;
  uint64_t s = 0x9e3779b97f4a7c15u;
  /* FMT_VALUES=FILE: the values are the raw little-endian doubles of FILE (at most n), e.g. a
   * CSV's numbers, instead of the synthetic spread */
  const char *vals = getenv("FMT_VALUES");
  FILE *vf = vals ? fopen(vals, "rb") : NULL;
  if (vals && !vf) { perror(vals); return 1; }
  if (vf) { n = (long)fread(v, sizeof *v, (size_t)n, vf); fclose(vf); }
  for (long i = 0; !vf && i < n; i++) {
    s ^= s << 13; s ^= s >> 7; s ^= s << 17; /* xorshift64 */
    double u = (double)(s >> 11) / 9007199254740992.0;
    v[i] = (i % 50 == 0) ? 0.0 : ((s & 1) ? -1 : 1) * pow(10.0, -3 + 6 * u);
  }
  char buf[64], *row = malloc(ROW * FCI_FMT_G9_MAX);
  if (!row) return 1;
  unsigned long sum = 0, sum2 = 0;
  double t0 = now();
  for (long i = 0; i < n; i++) sum += (unsigned)fci_fmt_g9(buf, v[i]) + (unsigned char)buf[1];
  double t1 = now();
  for (long i = 0; i + ROW <= n; i += ROW) {
    char *e = fci_fmt_g9_list(row, v + i, ROW);
    sum2 += (unsigned long)(e - row) - ROW + (unsigned char)row[2];
  }
  double t2 = now();
  long m = n / 10;
  for (long i = 0; i < m; i++) sum += (unsigned)snprintf(buf, sizeof buf, "%.9g", v[i]) + (unsigned char)buf[1];
  double t3 = now();
  printf("fci_fmt_g9 %.1f ns/number, fci_fmt_g9_list %.1f ns/number (rows of %d), snprintf %.1f "
         "ns/number (%ld values; checksums %lu, %lu)\n", 1e9 * (t1 - t0) / n,
         1e9 * (t2 - t1) / (n / ROW * ROW), ROW, 1e9 * (t3 - t2) / m, n, sum, sum2);
  free(row);
  free(v);
  return 0;
}
