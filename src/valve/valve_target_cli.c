/* ferrocirc — `ferrocirc valve DESIGN.json --target Q=VALUE --adjust KEY [--range A..B]
 *                                  [--steps N] [--unit U] [--json]`
 *
 * Finds the values of one design parameter (KEY, a path in the design such as magnets[0].gap)
 * in the allowed range at which quantity Q (crack_forward, crack_reverse, reseat_forward,
 * reseat_reverse, blowout, differential, ratio) equals VALUE, and prints each with the valve's
 * full report there (valve_target.c has the method). Without --range the range is a quarter to
 * four times the value the design gives. Plain numbers in --range are SI, as in a design file.
 * Exit status: 0 the target is met; 1 no value in the range meets it (the closest achievable
 * value is reported, and its design printed); 2 bad input or usage. */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../cli.h"
#include "valve_target.h"

typedef struct targs {
  const char *design, *target, *adjust, *range, *unit;
  int json, steps;
} targs;

static int usage(const char *msg)
{
  fprintf(stderr, "ferrocirc valve: %s\nusage: ferrocirc valve DESIGN.json --target Q=VALUE "
          "--adjust KEY [--range FROM..TO] [--steps N] [--unit mmHg] [--json]\n  Q: %s\n"
          "  e.g. --target crack_reverse=60mmHg --adjust magnets[0].gap --range 0.2mm..5mm\n",
          msg, fci_target_quantity_names());
  return 2;
}

static int parse_args(int argc, char **argv, targs *a)
{
  memset(a, 0, sizeof *a);
  a->unit = "mmHg";
  a->steps = 21;
  for (int i = 1; i < argc; i++) {
    const char *s = argv[i], *v = i + 1 < argc ? argv[i + 1] : NULL;
    if (!strcmp(s, "--json")) { a->json = 1; continue; }
    const char **slot = !strcmp(s, "--target") ? &a->target : !strcmp(s, "--adjust") ? &a->adjust
                      : !strcmp(s, "--range") ? &a->range : !strcmp(s, "--unit") ? &a->unit : NULL;
    if ((slot || !strcmp(s, "--steps")) && !v) {
      char m[200];
      snprintf(m, sizeof m, "%s needs a value", s);
      return usage(m);
    }
    if (slot) *slot = argv[++i];
    else if (!strcmp(s, "--steps")) {
      long n;
      fc_error e;
      if (fci_cli_long(s, argv[++i], 2, 10000, &n, &e)) return usage(e.msg);
      a->steps = (int)n;
    } else if (s[0] == '-' && s[1]) {
      char m[300];
      snprintf(m, sizeof m, "unknown option with --target: %s", s);
      return usage(m);
    } else if (!a->design) a->design = s;
    else return usage("more than one design file given");
  }
  if (!a->design) return usage("no design file given");
  if (!a->target || !a->adjust) return usage("--target goes with --adjust KEY");
  return 0;
}

/* "Q=VALUE" into the quantity and its value in SI (Pa, or 1 for the ratio). */
static int parse_target(const char *text, const fc_units *u, fci_target_spec *s, fc_error *e)
{
  const char *eq = strchr(text, '=');
  char name[64];
  if (!eq || eq == text || (size_t)(eq - text) >= sizeof name)
    return fc_fail(e, FC_EUSAGE, "--target", "expected Q=VALUE such as crack_reverse=60mmHg, "
                   "got \"%s\"", text);
  snprintf(name, sizeof name, "%.*s", (int)(eq - text), text);
  if ((s->quantity = fci_target_quantity(name)) < 0)
    return fc_fail(e, FC_EUSAGE, "--target", "unknown quantity \"%s\"; expected one of %s", name,
                   fci_target_quantity_names());
  return fc_units_parse(u, eq + 1, fci_target_is_pressure(s->quantity) ? FC_DIM_PRESSURE
                        : FC_DIM_NONE, &s->value, "--target", e);
}

static int split_num(const char *s, size_t n, double *v, char *unit, size_t nu)
{
  char buf[96], *end;
  if (n >= sizeof buf) return 0;
  snprintf(buf, sizeof buf, "%.*s", (int)n, s);
  *v = strtod(buf, &end);
  while (*end == ' ') end++;
  snprintf(unit, nu, "%s", end);
  return end != buf && isfinite(*v);
}

/* "FROM..TO" (units optional, TO converted to FROM's unit), or a quarter to four times the
 * design's own value when no range is given. */
