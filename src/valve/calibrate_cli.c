/* ferrocirc — `ferrocirc valve calibrate MEAS.csv --fit PATH[,PATH...] [--bounds PATH=LO..HI]...
 *                                        [--cross-validate] [--design FILE] [-o CALIBRATED.json]`
 *
 * Fits design values to bench measurements (calibrate.h), prints the report and, with -o, writes
 * the calibrated design of --design (default: the design of the first row). Exit status: 0 ok
 * (also when a warning was printed, unless -o could not be written), 2 bad input or usage, 3 the
 * model failed to solve, 1 I/O. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "../cli.h"
#include "calibrate.h"

#define MAX_BOUNDS 16

typedef struct args {
  const char *csv, *fit, *out, *design;
  const char *bounds[MAX_BOUNDS];
  int nBounds, cv;
} args;

static int usage(const char *msg)
{
  fprintf(stderr, "ferrocirc valve calibrate: %s\nusage: ferrocirc valve calibrate MEAS.csv "
          "--fit PATH[,PATH...] [--bounds PATH=LO..HI]... [--cross-validate] [--design FILE] "
          "[-o CALIBRATED.json]\n", msg);
  return 2;
}

static int parse_args(int argc, char **argv, args *a)
{
  memset(a, 0, sizeof *a);
  for (int i = 1; i < argc; i++) {
    const char *s = argv[i];
    int more = i + 1 < argc;
    if (!strcmp(s, "--fit") && more) a->fit = argv[++i];
    else if (!strcmp(s, "--cross-validate")) a->cv = 1;
    else if (!strcmp(s, "-o") && more) a->out = argv[++i];
    else if (!strcmp(s, "--design") && more) a->design = argv[++i];
    else if (!strcmp(s, "--bounds") && more) {
      if (a->nBounds == MAX_BOUNDS) return usage("too many --bounds");
      a->bounds[a->nBounds++] = argv[++i];
    } else if (s[0] == '-' && s[1]) {
      char m[300];
      snprintf(m, sizeof m, "unknown option or missing value: %s", s);
      return usage(m);
    } else if (!a->csv) a->csv = s;
    else return usage("more than one measurement file given");
  }
  if (!a->csv) return usage("no measurement file given");
  if (!a->fit) return usage("--fit PATH[,PATH...] is required (e.g. "
                            "--fit ferrofluid.saturation_magnetization)");
  return 0;
}

static int run(const args *a, const fc_units *u, fc_error *e)
{
  fci_cal_data *d = NULL;
  fci_cal_model *m = NULL;
  fci_cal_fit *f = NULL;
  double *loo = NULL;
  int rc = fci_cal_data_load(a->csv, u, &d, e);
  if (!rc) rc = fci_cal_model_new(d, u, a->fit, &m, e);
  for (int i = 0; !rc && i < a->nBounds; i++) rc = fci_cal_model_bounds(m, a->bounds[i], e);
  if (!rc) rc = fci_cal_fit_run(m, NULL, NULL, &f, e);
  if (!rc && a->cv) {
    loo = fc_calloc((size_t)d->nValue + 1, sizeof *loo);
    rc = loo ? fci_cal_cross_validate(m, f, loo, e) : fc_fail(e, FC_ENOMEM, NULL, "out of memory");
  }
  if (!rc) {
    fci_cal_report(stdout, m, f, loo);
    fflush(stdout);
  }
  if (!rc && a->out) {
    rc = fci_cal_write(a->out, m, a->design, f, loo, e);
    if (!rc) printf("wrote %s\n", a->out);
  }
  fc_free(loo);
  fci_cal_fit_free(f);
  fci_cal_model_free(m);
  fci_cal_data_free(d);
  return rc;
}

static int run_main(const void *argp, const fc_units *u)
{
  fc_error e;
  fc_error_clear(&e);
  return run(argp, u, &e) ? fci_cli_report(&e) : 0;
}

int fci_cal_cli(int argc, char **argv)
{
  args a;
  int st = parse_args(argc, argv, &a);
  return st ? st : fci_cli_with_units(run_main, &a);
}
