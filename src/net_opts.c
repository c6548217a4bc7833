/* ferrocirc — the "fluid", "simulation" and "report" sections of a network file.
 *
 * Default fluid: water at 37 °C, air-free: density 993.329 kg/m^3 (CIPM formula, Tanaka et al.
 * 2001, Metrologia 38:301), viscosity 0.6913034 mPa s (IAPWS R12-08), ambient 101325 Pa
 * (standard atmosphere). Culture media are close to water; their viscosity rises with serum, so
 * users should override it (docs/network-format.md). */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/fluid.h"
#include "net.h"

#define FC_MAX_SAMPLES 10000000.0 /* output rows per run; more is refused with a message */

static const char *const fluid_keys[] = {"viscosity", "density", "ambient_pressure",
                                         "temperature", "name", NULL};
static const char *const sim_keys[] = {"duration", "cycles", "cycle_period", "sample_interval",
                                       "rel_tol", "abs_tol", "abs_tol_volume", "abs_tol_flow",
                                       "max_step", "initial", "until_periodic", "max_cycles",
                                       "chatter", "linear_solver", NULL};
static const char *const chatter_keys[] = {"max_switches", "window", "action", NULL};
static const char *const report_keys[] = {"pressure_unit", "flow_unit", "elements",
                                          "shear_range", "pressure_limit", "limits",
                                          "statistics", "nodes", NULL};

int fci_net_parse_fluid(fc_net *net, const cJSON *j, const fci_parse_ctx *ctx, fc_error *err)
{
  const char *P = "$.fluid";
  int rc;
  double T;
  if (j && !cJSON_IsObject(j)) return fc_fail(err, FC_EJSON, P, "expected an object");
  if (j && (rc = fci_check_keys(j, fluid_keys, NULL, P, err))) return rc;
  /* Water properties at the given temperature (default 37 °C) are the defaults. */
  if ((rc = fci_get_quantity(j, "temperature", FC_DIM_TEMPERATURE, 0, 310.15, FCI_POS, &T, P, ctx, err)))
    return rc;
  if (T < FC_WATER_TMIN || T > FC_WATER_TMAX)
    return fc_fail(err, FC_EPARAM, "$.fluid.temperature", "%.2f K is outside %.2f-%.2f K, the "
                   "range of the water formulas used for the defaults", T, FC_WATER_TMIN, FC_WATER_TMAX);
  double rho0 = fc_water_density(T), mu0 = fc_water_viscosity(T, rho0);
  fci_fluid *f = &net->fluid;
  if ((rc = fci_get_quantity(j, "density", FC_DIM_DENSITY, 0, rho0, FCI_POS, &f->density, P, ctx, err)))
    return rc;
  if ((rc = fci_get_quantity(j, "viscosity", FC_DIM_VISCOSITY, 0, mu0, FCI_POS, &f->viscosity, P, ctx, err)))
    return rc;
  return fci_get_quantity(j, "ambient_pressure", FC_DIM_PRESSURE, 0, 101325.0, FCI_POS,
                          &f->ambient, P, ctx, err);
}

/* The network's cycle: the common period of its periodic sources (0 if none); FC_EPARAM if
 * several differ, which the caller reports only when a cycle is needed. */
static int source_period(const fc_net *net, double *period, const char **second)
{
  *period = 0;
  *second = NULL;
  for (int i = 0; i < net->nElem; i++) {
    const fc_elem *e = &net->elem[i];
    fci_info info = {.no_text = 1};
    if (!e->type->xInfo) continue;
    e->type->xInfo(e, &net->fluid, &info);
    if (info.period <= 0) continue;
    if (*period == 0) *period = info.period;
    else if (fabs(info.period - *period) > 1e-12 * *period) { *second = e->id; return FC_EPARAM; }
  }
  return FC_OK;
}

