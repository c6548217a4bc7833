/* ferrocirc — statistics of a study's result CSV: per metric the count, mean, standard
 * deviation, 5/50/95 % percentiles (linear interpolation between order statistics, "type 7" of
 * Hyndman & Fan 1996, Am. Stat. 50:361), and for each limit the probability that the metric
 * exceeds it with a 95 % Wilson score interval (Wilson 1927, JASA 22:209). Failed points
 * (status not "ok") are counted and left out. */
#define _POSIX_C_SOURCE 200809L
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "study_int.h"

static int cmp(const void *a, const void *b)
{
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

static double quantile(const double *s, long n, double q)
{
  double h = (double)(n - 1) * q;
  long lo = (long)floor(h);
  return lo + 1 < n ? s[lo] + (h - (double)lo) * (s[lo + 1] - s[lo]) : s[n - 1];
}

/* Split a CSV line in place (quoted fields allowed); returns the field count. */
static int split(char *line, char **f, int max)
{
  int n = 0;
  char *p = line;
  while (n < max) {
    f[n++] = p;
    if (*p == '"') {
      char *w = p;
      for (p++; *p && !(*p == '"' && p[1] != '"'); p++) {
        if (*p == '"') p++;
        *w++ = *p;
      }
      *w = '\0';
      if (*p) p++;
    } else while (*p && *p != ',' && *p != '\n') p++;
    if (*p != ',') { *p = '\0'; break; }
    *p++ = '\0';
  }
  return n;
}

typedef struct col { char *name; double *v; long n; } col;

int fci_study_stats(FILE *in, int nlimit, char *const *lname, const double *lval, FILE *out,
                    fc_error *err)
{
  char *line = NULL, *fld[4096];
  size_t cap = 0;
  long rows = 0, failed = 0, capr = 1024;
  if (getline(&line, &cap, in) <= 0) { free(line); return fc_fail(err, FC_EIO, NULL, "empty result file"); }
  int nc = split(line, fld, 4096), st = nc - 1;
  col *c = fc_calloc((size_t)nc, sizeof *c);
  for (int k = 0; c && k < nc; k++) {
    c[k].name = fc_strdup(fld[k]);
    c[k].v = fc_malloc((size_t)capr * sizeof(double));
  }
  while (c && getline(&line, &cap, in) > 0) {
    if (split(line, fld, 4096) != nc) continue;
    if (strcmp(fld[st], "ok")) { failed++; continue; }
    if (rows == capr) {
      capr *= 2;
      for (int k = 0; k < nc; k++) c[k].v = fc_realloc(c[k].v, (size_t)capr * sizeof(double));
    }
    for (int k = 0; k < nc; k++) c[k].v[rows] = fld[k][0] ? strtod(fld[k], NULL) : NAN;
    rows++;
  }
  fprintf(out, "%ld points ok, %ld failed\n%-34s %12s %12s %12s %12s %12s\n", rows, failed,
          "metric", "mean", "std", "p5", "p50", "p95");
  for (int k = 1; c && k < st; k++) {
    long n = 0;
    double s = 0, s2 = 0;
    for (long r = 0; r < rows; r++) if (!isnan(c[k].v[r])) c[k].v[n++] = c[k].v[r];
    if (!n) continue;
    for (long r = 0; r < n; r++) s += c[k].v[r];
    double mean = s / (double)n;
    for (long r = 0; r < n; r++) s2 += (c[k].v[r] - mean) * (c[k].v[r] - mean);
    qsort(c[k].v, (size_t)n, sizeof(double), cmp);
    fprintf(out, "%-34s %12.5g %12.5g %12.5g %12.5g %12.5g\n", c[k].name, mean,
            n > 1 ? sqrt(s2 / (double)(n - 1)) : 0.0, quantile(c[k].v, n, 0.05),
            quantile(c[k].v, n, 0.5), quantile(c[k].v, n, 0.95));
    for (int l = 0; l < nlimit; l++) {
      const char *alias = !strcmp(lname[l], "regurgitant_fraction") ? "rf_max"
                        : !strcmp(lname[l], "blowout_margin") ? "margin_max" : lname[l];
      size_t ln = strlen(alias);
      if (strncmp(c[k].name, alias, ln) || (c[k].name[ln] && c[k].name[ln] != ' ')) continue;
      long bad = 0;
      for (long r = 0; r < n; r++) bad += c[k].v[r] > lval[l];
      /* Wilson score interval, z = 1.96 */
      double z = 1.959963985, p = (double)bad / (double)n, d = 1 + z * z / (double)n;
      double mid = (p + z * z / (2.0 * (double)n)) / d;
      double half = z * sqrt(p * (1 - p) / (double)n + z * z / (4.0 * (double)n * (double)n)) / d;
      fprintf(out, "  P(%s > %g) = %.4f  (95 %% CI %.4f .. %.4f, %ld of %ld)\n", lname[l], lval[l],
              p, fmax(0, mid - half), fmin(1, mid + half), bad, n);
    }
  }
  for (int k = 0; c && k < nc; k++) { fc_free(c[k].name); fc_free(c[k].v); }
  fc_free(c);
  free(line);
  return FC_OK;
}
