/* ferrocirc — evaluating the calibration model: set the fitted values on each configuration,
 * solve it, pick the measured quantities (see calibrate_model.c for the set-up). */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "calibrate.h"
#include "valve_int.h"

/* Value v [SI] of parameter i as text for fc_valve_design_set: SI numbers keep every digit. */
static void value_text(double v, char *buf, size_t n) { snprintf(buf, n, "%.17g", v); }

/* Configuration c with theta set, solved. */
static int solve_config(fci_cal_model *m, fci_cal_config *c, const double *theta, fc_error *err)
{
  fc_valve_design *cur = c->d, *next = NULL;
  char val[64];
  int rc = FC_OK;
  for (int k = 0; k < c->nPath && !rc; k++) {
    value_text(theta[c->param[k]], val, sizeof val);
    rc = fc_valve_design_set(cur, c->path[k], val, m->u, &next, err);
    if (cur != c->d) fc_valve_design_free(cur);
    cur = next;
  }
  if (!rc) rc = fc_valve_design_solve(cur, &c->p, err);
  m->nEval++;
  if (cur != c->d) fc_valve_design_free(cur);
  if (rc) {
    char what[700];
    int w = snprintf(what, sizeof what, "design %s%s%s at", m->name[c->design],
                     c->override[0] ? " with " : "", c->override);
    for (int i = 0; i < m->nParam && w > 0 && (size_t)w < sizeof what; i++)
      w += snprintf(what + w, sizeof what - (size_t)w, " %s=%g", m->param[i].path, theta[i]);
    return fci_cal_row_error(err, m->data, c->line, NULL, what);
  }
  return FC_OK;
}

static double pick(const fc_valve_pressures *p, int reverse, int q)
{
  if (q == FCI_CAL_CRACK) return reverse ? p->crack_reverse : p->crack_forward;
  if (q == FCI_CAL_RESEAT) return reverse ? p->reseat_reverse : p->reseat_forward;
  return reverse ? p->blowout_reverse : p->blowout_forward;
}

int fci_cal_predict(fci_cal_model *m, const double *theta, const unsigned char *use,
                    double *pred, fc_error *err)
{
  const fci_cal_data *d = m->data;
  memset(m->need, 0, (size_t)m->nConfig);
  for (int i = 0; i < d->nRow; i++)
    if (!use || use[i]) m->need[m->rowcfg[i]] = 1;
  for (int c = 0; c < m->nConfig; c++) {
    int rc = m->need[c] ? solve_config(m, &m->cfg[c], theta, err) : FC_OK;
    if (rc) return rc;
  }
  for (int k = 0; k < d->nValue; k++) {
    int r = d->vrow[k];
    pred[k] = (!use || use[r]) ? pick(&m->cfg[m->rowcfg[r]].p, d->row[r].reverse, d->vq[k]) : NAN;
  }
  return FC_OK;
}

int fci_cal_model_design(fci_cal_model *m, const char *design, const double *theta,
                         fc_valve_design **out, fc_error *err)
{
  int i = design ? fci_cal_find_design(m, design) : 0;
  *out = NULL;
  if (i < 0) return fc_fail(err, FC_EUSAGE, NULL, "design %s is not in %s", design, m->data->file);
  char tmp[FCI_CAL_MAX_EXPAND][256], val[64];
  fc_valve_design *cur = NULL;
  int rc = fc_valve_design_parse(m->design[i]->tree, "$", m->u, m->design[i]->basedir, &cur, err);
  for (int p = 0; p < m->nParam && !rc; p++) {
    int n = 0;
    fci_cal_path_expand(cur->tree, m->param[p].path, tmp, FCI_CAL_MAX_EXPAND, &n);
    value_text(theta[p], val, sizeof val);
    for (int k = 0; k < n && !rc; k++) {
      fc_valve_design *next = NULL;
      rc = fc_valve_design_set(cur, tmp[k], val, m->u, &next, err);
      fc_valve_design_free(cur);
      cur = next;
    }
  }
  if (rc) fc_valve_design_free(cur);
  else *out = cur;
  return rc;
}

int fci_cal_model_check(const fci_cal_model *m, const char *design, const struct cJSON *tree,
                        fc_error *err)
{
  int i = design ? fci_cal_find_design(m, design) : 0;
  fc_valve_design *d = NULL;
  if (i < 0) return fc_fail(err, FC_EUSAGE, NULL, "design %s is not in %s", design, m->data->file);
  int rc = fc_valve_design_parse(tree, "$", m->u, m->design[i]->basedir, &d, err);
  fc_valve_design_free(d);
  return rc;
}