static int parse_range(const char *text, const fc_valve_design *d, const fc_units *u,
                       fci_target_spec *s, fc_error *e)
{
  double v;
  char ub[32];
  if (!text) {
    int rc = fci_valve_design_value(d, s->key, &v, s->unit, sizeof s->unit, e);
    if (rc) return rc;
    if (!(v > 0))
      return fc_fail(e, FC_EUSAGE, s->key, "is %g in the design; give --range FROM..TO", v);
    s->lo = 0.25 * v;
    s->hi = 4.0 * v;
    return FC_OK;
  }
  const char *dots = strstr(text, "..");
  if (!dots || !split_num(text, (size_t)(dots - text), &s->lo, s->unit, sizeof s->unit) ||
      !split_num(dots + 2, strlen(dots + 2), &s->hi, ub, sizeof ub))
    return fc_fail(e, FC_EUSAGE, "--range", "expected FROM..TO such as 0.2mm..5mm, got \"%s\"",
                   text);
  if (!s->unit[0]) snprintf(s->unit, sizeof s->unit, "%s", ub);
  else if (ub[0] && strcmp(ub, s->unit) && fc_units_convert(u, s->hi, ub, s->unit, &s->hi, e))
    return fc_fail(e, FC_EUSAGE, "--range", "%s", e->msg);
  if (!(s->lo < s->hi))
    return fc_fail(e, FC_EUSAGE, "--range", "FROM must be below TO, got \"%s\"", text);
  return FC_OK;
}

/* The quantity in the report unit (pressures) or as a number (ratio). */
static double shown(const fci_target_spec *s, double q, double k)
{
  return fci_target_is_pressure(s->quantity) ? q * k : q;
}

/* " mmHg" for pressures, "" for the ratio: printed right after a number. */
static const char *unit_text(const targs *a, const fci_target_spec *s)
{
  static char buf[72];
  snprintf(buf, sizeof buf, " %.64s", a->unit);
  return fci_target_is_pressure(s->quantity) ? buf : "";
}

static void print_design(const targs *a, const fc_valve_design *d, const fc_units *u,
                         const fci_target_spec *s, const fci_target_point *pt, double k)
{
  char val[96];
  fc_valve_design *dv = NULL;
  fc_error e;
  fc_error_clear(&e);
  snprintf(val, sizeof val, "%.17g%s%s", pt->x, s->unit[0] ? " " : "", s->unit);
  if (fc_valve_design_set(d, s->key, val, u, &dv, &e) == FC_OK)
    fci_report_text(stdout, dv, a->design, &pt->p, a->unit, k);
  fc_valve_design_free(dv);
}

static void text_report(const targs *a, const fc_valve_design *d, const fc_units *u,
                        const fci_target_spec *s, const fci_target_result *r, double k)
{
  const char *qn = fci_target_quantity_name(s->quantity);
  const char *qu = unit_text(a, s);
  printf("target %s = %.6g%s, adjusting %s over %.6g .. %.6g %s (%d-point scan, Brent's "
         "method)\n", qn, shown(s, s->value, k), qu, s->key, s->lo, s->hi, s->unit, s->steps);
  for (int i = 0; i < r->nroot; i++)
    printf("%s at %s = %.9g %s: %s = %.6f%s (%d refining evaluations)\n",
           i ? "also met" : "met", s->key, r->root[i].x, s->unit, qn, shown(s, r->root[i].q, k),
           qu, r->root[i].iters);
  if (r->nmore)
    printf("note: %d more sign changes in the range were not refined\n", r->nmore);
  if (r->nroot) print_design(a, d, u, s, &r->root[0], k);
  else {
    printf("closest achievable: %s = %.6f%s at %s = %.9g %s\n", qn, shown(s, r->closest.q, k),
           qu, s->key, r->closest.x, s->unit);
    print_design(a, d, u, s, &r->closest, k);
  }
}

static void no_solution(const targs *a, const fci_target_spec *s, const fci_target_result *r,
                        double k)
{
  const char *qn = fci_target_quantity_name(s->quantity);
  const char *qu = unit_text(a, s);
  int end = r->closest.x == s->lo || r->closest.x == s->hi;
  fprintf(stderr, "ferrocirc valve: %s: no value of %s in %.6g .. %.6g %s meets %s = %.6g%s; "
          "over the range it spans %.6g .. %.6g%s. Closest achievable: %.6g%s at %s = %.6g %s%s\n",
          a->design, s->key, s->lo, s->hi, s->unit, qn, shown(s, s->value, k), qu,
          shown(s, r->qmin, k), shown(s, r->qmax, k), qu, shown(s, r->closest.q, k), qu, s->key,
          r->closest.x, s->unit, end ? " (an end of the range: widen it if the design allows)"
                                     : "");
  if (r->njump)
    fprintf(stderr, "  the quantity jumps across the target near %s = %.6g %s (where the plug "
            "starts or stops sealing); no value meets it exactly\n", s->key, r->jump_x, s->unit);
}