static int parse_times(fc_net *net, const cJSON *j, const fci_parse_ctx *ctx, fc_error *err)
{
  const char *P = "$.simulation";
  fci_sim_opts *s = &net->sim;
  const char *other;
  int rc, mixed = source_period(net, &s->cycle_period, &other);
  if ((rc = fci_get_quantity(j, "cycle_period", FC_DIM_TIME, 0, s->cycle_period, FCI_POS,
                             &s->cycle_period, P, ctx, err)))
    return rc;
  int has_p = j && cJSON_GetObjectItemCaseSensitive(j, "cycle_period");
  int has_d = j && cJSON_GetObjectItemCaseSensitive(j, "duration");
  int has_c = j && cJSON_GetObjectItemCaseSensitive(j, "cycles");
  if (has_d && has_c)
    return fc_fail(err, FC_EPARAM, "$.simulation.cycles", "give either duration or cycles, not both");
  if (mixed && !has_p && (has_c || !has_d))
    return fc_fail(err, FC_EPARAM, "$.simulation", "periodic sources have different periods "
                   "(element \"%s\" differs); set simulation.cycle_period", other);
  if (mixed && !has_p) s->cycle_period = 0;
  int has_u = j && cJSON_GetObjectItemCaseSensitive(j, "until_periodic");
  if (has_u && has_d)
    return fc_fail(err, FC_EPARAM, "$.simulation.until_periodic", "give either duration or "
                   "until_periodic (with max_cycles), not both");
  if (has_u && has_c)
    return fc_fail(err, FC_EPARAM, "$.simulation.until_periodic", "give either cycles or "
                   "until_periodic (with max_cycles), not both");
  if ((rc = fci_get_quantity(j, "until_periodic", FC_DIM_NONE, 0, 0, FCI_NONNEG,
                             &s->until_periodic, P, ctx, err)))
    return rc;
  if (has_u || has_c || (!has_d && s->cycle_period > 0)) {
    const char *key = has_u ? "max_cycles" : "cycles";
    if ((rc = fci_get_quantity(j, key, FC_DIM_NONE, 0, has_u ? 500 : 10, FCI_POS, &s->cycles, P,
                               ctx, err)))
      return rc;
    if (s->cycle_period <= 0)
      return fc_fail(err, FC_EPARAM, has_c ? "$.simulation.cycles" : "$.simulation",
                     "cycles need a periodic source or simulation.cycle_period; give duration");
    if (s->cycles != floor(s->cycles) || s->cycles > 1e6)
      return fc_fail(err, FC_EPARAM, has_u ? "$.simulation.max_cycles" : "$.simulation.cycles",
                     "expected a whole number of cycles up to 1e6, got %g", s->cycles);
    s->duration = s->cycles * s->cycle_period;
  } else if ((rc = fci_get_quantity(j, "duration", FC_DIM_TIME, 1, 0, FCI_POS, &s->duration, P,
                                    ctx, err))) {
    return rc;
  }
  double dflt = s->cycle_period > 0 ? s->cycle_period / 100 : s->duration / 1000;
  if ((rc = fci_get_quantity(j, "sample_interval", FC_DIM_TIME, 0, dflt, FCI_POS,
                             &s->sample_interval, P, ctx, err)))
    return rc;
  if (s->duration / s->sample_interval > FC_MAX_SAMPLES)
    return fc_fail(err, FC_EPARAM, "$.simulation.sample_interval", "%.3g s gives %.3g samples; "
                   "the limit is %.0f rows", s->sample_interval, s->duration / s->sample_interval,
                   FC_MAX_SAMPLES);
  return FC_OK;
}

/* Chatter: a valve whose pressure hovers at a threshold switches on every small ripple. More
 * than max_switches (default 100) switches within window (default 1 % of the cycle, or 10 ms)
 * either stop the run (exit status 3) or, with "action": "continue", hold the valve open for
 * one window: a documented regularisation that averages the buzzing (docs/network-format.md). */
