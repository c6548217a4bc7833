/* ferrocirc — remanence of generic permanent-magnet grades.
 *
 * Source: industry grade tables, common practice (no single published source): sintered NdFeB
 * grades are named by (BH)max in MGOe and their remanence at 20 degC falls in the ranges below;
 * we use the middle of each range as the nominal value. Reversible temperature coefficient of
 * Br about -0.12 %/K for NdFeB and -0.2 %/K for hard ferrite; plain "N" grades are rated to
 * 80 degC. A grade's spread (e.g. N42: 1.28-1.32 T, +-1.5 %) is a real tolerance of the design:
 * give "remanence" directly when a datasheet value or a measurement is known. */
#include <stdio.h>
#include <string.h>

#include "valve_int.h"

typedef struct grade {
  const char *name;   /* as written in a design */
  double br_lo, br_hi;/* remanence range at 20 degC [T] */
  double tcoef;       /* relative change of Br per kelvin */
  double tmax;        /* highest rated working temperature [K] */
} grade;

static const grade grades[] = {
  {"N35", 1.17, 1.22, -0.0012, 353.15},
  {"N38", 1.22, 1.25, -0.0012, 353.15},
  {"N40", 1.25, 1.28, -0.0012, 353.15},
  {"N42", 1.28, 1.32, -0.0012, 353.15},
  {"N45", 1.32, 1.38, -0.0012, 353.15},
  {"N48", 1.37, 1.42, -0.0012, 353.15},
  {"N50", 1.40, 1.45, -0.0012, 353.15},
  {"N52", 1.42, 1.48, -0.0012, 353.15},
  {"ferrite", 0.20, 0.45, -0.0020, 523.15},
  {NULL, 0, 0, 0, 0}
};

int fci_grade_lookup(const char *name, double *br20, double *tcoef, double *tmax,
                     const char *path, fc_error *err)
{
  for (const grade *g = grades; g->name; g++)
    if (strcmp(g->name, name) == 0) {
      *br20 = 0.5 * (g->br_lo + g->br_hi);
      *tcoef = g->tcoef;
      *tmax = g->tmax;
      return FC_OK;
    }
  return fc_fail(err, FC_EPARAM, path, "unknown magnet grade \"%s\"; expected one of %s, or give "
                 "\"remanence\" instead", name, fci_grade_names());
}

const char *fci_grade_names(void)
{
  static char buf[160];
  if (!buf[0]) {
    size_t k = 0;
    for (const grade *g = grades; g->name && k < sizeof buf; g++) {
      int w = snprintf(buf + k, sizeof buf - k, "%s%s", k ? ", " : "", g->name);
      if (w > 0) k += (size_t)w;
    }
  }
  return buf;
}
