/* ferrocirc — benchmark of the CSV number formatter (src/fmt_g.c) against snprintf("%.9g").
 * Not a test: it prints nanoseconds per number for values spread like a CSV's (pressures in
 * mbar, flows in uL/min: log-uniform 1e-3..1e3, both signs, and some exact zeros), and a
 * checksum of the bytes so that the work cannot be optimised away. docs/performance.md. */
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

int main(int argc, char **argv)
{
  long n = argc > 1 ? atol(argv[1]) : 10000000L;
  double *v = malloc((size_t)n * sizeof *v);
  if (!v) return 1;
  uint64_t s = 0x9e3779b97f4a7c15u;
  for (long i = 0; i < n; i++) {
    s ^= s << 13; s ^= s >> 7; s ^= s << 17; /* xorshift64 */
    double u = (double)(s >> 11) / 9007199254740992.0;
    v[i] = (i % 50 == 0) ? 0.0 : ((s & 1) ? -1 : 1) * pow(10.0, -3 + 6 * u);
  }
  char buf[64];
  unsigned long sum = 0;
  double t0 = now();
  for (long i = 0; i < n; i++) sum += (unsigned)fci_fmt_g9(buf, v[i]) + (unsigned char)buf[1];
  double t1 = now();
  long m = n / 10;
  for (long i = 0; i < m; i++) sum += (unsigned)snprintf(buf, sizeof buf, "%.9g", v[i]) + (unsigned char)buf[1];
  double t2 = now();
  printf("fci_fmt_g9 %.1f ns/number, snprintf %.1f ns/number (%ld values; checksum %lu)\n",
         1e9 * (t1 - t0) / n, 1e9 * (t2 - t1) / m, n, sum);
  free(v);
  return 0;
}