static int parse_chatter(fci_sim_opts *s, const cJSON *c, const fci_parse_ctx *ctx, fc_error *err)
{
  const char *P = "$.simulation.chatter";
  double m, w0 = s->cycle_period > 0 ? 0.01 * s->cycle_period : 0.01;
  int rc;
  if (c && !cJSON_IsObject(c)) return fc_fail(err, FC_EJSON, P, "expected an object");
  if (c && (rc = fci_check_keys(c, chatter_keys, NULL, P, err))) return rc;
  if ((rc = fci_get_quantity(c, "max_switches", FC_DIM_NONE, 0, 100, FCI_POS, &m, P, ctx, err)) ||
      (rc = fci_get_quantity(c, "window", FC_DIM_TIME, 0, w0, FCI_POS, &s->chatter_window, P, ctx, err)))
    return rc;
  if (m < 2 || m > 1e7 || m != floor(m))
    return fc_fail(err, FC_EPARAM, "$.simulation.chatter.max_switches", "expected a whole number "
                   ">= 2, got %g", m);
  s->chatter_max = (int)m;
  const cJSON *a = c ? cJSON_GetObjectItemCaseSensitive(c, "action") : NULL;
  s->chatter_continue = 0;
  if (a) {
    if (cJSON_IsString(a) && !strcmp(a->valuestring, "continue")) s->chatter_continue = 1;
    else if (!cJSON_IsString(a) || strcmp(a->valuestring, "stop"))
      return fc_fail(err, FC_EPARAM, "$.simulation.chatter.action", "expected \"stop\" or \"continue\"");
  }
  return FC_OK;
}

int fci_net_parse_sim(fc_net *net, const cJSON *j, const fci_parse_ctx *ctx, fc_error *err)
{
  const char *P = "$.simulation";
  fci_sim_opts *s = &net->sim;
  int rc;
  if (j && !cJSON_IsObject(j)) return fc_fail(err, FC_EJSON, P, "expected an object");
  if (j && (rc = fci_check_keys(j, sim_keys, NULL, P, err))) return rc;
  if ((rc = parse_times(net, j, ctx, err))) return rc;
  /* Tolerance defaults: 1e-6 relative; 1 mPa absolute is 1e-5 of a typical 1 mbar signal;
   * 1e-15 m^3/s (0.06 nL/min) is far below microfluidic flows; volumes integrate per-cycle
   * totals down to picolitres, so their floor is 1 fL (1e-18 m^3). */
  if ((rc = fci_get_quantity(j, "rel_tol", FC_DIM_NONE, 0, 1e-6, FCI_POS, &s->rel_tol, P, ctx, err)) ||
      (rc = fci_get_quantity(j, "abs_tol", FC_DIM_PRESSURE, 0, 1e-3, FCI_POS, &s->abs_tol_p, P, ctx, err)) ||
      (rc = fci_get_quantity(j, "abs_tol_volume", FC_DIM_VOLUME, 0, 1e-18, FCI_POS, &s->abs_tol_v, P, ctx, err)) ||
      (rc = fci_get_quantity(j, "abs_tol_flow", FC_DIM_FLOW, 0, 1e-15, FCI_POS, &s->abs_tol_q, P, ctx, err)) ||
      (rc = fci_get_quantity(j, "max_step", FC_DIM_TIME, 0, 0, FCI_NONNEG, &s->max_step, P, ctx, err)))
    return rc;
  if (s->rel_tol < 1e-14 || s->rel_tol > 0.1)
    return fc_fail(err, FC_EPARAM, "$.simulation.rel_tol", "%g is outside 1e-14..0.1", s->rel_tol);
  if ((rc = parse_chatter(s, j ? cJSON_GetObjectItemCaseSensitive(j, "chatter") : NULL, ctx, err)))
    return rc;
  const cJSON *ini = j ? cJSON_GetObjectItemCaseSensitive(j, "initial") : NULL;
  s->initial = FC_INIT_REST;
  if (ini) {
    if (cJSON_IsString(ini) && strcmp(ini->valuestring, "rest") == 0) s->initial = FC_INIT_REST;
    else if (cJSON_IsString(ini) && strcmp(ini->valuestring, "steady") == 0) s->initial = FC_INIT_STEADY;
    else return fc_fail(err, FC_EPARAM, "$.simulation.initial", "expected \"rest\" or \"steady\"");
  }
  /* Newton solves: "auto" picks the iterative solver where a direct factorisation would fill
   * in (meshes of channels), docs/numerics.md. */
  static const char *const ls_names[] = {"auto", "direct", "iterative"};
  const cJSON *ls = j ? cJSON_GetObjectItemCaseSensitive(j, "linear_solver") : NULL;
  s->linear_solver = FCI_LS_AUTO;
  if (ls) {
    int k = 0;
    while (k < 3 && !(cJSON_IsString(ls) && !strcmp(ls->valuestring, ls_names[k]))) k++;
    if (k == 3)
      return fc_fail(err, FC_EPARAM, "$.simulation.linear_solver",
                     "expected \"auto\", \"direct\" or \"iterative\"");
    s->linear_solver = k; /* the order of FCI_LS_* */
  }
  return FC_OK;
}