static void scan_notes(const fci_target_spec *s, const fci_target_result *r)
{
  if (r->nunsealed)
    fprintf(stderr, "  note: at %d of %d scan points the plug does not seal (cracks 0)\n",
            r->nunsealed, s->steps);
  if (r->nfail)
    fprintf(stderr, "  note: %d of %d scan points have no solution, e.g. %s\n", r->nfail,
            s->steps, r->fail_msg);
}

static cJSON *json_point(const fci_target_point *pt)
{
  cJSON *o = cJSON_CreateObject();
  const fc_valve_pressures *p = &pt->p;
  cJSON_AddNumberToObject(o, "value", pt->x);
  cJSON_AddNumberToObject(o, "quantity", pt->q);
  cJSON_AddNumberToObject(o, "evaluations", pt->iters);
  cJSON_AddBoolToObject(o, "sealed", p->sealed);
  const char *key[] = {"crack_forward_Pa", "crack_reverse_Pa", "reseat_forward_Pa",
                       "reseat_reverse_Pa", "blowout_Pa", "differential_Pa"};
  for (int q = 0; q < FCI_TQ_RATIO; q++) cJSON_AddNumberToObject(o, key[q], fci_target_value(p, q));
  double ratio = fci_target_value(p, FCI_TQ_RATIO);
  if (isfinite(ratio)) cJSON_AddNumberToObject(o, "ratio", ratio);
  else cJSON_AddNullToObject(o, "ratio");
  return o;
}

static void json_report(const fci_target_spec *s, const fci_target_result *r)
{
  cJSON *o = cJSON_CreateObject(), *sol = cJSON_CreateArray();
  cJSON_AddStringToObject(o, "format", "ferrocirc-valve-target/1");
  cJSON_AddStringToObject(o, "quantity", fci_target_quantity_name(s->quantity));
  cJSON_AddNumberToObject(o, fci_target_is_pressure(s->quantity) ? "target_Pa" : "target",
                          s->value);
  cJSON_AddStringToObject(o, "adjust", s->key);
  cJSON_AddStringToObject(o, "unit", s->unit);
  cJSON_AddItemToObject(o, "range", cJSON_CreateDoubleArray((double[]){s->lo, s->hi}, 2));
  cJSON_AddNumberToObject(o, "scan_points", s->steps);
  cJSON_AddBoolToObject(o, "met", r->nroot > 0);
  for (int i = 0; i < r->nroot; i++) cJSON_AddItemToArray(sol, json_point(&r->root[i]));
  cJSON_AddItemToObject(o, "solutions", sol);
  if (!r->nroot) cJSON_AddItemToObject(o, "closest", json_point(&r->closest));
  cJSON_AddNumberToObject(o, "unrefined_sign_changes", r->nmore);
  cJSON_AddNumberToObject(o, "jumps", r->njump);
  cJSON_AddNumberToObject(o, "unsealed_scan_points", r->nunsealed);
  cJSON_AddNumberToObject(o, "failed_scan_points", r->nfail);
  char *text = cJSON_Print(o);
  if (text) puts(text);
  free(text);
  cJSON_Delete(o);
}

static int run(const void *args, const fc_units *u)
{
  const targs *a = args;
  fc_error e;
  fc_valve_design *d = NULL;
  fci_target_spec s = {.key = a->adjust, .steps = a->steps};
  fci_target_result r;
  double k;
  fc_error_clear(&e);
  int rc = fc_units_out_factor(u, a->unit, FC_DIM_PRESSURE, &k, "--unit", &e);
  if (!rc) rc = parse_target(a->target, u, &s, &e);
  if (!rc) rc = fc_valve_design_load(a->design, u, &d, &e);
  if (!rc) rc = parse_range(a->range, d, u, &s, &e);
  if (!rc) rc = fci_valve_target_solve(d, u, &s, &r, &e);
  if (rc && d && !e.file[0]) fc_error_set_file(&e, a->design, 0, 0);
  int st = rc ? fci_cli_report(&e) : 0;
  if (!rc) {
    if (a->json) json_report(&s, &r);
    else text_report(a, d, u, &s, &r, k);
    if (!r.nroot) no_solution(a, &s, &r, k);
    scan_notes(&s, &r);
    st = r.nroot ? 0 : 1;
  }
  fc_valve_design_free(d);
  return st;
}

int fci_valve_target_cli(int argc, char **argv)
{
  targs a;
  int st = parse_args(argc, argv, &a);
  return st ? st : fci_cli_with_units(run, &a);
}
