/* ferrocirc — `ferrocirc valve DESIGN.json [--profile OUT.csv] [--json] [--unit U]
 *                             [--vary PATH=FROM..TO --steps N [-o OUT.csv]]`
 *           `ferrocirc valve calibrate MEAS.csv --fit PATH[,PATH...] ...` (calibrate_cli.c)
 *           `ferrocirc valve DESIGN.json --target Q=VALUE --adjust KEY ...` (valve_target_cli.c)
 *
 * Prints a design's forward and reverse cracking pressures, reseat pressures, blowout,
 * differential and ratio in the report unit (default mmHg), with the cautions; --json prints the
 * same in SI; --profile writes the field and magnetic-pressure profile along the channel;
 * --vary sweeps one numeric design value (in FROM's unit) and writes a CSV of the pressures.
 * Exit status: 0 ok, 2 bad input or usage, 1 I/O or other failure. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "../cli.h"
#include "calibrate.h"
#include "valve_int.h"
#include "valve_target.h"

typedef struct args {
  const char *design, *profile, *unit, *vary, *out;
  int json, steps;
} args;

static int usage(const char *msg)
{
  fprintf(stderr, "ferrocirc valve: %s\nusage: ferrocirc valve DESIGN.json [--profile OUT.csv] "
          "[--json] [--unit mmHg] [--vary PATH=FROM..TO --steps N [-o OUT.csv]]\n"
          "       ferrocirc valve calibrate MEAS.csv --fit PATH[,PATH...] [--bounds PATH=LO..HI] "
          "[--cross-validate] [-o CALIBRATED.json]\n"
          "       ferrocirc valve DESIGN.json --target Q=VALUE --adjust KEY [--range A..B]\n", msg);
  return 2;
}

static int parse_args(int argc, char **argv, args *a)
{
  memset(a, 0, sizeof *a);
  a->unit = "mmHg";
  a->steps = 11;
  for (int i = 1; i < argc; i++) {
    const char *s = argv[i];
    int more = i + 1 < argc;
    if (!strcmp(s, "--json")) a->json = 1;
    else if (!strcmp(s, "--profile") && more) a->profile = argv[++i];
    else if (!strcmp(s, "--unit") && more) a->unit = argv[++i];
    else if (!strcmp(s, "--vary") && more) a->vary = argv[++i];
    else if (!strcmp(s, "-o") && more) a->out = argv[++i];
    else if (!strcmp(s, "--steps") && more) {
      long n;
      fc_error e;
      if (fci_cli_long(s, argv[++i], 2, 100000, &n, &e)) return usage(e.msg);
      a->steps = (int)n;
    } else if (s[0] == '-' && s[1]) {
      char m[300];
      snprintf(m, sizeof m, "unknown option or missing value: %s", s);
      return usage(m);
    } else if (!a->design) a->design = s;
    else return usage("more than one design file given");
  }
  if (!a->design) return usage("no design file given");
  if (a->out && !a->vary) return usage("-o goes with --vary");
  return 0;
}

/* "12.5mm" -> 12.5 and "mm" (unit may be empty). */
static int split_quantity(const char *s, double *v, char *unit, size_t n)
{
  char *end;
  *v = strtod(s, &end);
  if (end == s || !isfinite(*v)) return 0;
  while (*end == ' ') end++;
  snprintf(unit, n, "%s", end);
  return 1;
}

static int parse_vary(const char *spec, char *key, size_t nk, double *from, double *to,
                      char *unit, size_t nu)
{
  const char *eq = strchr(spec, '='), *dots = eq ? strstr(eq, "..") : NULL;
  char a[128], b[128], ua[64], ub[64];
  if (!eq || !dots || eq == spec || (size_t)(eq - spec) >= nk) return 0;
  snprintf(key, nk, "%.*s", (int)(eq - spec), spec);
  snprintf(a, sizeof a, "%.*s", (int)(dots - eq - 1), eq + 1);
  snprintf(b, sizeof b, "%s", dots + 2);
  if (!split_quantity(a, from, ua, sizeof ua) || !split_quantity(b, to, ub, sizeof ub)) return 0;
  if (ua[0] && ub[0] && strcmp(ua, ub)) return 0;
  snprintf(unit, nu, "%s", ua[0] ? ua : ub);
  return 1;
}

