/* ferrocirc — grid sweeps and Monte Carlo studies: parameters and points (see sweep.h). */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/sim.h"
#include "json_util.h"
#include "net.h"
#include "sweep.h"

#define FCI_MAX_POINTS 10000000L

int fci_study_open(fci_study *S, const char *file, const fc_units *u, fc_error *err)
{
  char *buf;
  size_t len;
  fc_net *net = NULL;
  memset(S, 0, sizeof *S);
  S->file = file;
  S->units = u;
  const char *slash = strrchr(file, '/');
  snprintf(S->basedir, sizeof S->basedir, "%.*s", slash ? (int)(slash - file) : 0, file);
  int rc = fci_read_file(file, FC_NET_MAX_FILE_BYTES, &buf, &len, err);
  if (!rc) {
    rc = fci_json_parse(buf, len, file, &S->base, err);
    fc_free(buf);
  }
  if (!rc) rc = fci_jpath_inline_designs(S->base, S->basedir, err);
  if (!rc) rc = fc_net_load(file, u, &net, err);
  if (!rc) rc = fci_metrics_columns(net, u, &S->cols, err);
  if (!rc) {
    const cJSON *rep = cJSON_GetObjectItemCaseSensitive(S->base, "report");
    const cJSON *lim = rep ? cJSON_GetObjectItemCaseSensitive(rep, "limits") : NULL;
    int n = lim ? cJSON_GetArraySize(lim) : 0;
    S->limit_name = fc_calloc((size_t)n + 1, sizeof *S->limit_name);
    S->limit_value = fc_calloc((size_t)n + 1, sizeof *S->limit_value);
    for (const cJSON *v = lim ? lim->child : NULL; v && S->limit_name; v = v->next) {
      if (fci_metrics_find(&S->cols, v->string) < 0) {
        rc = fc_fail(err, FC_EPARAM, "$.report.limits", "\"%s\" is not a metric of this network "
                     "(e.g. regurgitant_fraction, blowout_margin, rf:ID, margin:ID)", v->string);
        break;
      }
      S->limit_name[S->nlimit] = v->string;
      S->limit_value[S->nlimit++] = v->valuedouble;
    }
  }
  fc_error_set_file(err, file, 0, 0);
  fc_net_free(net);
  return rc;
}

void fci_study_free(fci_study *S)
{
  for (int i = 0; i < S->np; i++) fc_free(S->p[i].path);
  fc_free(S->p);
  fci_metrics_free(&S->cols);
  fc_free(S->limit_name);
  fc_free(S->limit_value);
  fci_mc_joint_free(S->joint);
  cJSON_Delete(S->base);
  memset(S, 0, sizeof *S);
}

static int add_param(fci_study *S, const char *path, fci_param **out, fc_error *err)
{
  fci_param *p = fc_realloc(S->p, (size_t)(S->np + 1) * sizeof *p);
  if (!p) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  S->p = p;
  memset(&p[S->np], 0, sizeof *p);
  if (!(p[S->np].path = fc_strdup(path))) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  *out = &p[S->np++];
  return FC_OK;
}

int fci_study_add_axis(fci_study *S, const char *spec, int steps, fc_error *err)
{
  const char *eq = strchr(spec, '='), *dots = eq ? strstr(eq, "..") : NULL;
  char path[512], a[64], b[64], ua[32], ub[32];
  double lo, hi;
  if (!eq || !dots || eq - spec >= (long)sizeof path || dots - eq - 1 >= (long)sizeof a ||
      strlen(dots + 2) >= sizeof b)
    return fc_fail(err, FC_EUSAGE, NULL, "--vary \"%s\": expected PATH=FROM..TO, e.g. "
                   "elements[v_in].design.magnets[0].gap=0.5mm..3mm", spec);
  snprintf(path, sizeof path, "%.*s", (int)(eq - spec), spec);
  snprintf(a, sizeof a, "%.*s", (int)(dots - eq - 1), eq + 1);
  snprintf(b, sizeof b, "%s", dots + 2);
  if (fci_split_quantity(a, &lo, ua, sizeof ua) || fci_split_quantity(b, &hi, ub, sizeof ub))
    return fc_fail(err, FC_EUSAGE, NULL, "--vary \"%s\": FROM and TO must be numbers with an "
                   "optional unit", spec);
  if (!ua[0]) snprintf(ua, sizeof ua, "%s", ub);
  if (strcmp(ua, ub) && ub[0] && fc_units_convert(S->units, hi, ub, ua, &hi, err))
    return fc_fail(err, FC_EUSAGE, NULL, "--vary \"%s\": %s", spec, err->msg);
  if (steps < 1 || steps > 100000) return fc_fail(err, FC_EUSAGE, NULL, "--steps must be 1..100000");
  cJSON *item;
  cJSON *probe = cJSON_Duplicate(S->base, 1);
  int rc = fci_jpath_find(probe, path, S->basedir, 0, &item, err);
  cJSON_Delete(probe);
  if (rc) return rc;
  fci_param *p;
  if ((rc = add_param(S, path, &p, err))) return rc;
  snprintf(p->unit, sizeof p->unit, "%s", ua);
  p->lo = lo;
  p->hi = hi;
  p->steps = steps;
  long n = S->npoints ? S->npoints : 1;
  if (n * steps > FCI_MAX_POINTS) return fc_fail(err, FC_EUSAGE, NULL, "more than %ld points", FCI_MAX_POINTS);
  S->npoints = n * steps;
  return FC_OK;
}

