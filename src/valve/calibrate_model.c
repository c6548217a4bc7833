/* ferrocirc — the calibration model: measured rows -> valve designs -> predicted pressures.
 *
 * Each distinct design file is loaded once; each distinct (design, override) pair is a
 * configuration whose overrides are applied once, at load. An evaluation sets the fitted values
 * on every configuration that a used row needs (fc_valve_design_set, which re-parses and so
 * re-checks the design) and solves it once for both directions. Fit paths may use "[*]" for
 * every element of an array ("magnets[*].remanence": one effective remanence for all magnets). */
#define _POSIX_C_SOURCE 200809L /* strtok_r, gmtime_r */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "calibrate.h"
#include "valve_int.h"

/* Replace err by a message located at a CSV row (the design's own file name is dropped). */
int fci_cal_row_error(fc_error *err, const fci_cal_data *d, int line, const char *path,
                     const char *what)
{
  char msg[sizeof err->msg + 320];
  int code = err->code ? err->code : FC_EPARAM;
  /* A message too long for the error is cut, on purpose: the row and path still locate it. */
  if (snprintf(msg, sizeof msg, "%s: %s", what, err->msg) >= (int)sizeof msg)
    msg[sizeof msg - 1] = '\0';
  fc_error_clear(err);
  fc_fail(err, code, path, "%s", msg);
  fc_error_set_file(err, d->file, line, 1);
  return code;
}

int fci_cal_find_design(const fci_cal_model *m, const char *name)
{
  for (int i = 0; i < m->nDesign; i++)
    if (!strcmp(m->name[i], name)) return i;
  return -1;
}


int fci_cal_model_nparam(const fci_cal_model *m) { return m->nParam; }
const fci_cal_param *fci_cal_model_param(const fci_cal_model *m, int i) { return &m->param[i]; }
const fci_cal_data *fci_cal_model_data(const fci_cal_model *m) { return m->data; }
long fci_cal_model_evals(const fci_cal_model *m) { return m->nEval; }

const struct cJSON *fci_cal_model_tree(const fci_cal_model *m, const char *design)
{
  int i = design ? fci_cal_find_design(m, design) : 0;
  return i >= 0 ? m->design[i]->tree : NULL;
}

static int load_designs(fci_cal_model *m, fc_error *err)
{
  const fci_cal_data *d = m->data;
  m->design = fc_calloc((size_t)d->nRow, sizeof *m->design);
  m->name = fc_calloc((size_t)d->nRow, sizeof *m->name);
  if (!m->design || !m->name) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  for (int i = 0; i < d->nRow; i++) {
    const char *nm = d->row[i].design;
    if (fci_cal_find_design(m, nm) >= 0) continue;
    char full[1024];
    if (nm[0] == '/' || !d->dir[0]) snprintf(full, sizeof full, "%s", nm);
    else snprintf(full, sizeof full, "%s/%s", d->dir, nm);
    int rc = fc_valve_design_load(full, m->u, &m->design[m->nDesign], err);
    if (rc) {
      char what[300];
      snprintf(what, sizeof what, "design %s (%s)", nm, err->file);
      return fci_cal_row_error(err, d, d->row[i].line, NULL, what);
    }
    m->name[m->nDesign++] = nm;
  }
  return FC_OK;
}

/* Apply "K=V;K=V" to base; *out owned by the caller (a copy even when there is nothing). */
static int apply_overrides(const fci_cal_model *m, const fc_valve_design *base, const char *ov,
                           int line, fc_valve_design **out, fc_error *err)
{
  char buf[2048], what[600];
  fc_valve_design *cur = NULL;
  int rc = fc_valve_design_parse(base->tree, "$", m->u, base->basedir, &cur, err);
  if ((int)strlen(ov) >= (int)sizeof buf) {
    fc_fail(err, FC_EPARAM, NULL, "longer than %d characters", (int)sizeof buf - 1);
    rc = fci_cal_row_error(err, m->data, line, NULL, "override");
  }
  snprintf(buf, sizeof buf, "%s", ov);
  for (char *save = NULL, *t = strtok_r(buf, ";", &save); t && !rc;
       t = strtok_r(NULL, ";", &save)) {
    while (*t == ' ') t++;
    char *eq = strchr(t, '=');
    if (!*t) continue;
    if (!eq || eq == t) {
      fc_fail(err, FC_EPARAM, NULL, "expected PATH=VALUE (e.g. magnets[0].gap=1.5 mm), got \"%s\"", t);
      rc = fci_cal_row_error(err, m->data, line, NULL, "override");
      break;
    }
    *eq = '\0';
    for (char *e = eq - 1; e > t && *e == ' '; e--) *e = '\0';
    for (int i = 0; i < m->nParam && !rc; i++)
      if (fci_cal_path_match(m->param[i].path, t)) {
        fc_fail(err, FC_EPARAM, NULL, "this value is being fitted (--fit %s)", m->param[i].path);
        rc = fci_cal_row_error(err, m->data, line, t, "override");
      }
    fc_valve_design *next = NULL;
    if (!rc && (rc = fc_valve_design_set(cur, t, eq + 1, m->u, &next, err))) {
      snprintf(what, sizeof what, "override %s=%s", t, eq + 1);
      rc = fci_cal_row_error(err, m->data, line, t, what);
    }
    if (!rc) {
      fc_valve_design_free(cur);
      cur = next;
    }
  }
  if (rc) fc_valve_design_free(cur);
  else *out = cur;
  return rc;
}