static int report_unit(const cJSON *j, const char *key, fc_dim dim, const char *def, char *dst,
                       size_t n, const fci_parse_ctx *ctx, fc_error *err)
{
  char p[64];
  double f;
  const cJSON *v = j ? cJSON_GetObjectItemCaseSensitive(j, key) : NULL;
  fci_path_key(p, sizeof p, "$.report", key);
  if (v && !cJSON_IsString(v)) return fc_fail(err, FC_EJSON, p, "expected a unit string");
  const char *u = v ? v->valuestring : def;
  if (strlen(u) >= n) return fc_fail(err, FC_EPARAM, p, "unit string too long");
  int rc = fc_units_out_factor(ctx->units, u, dim, &f, p, err);
  if (rc) { snprintf(err->path, sizeof err->path, "%s", p); return rc; }
  snprintf(dst, n, "%s", u);
  return FC_OK;
}

/* report.elements: ids of elements whose cycle-by-cycle table is printed (valves always are). */
static int parse_track(fc_net *net, const cJSON *arr, fc_error *err)
{
  fci_report_opts *r = &net->report;
  if (!arr) return FC_OK;
  if (!cJSON_IsArray(arr)) return fc_fail(err, FC_EJSON, "$.report.elements", "expected an array of element ids");
  int n = cJSON_GetArraySize(arr), k = 0;
  if (!(r->track = fc_calloc((size_t)(n ? n : 1), sizeof *r->track)))
    return fc_fail(err, FC_ENOMEM, "$.report.elements", "out of memory");
  for (const cJSON *v = arr->child; v; v = v->next, k++) {
    char p[64];
    snprintf(p, sizeof p, "$.report.elements[%d]", k);
    if (!cJSON_IsString(v)) return fc_fail(err, FC_EJSON, p, "expected an element id (string)");
    int i = fc_net_elem_find(net, v->valuestring);
    if (i < 0) return fc_fail(err, FC_EPARAM, p, "no element has the id \"%s\"", v->valuestring);
    if (net->elem[i].nTerm != 2)
      return fc_fail(err, FC_EPARAM, p, "\"%s\" has one terminal and no flow to report", v->valuestring);
    r->track[r->nTrack++] = i;
  }
  return FC_OK;
}

/* report.statistics ("all" | "tracked") and report.nodes: a network of 10^5 elements spends a
 * quarter of its run on the statistics of every element and node (docs/performance.md); with
 * "tracked" only the tracked elements (valves, sources, culture regions, report.elements), the
 * nodes listed here and the terminals of tracked elements get them. Node pressure extremes are
 * kept everywhere, so pressure_limit still watches every node. */