static int run_vary(const args *a, const fc_valve_design *d, const fc_units *u, double k)
{
  char key[256], unit[64], tmp[1100], val[128];
  double from, to;
  fc_error e;
  fc_error_clear(&e);
  if (!parse_vary(a->vary, key, sizeof key, &from, &to, unit, sizeof unit))
    return usage("--vary expects PATH=FROM..TO, e.g. magnets[0].gap=0.5mm..3mm (one unit)");
  FILE *f = a->out ? fci_atomic_open(a->out, tmp, sizeof tmp, &e) : stdout;
  if (!f) return fci_cli_report(&e);
  fci_vary_header(f, key, unit, a->unit);
  int rc = FC_OK;
  for (int i = 0; i < a->steps && !rc; i++) {
    double v = from + (to - from) * i / (a->steps - 1);
    fc_valve_design *dv = NULL;
    fc_valve_pressures p;
    snprintf(val, sizeof val, "%.12g%s%s", v, unit[0] ? " " : "", unit);
    rc = fc_valve_design_set(d, key, val, u, &dv, &e);
    if (rc) break;
    int ok = fc_valve_design_solve(dv, &p, &e) == FC_OK;
    if (!ok) {
      fprintf(stderr, "ferrocirc valve: %s = %s: ", key, val);
      fci_cli_report(&e);
      fc_error_clear(&e);
    }
    fci_vary_row(f, v, &p, k, ok);
    fc_valve_design_free(dv);
  }
  if (f == stdout) return rc ? fci_cli_report(&e) : 0;
  if (rc) {
    fclose(f);
    remove(tmp);
    return fci_cli_report(&e);
  }
  rc = fci_atomic_close(f, tmp, a->out, &e);
  return rc ? fci_cli_report(&e) : 0;
}

static int write_profile(const fc_valve_design *d, const char *file)
{
  fc_error e;
  fc_valve_profile_point *pt = NULL;
  size_t n = 0;
  char tmp[1100];
  fc_error_clear(&e);
  if (fc_valve_design_profile(d, &pt, &n, &e)) return fci_cli_report(&e);
  FILE *f = fci_atomic_open(file, tmp, sizeof tmp, &e);
  if (f) {
    fci_profile_csv(f, pt, n);
    fci_atomic_close(f, tmp, file, &e);
  }
  fc_free(pt);
  return e.code ? fci_cli_report(&e) : 0;
}

static int run(const void *argp, const fc_units *u)
{
  const args *a = argp;
  fc_error e;
  fc_valve_design *d = NULL;
  fc_valve_pressures p;
  double k;
  fc_error_clear(&e);
  if (fc_units_out_factor(u, a->unit, FC_DIM_PRESSURE, &k, "--unit", &e)) return fci_cli_report(&e);
  if (fc_valve_design_load(a->design, u, &d, &e)) return fci_cli_report(&e);
  int st = 0;
  if (a->vary) st = run_vary(a, d, u, k);
  else if (fc_valve_design_solve(d, &p, &e)) {
    fc_error_set_file(&e, a->design, 0, 0);
    st = fci_cli_report(&e);
  } else if (a->json) fci_report_json(stdout, d, &p);
  else fci_report_text(stdout, d, a->design, &p, a->unit, k);
  if (!st && a->profile) st = write_profile(d, a->profile);
  fc_valve_design_free(d);
  return st;
}

int fc_valve_cli(int argc, char **argv)
{
  if (argc > 1 && !strcmp(argv[1], "calibrate")) return fci_cal_cli(argc - 1, argv + 1);
  for (int i = 1; i < argc; i++) /* design targets have their own options */
    if (!strcmp(argv[i], "--target")) return fci_valve_target_cli(argc, argv);
  args a;
  int st = parse_args(argc, argv, &a);
  return st ? st : fci_cli_with_units(run, &a);
}