static int find_config(const fci_cal_model *m, int design, const char *ov)
{
  for (int i = 0; i < m->nConfig; i++)
    if (m->cfg[i].design == design && !strcmp(m->cfg[i].override, ov)) return i;
  return -1;
}

/* The concrete fit paths of a configuration. */
static int config_paths(fci_cal_model *m, fci_cal_config *c, fc_error *err)
{
  char tmp[FCI_CAL_MAX_EXPAND][256];
  c->path = fc_calloc((size_t)m->nParam * FCI_CAL_MAX_EXPAND, sizeof *c->path);
  c->param = fc_calloc((size_t)m->nParam * FCI_CAL_MAX_EXPAND, sizeof *c->param);
  if (!c->path || !c->param) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  for (int i = 0; i < m->nParam; i++) {
    int n = 0, rc = fci_cal_path_expand(c->d->tree, m->param[i].path, tmp, FCI_CAL_MAX_EXPAND, &n);
    if (rc || n == 0) {
      fc_fail(err, FC_EPARAM, m->param[i].path, rc == -2 ? "malformed design path (expected "
              "e.g. ferrofluid.saturation_magnetization or magnets[*].remanence)" : rc ?
              "too many matches or too long" : "no such value in this design: a fitted value "
              "must be given (as a starting value) in every design of the data");
      char what[300];
      snprintf(what, sizeof what, "--fit, design %s", m->name[c->design]);
      return fci_cal_row_error(err, m->data, c->line, m->param[i].path, what);
    }
    for (int k = 0; k < n; k++) {
      memcpy(c->path[c->nPath], tmp[k], sizeof tmp[k]); /* both are char[256] */
      c->param[c->nPath++] = i;
    }
  }
  return FC_OK;
}

static int make_configs(fci_cal_model *m, fc_error *err)
{
  const fci_cal_data *d = m->data;
  m->cfg = fc_calloc((size_t)d->nRow, sizeof *m->cfg);
  m->rowcfg = fc_calloc((size_t)d->nRow, sizeof *m->rowcfg);
  if (!m->cfg || !m->rowcfg) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  for (int i = 0; i < d->nRow; i++) {
    const fci_cal_row *r = &d->row[i];
    int des = fci_cal_find_design(m, r->design), k = find_config(m, des, r->override);
    if (k < 0) {
      fci_cal_config *c = &m->cfg[k = m->nConfig++];
      c->design = des;
      c->override = r->override;
      c->line = r->line;
      int rc = apply_overrides(m, m->design[des], r->override, r->line, &c->d, err);
      if (!rc) rc = config_paths(m, c, err);
      if (rc) return rc;
    }
    m->rowcfg[i] = k;
  }
  return FC_OK;
}

/* Starting value at a concrete path of the first design: SI value, unit and dimension. */
static int start_value(fci_cal_model *m, fci_cal_param *p, int *dim, const char *cpath,
                       fc_error *err)
{
  const cJSON *it = fci_cal_path_get(m->cfg[0].d->tree, cpath);
  if (cJSON_IsObject(it)) it = cJSON_GetObjectItemCaseSensitive(it, "value");
  *dim = -1;
  p->k = 1.0;
  p->unit[0] = '\0';
  if (cJSON_IsNumber(it)) {
    p->start = it->valuedouble;
    return FC_OK;
  }
  if (!cJSON_IsString(it))
    return fc_fail(err, FC_EPARAM, p->path, "not a numeric value in design %s (expected a "
                   "number or a quantity such as \"1.3 T\")", m->name[0]);
  for (int d = 0; d < FC_DIM_COUNT; d++) {
    fc_error e;
    fc_error_clear(&e);
    if (fc_units_parse(m->u, it->valuestring, (fc_dim)d, &p->start, p->path, &e)) continue;
    *dim = d;
    char *u;
    strtod(it->valuestring, &u);
    while (*u == ' ') u++;
    if (*u && !fc_units_out_factor(m->u, u, (fc_dim)d, &p->k, p->path, &e))
      snprintf(p->unit, sizeof p->unit, "%s", u);
    else p->k = 1.0;
    return FC_OK;
  }
  return fc_fail(err, FC_EPARAM, p->path, "\"%s\" in design %s is not a quantity",
                 it->valuestring, m->name[0]);
}