/* A toleranced value {"value", "tolerance", "distribution"} found at path: record it. */
static int add_toleranced(fci_study *S, const cJSON *o, const char *path, fc_error *err)
{
  const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, "value");
  const cJSON *t = cJSON_GetObjectItemCaseSensitive(o, "tolerance");
  const cJSON *d = cJSON_GetObjectItemCaseSensitive(o, "distribution");
  double x, h;
  char uv[32] = "", ut[32] = "";
  if (cJSON_IsNumber(v)) x = v->valuedouble;
  else if (!cJSON_IsString(v) || fci_split_quantity(v->valuestring, &x, uv, sizeof uv))
    return fc_fail(err, FC_EPARAM, path, "toleranced value: expected \"value\" as a quantity");
  if (cJSON_IsNumber(t)) h = t->valuedouble;
  else {
    const char *s = cJSON_IsString(t) ? t->valuestring : "";
    if (!strncmp(s, "\xc2\xb1", 2)) s += 2;
    else if (!strncmp(s, "+/-", 3)) s += 3;
    else if (!strncmp(s, "+-", 2)) s += 2;
    if (fci_split_quantity(s, &h, ut, sizeof ut))
      return fc_fail(err, FC_EPARAM, path, "toleranced value: expected \"tolerance\" such as \"±0.05 mm\"");
  }
  if (ut[0] && strcmp(ut, uv) && fc_units_convert(S->units, h, ut, uv, &h, err)) {
    snprintf(err->path, sizeof err->path, "%s.tolerance", path);
    return err->code;
  }
  fci_param *p;
  int rc = add_param(S, path, &p, err);
  if (rc) return rc;
  snprintf(p->unit, sizeof p->unit, "%s", uv);
  p->nominal = x;
  p->half = fabs(h);
  p->uniform = cJSON_IsString(d) && !strcmp(d->valuestring, "uniform");
  return FC_OK;
}

static int walk(fci_study *S, const cJSON *j, char *path, size_t n, size_t used, fc_error *err)
{
  int rc = FC_OK, i = 0;
  if (cJSON_IsObject(j) && cJSON_GetObjectItemCaseSensitive(j, "value") &&
      cJSON_GetObjectItemCaseSensitive(j, "tolerance"))
    return add_toleranced(S, j, path, err);
  for (const cJSON *c = (cJSON_IsObject(j) || cJSON_IsArray(j)) ? j->child : NULL; c && !rc; c = c->next, i++) {
    int w = cJSON_IsObject(j) ? snprintf(path + used, n - used, ".%s", c->string)
                              : snprintf(path + used, n - used, "[%d]", i);
    if (w < 0 || used + (size_t)w >= n) return fc_fail(err, FC_EPARAM, path, "path too long");
    rc = walk(S, c, path, n, used + (size_t)w, err);
    path[used] = '\0';
  }
  return rc;
}

int fci_study_monte_carlo(fci_study *S, long samples, uint64_t seed, fc_error *err)
{
  char path[512] = "$";
  if (S->np) return fc_fail(err, FC_EUSAGE, NULL, "--monte-carlo cannot be combined with --vary");
  if (samples < 1 || samples > FCI_MAX_POINTS)
    return fc_fail(err, FC_EUSAGE, NULL, "--monte-carlo takes 1..%ld samples", FCI_MAX_POINTS);
  int rc = walk(S, S->base, path, sizeof path, 1, err);
  if (!rc) rc = fci_mc_joint_new(S, &S->joint, err);
  if (rc) { fc_error_set_file(err, S->file, 0, 0); return rc; }
  if (!S->np)
    return fc_fail(err, FC_EUSAGE, NULL, "%s has no toleranced values ({\"value\": ..., "
                   "\"tolerance\": \"±...\"}); nothing to sample", S->file);
  S->mc = 1;
  S->seed = seed;
  S->npoints = samples;
  return FC_OK;
}