static int parse_scope(fc_net *net, const cJSON *j, fc_error *err)
{
  fci_report_opts *r = &net->report;
  const cJSON *st = j ? cJSON_GetObjectItemCaseSensitive(j, "statistics") : NULL;
  r->tracked_only = 0;
  if (st) {
    if (cJSON_IsString(st) && !strcmp(st->valuestring, "tracked")) r->tracked_only = 1;
    else if (!cJSON_IsString(st) || strcmp(st->valuestring, "all"))
      return fc_fail(err, FC_EPARAM, "$.report.statistics", "expected \"all\" or \"tracked\"");
  }
  const cJSON *arr = j ? cJSON_GetObjectItemCaseSensitive(j, "nodes") : NULL;
  if (!arr) return FC_OK;
  if (!cJSON_IsArray(arr)) return fc_fail(err, FC_EJSON, "$.report.nodes", "expected an array of node names");
  int n = cJSON_GetArraySize(arr), k = 0;
  if (!(r->nodes = fc_calloc((size_t)(n ? n : 1), sizeof *r->nodes)))
    return fc_fail(err, FC_ENOMEM, "$.report.nodes", "out of memory");
  for (const cJSON *v = arr->child; v; v = v->next, k++) {
    char p[64];
    snprintf(p, sizeof p, "$.report.nodes[%d]", k);
    if (!cJSON_IsString(v)) return fc_fail(err, FC_EJSON, p, "expected a node name (string)");
    int i = fc_net_node_find(net, v->valuestring);
    if (i < 0) return fc_fail(err, FC_EPARAM, p, "no element connects to a node named \"%s\"", v->valuestring);
    r->nodes[r->nNodes++] = i;
  }
  return FC_OK;
}

static int parse_limits(fc_net *net, const cJSON *j, const fci_parse_ctx *ctx, fc_error *err)
{
  fci_report_opts *r = &net->report;
  const char *P = "$.report";
  int rc;
  r->shear_lo = 0;
  r->shear_hi = INFINITY;
  if ((rc = fci_get_quantity(j, "pressure_limit", FC_DIM_PRESSURE, 0, INFINITY, FCI_POS,
                             &r->pressure_limit, P, ctx, err)))
    return rc;
  /* report.limits: upper bounds on design-study metrics, checked by `ferrocirc sweep`. */
  const cJSON *lim = j ? cJSON_GetObjectItemCaseSensitive(j, "limits") : NULL;
  if (lim && !cJSON_IsObject(lim)) return fc_fail(err, FC_EJSON, "$.report.limits", "expected an object");
  for (const cJSON *v = lim ? lim->child : NULL; v; v = v->next)
    if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble))
      return fc_fail(err, FC_EJSON, "$.report.limits", "\"%s\": expected a number (an upper "
                     "bound in the metric's column unit)", v->string);
  const cJSON *sr = j ? cJSON_GetObjectItemCaseSensitive(j, "shear_range") : NULL;
  if (!sr) return FC_OK;
  if (!cJSON_IsArray(sr) || cJSON_GetArraySize(sr) != 2)
    return fc_fail(err, FC_EJSON, "$.report.shear_range", "expected [low, high] wall shear stresses");
  double v[2];
  for (int k = 0; k < 2; k++) {
    char p[64];
    snprintf(p, sizeof p, "$.report.shear_range[%d]", k);
    if ((rc = fc_units_json(ctx->units, cJSON_GetArrayItem(sr, k), FC_DIM_PRESSURE, &v[k], p, err)))
      return rc;
  }
  if (!(v[0] >= 0 && v[1] > v[0]))
    return fc_fail(err, FC_EPARAM, "$.report.shear_range", "expected 0 <= low < high, got %g, %g Pa", v[0], v[1]);
  r->shear_lo = v[0];
  r->shear_hi = v[1];
  return FC_OK;
}

int fci_net_parse_report(fc_net *net, const cJSON *j, const fci_parse_ctx *ctx, fc_error *err)
{
  int rc;
  if (j && !cJSON_IsObject(j)) return fc_fail(err, FC_EJSON, "$.report", "expected an object");
  if (j && (rc = fci_check_keys(j, report_keys, NULL, "$.report", err))) return rc;
  if ((rc = parse_track(net, j ? cJSON_GetObjectItemCaseSensitive(j, "elements") : NULL, err)) ||
      (rc = parse_scope(net, j, err)) || (rc = parse_limits(net, j, ctx, err)))
    return rc;
  if ((rc = report_unit(j, "pressure_unit", FC_DIM_PRESSURE, "mbar", net->pressure_unit,
                        sizeof net->pressure_unit, ctx, err)))
    return rc;
  return report_unit(j, "flow_unit", FC_DIM_FLOW, "uL/min", net->flow_unit, sizeof net->flow_unit,
                     ctx, err);
}