static int parse_fit_list(fci_cal_model *m, const char *list, fc_error *err)
{
  char buf[4096];
  snprintf(buf, sizeof buf, "%s", list);
  for (char *save = NULL, *t = strtok_r(buf, ",", &save); t; t = strtok_r(NULL, ",", &save)) {
    while (*t == ' ') t++;
    if (!*t) continue;
    if (m->nParam == FCI_CAL_MAX_PARAM)
      return fc_fail(err, FC_EUSAGE, NULL, "--fit: at most %d parameters", FCI_CAL_MAX_PARAM);
    if (strlen(t) >= sizeof m->param[0].path)
      return fc_fail(err, FC_EUSAGE, NULL, "--fit: path too long: %s", t);
    for (int i = 0; i < m->nParam; i++)
      if (!strcmp(fci_cal_path_norm(m->param[i].path), fci_cal_path_norm(t)))
        return fc_fail(err, FC_EUSAGE, NULL, "--fit: %s given twice", t);
    snprintf(m->param[m->nParam++].path, sizeof m->param[0].path, "%s", fci_cal_path_norm(t));
  }
  if (!m->nParam) return fc_fail(err, FC_EUSAGE, NULL, "--fit: expected PATH[,PATH...]");
  return FC_OK;
}

int fci_cal_model_new(const fci_cal_data *d, const fc_units *u, const char *fit_paths,
                      fci_cal_model **out, fc_error *err)
{
  *out = NULL;
  fci_cal_model *m = fc_calloc(1, sizeof *m);
  if (!m) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  m->data = d;
  m->u = u;
  int rc = parse_fit_list(m, fit_paths, err);
  if (!rc) rc = load_designs(m, err);
  if (!rc) rc = make_configs(m, err);
  if (!rc && !(m->need = fc_calloc((size_t)m->nConfig, 1)))
    rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  for (int i = 0; i < m->nParam && !rc; i++) {
    int c = 0;
    while (m->cfg[0].param[c] != i) c++;
    rc = start_value(m, &m->param[i], &m->dim[i], m->cfg[0].path[c], err);
    if (rc) rc = fci_cal_row_error(err, d, m->cfg[0].line, m->param[i].path, "--fit");
  }
  if (rc) {
    fci_cal_model_free(m);
    return rc;
  }
  *out = m;
  return FC_OK;
}

void fci_cal_model_free(fci_cal_model *m)
{
  if (!m) return;
  for (int i = 0; i < m->nConfig; i++) {
    fc_valve_design_free(m->cfg[i].d);
    fc_free(m->cfg[i].path);
    fc_free(m->cfg[i].param);
  }
  for (int i = 0; i < m->nDesign; i++) fc_valve_design_free(m->design[i]);
  fc_free(m->design);
  fc_free(m->name);
  fc_free(m->cfg);
  fc_free(m->rowcfg);
  fc_free(m->need);
  fc_free(m);
}

/* "PATH=LO..HI": LO, HI with an optional unit, else in the unit of the value in the design. */
int fci_cal_model_bounds(fci_cal_model *m, const char *spec, fc_error *err)
{
  const char *eq = strchr(spec, '='), *dots = eq ? strstr(eq, "..") : NULL;
  char path[256], t[2][96];
  double v[2];
  if (!eq || !dots || eq == spec || (size_t)(eq - spec) >= sizeof path)
    return fc_fail(err, FC_EUSAGE, NULL, "--bounds \"%s\": expected PATH=LO..HI, e.g. "
                   "ferrofluid.saturation_magnetization=5kA/m..30kA/m", spec);
  snprintf(path, sizeof path, "%.*s", (int)(eq - spec), spec);
  snprintf(t[0], sizeof t[0], "%.*s", (int)(dots - eq - 1), eq + 1);
  snprintf(t[1], sizeof t[1], "%s", dots + 2);
  int i = 0;
  while (i < m->nParam && strcmp(m->param[i].path, fci_cal_path_norm(path))) i++;
  if (i == m->nParam) return fc_fail(err, FC_EUSAGE, NULL, "--bounds: %s is not a --fit path", path);
  fci_cal_param *p = &m->param[i];
  for (int k = 0; k < 2; k++) {
    char *end;
    v[k] = strtod(t[k], &end);
    while (*end == ' ') end++;
    if (end == t[k]) return fc_fail(err, FC_EUSAGE, NULL, "--bounds \"%s\": LO and HI must be "
                                    "numbers with an optional unit", spec);
    if (!*end) v[k] /= p->k;
    else if (m->dim[i] < 0 || fc_units_parse(m->u, t[k], (fc_dim)m->dim[i], &v[k], "--bounds", err))
      return fc_fail(err, FC_EUSAGE, NULL, "--bounds \"%s\": \"%s\" is not a value of the kind "
                     "of %s (%s)", spec, t[k], path, p->unit[0] ? p->unit : "SI number, no unit");
  }
  if (!(v[0] < v[1])) return fc_fail(err, FC_EUSAGE, NULL, "--bounds \"%s\": LO must be below HI", spec);
  if (!(p->start > v[0] && p->start < v[1]))
    return fc_fail(err, FC_EUSAGE, NULL, "--bounds \"%s\": the starting value %g %s from the "
                   "design lies outside", spec, p->start * p->k, p->unit[0] ? p->unit : "(SI)");
  p->lo = v[0];
  p->hi = v[1];
  p->bounded = 1;
  return FC_OK;
}