/* Grid: the first axis varies slowest. Monte Carlo: one stream per point; fitted values of
 * calibrated designs are then replaced by their joint draw (mc_joint.c). */
void fci_study_point(const fci_study *S, long k, double *v)
{
  if (S->mc) {
    fci_rng r;
    fci_rng_seed(&r, S->seed, (uint64_t)k);
    for (int i = 0; i < S->np; i++) {
      const fci_param *p = &S->p[i];
      double z = p->uniform ? 2 * fci_rng_uniform(&r) - 1 : 0.5 * fci_rng_normal(&r);
      v[i] = p->nominal + p->half * z;
    }
    fci_mc_joint_apply(S->joint, S->seed, k, v);
    return;
  }
  for (int i = S->np - 1; i >= 0; i--) {
    const fci_param *p = &S->p[i];
    int j = (int)(k % p->steps);
    k /= p->steps;
    v[i] = p->steps == 1 ? p->lo : p->lo + (p->hi - p->lo) * j / (p->steps - 1);
  }
}

void fci_study_header(const fci_study *S, FILE *f)
{
  char buf[600];
  fputs("point", f);
  for (int i = 0; i < S->np; i++) {
    snprintf(buf, sizeof buf, "%s%s%s%s", S->p[i].path, S->p[i].unit[0] ? " [" : "",
             S->p[i].unit, S->p[i].unit[0] ? "]" : "");
    fputc(',', f);
    fci_csv_field(f, buf);
  }
  for (int k = 0; k < S->cols.n; k++) {
    fputc(',', f);
    fci_csv_field(f, S->cols.name[k]);
  }
  fputs(",status\n", f);
}

static int point_result(const fci_study *S, const double *v, fci_metrics *m, fc_error *err)
{
  cJSON *tree = cJSON_Duplicate(S->base, 1);
  int rc = tree ? FC_OK : fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  for (int i = 0; !rc && i < S->np; i++) {
    char txt[96];
    snprintf(txt, sizeof txt, "%.9g %s", v[i], S->p[i].unit);
    cJSON *val = S->p[i].unit[0] ? cJSON_CreateString(txt) : cJSON_CreateNumber(v[i]);
    rc = val ? fci_jpath_set(tree, S->p[i].path, val, S->basedir, err)
             : fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  }
  char *text = rc ? NULL : cJSON_PrintUnformatted(tree);
  cJSON_Delete(tree);
  if (!rc && !text) rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  fc_net *net = NULL;
  fc_sim_result *r = NULL;
  if (!rc && (rc = fc_net_load_buffer(text, strlen(text), S->file, S->basedir, S->units, &net, err)))
    err->line = err->col = 0; /* a position in the generated text would mislead */
  free(text);
  if (!rc) rc = fc_sim_run(net, NULL, &r, err);
  if (!rc) fci_metrics_values(net, r, m);
  fc_sim_result_free(r);
  fc_net_free(net);
  return rc;
}

int fci_study_row(const fci_study *S, long k, FILE *f)
{
  double v[64];
  fc_error err = {0};
  fci_metrics m = S->cols;
  double vals[1024], *buf = S->cols.n <= 1024 ? vals : fc_malloc((size_t)S->cols.n * sizeof *buf);
  if (S->np > 64 || !buf) return -1;
  m.value = buf;
  fci_study_point(S, k, v);
  int rc = point_result(S, v, &m, &err);
  fprintf(f, "%ld", k);
  for (int i = 0; i < S->np; i++) fprintf(f, ",%.9g", v[i]);
  for (int c = 0; c < S->cols.n; c++) {
    if (rc || isnan(buf[c])) fputc(',', f);
    else fprintf(f, ",%.9g", buf[c] + 0.0);
  }
  fputc(',', f);
  if (rc) {
    char msg[1400];
    fci_csv_field(f, fc_error_format(&err, msg, sizeof msg));
  } else fputs("ok", f);
  fputc('\n', f);
  if (buf != vals) fc_free(buf);
  return rc ? 1 : 0;
}
