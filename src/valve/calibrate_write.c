/* ferrocirc — writing a calibrated valve design.
 *
 * The design file of the data (its JSON as loaded, without any row's overrides) with every
 * fitted value replaced by a toleranced value {"value": V, "tolerance": "±2 SE",
 * "distribution": "normal"} in the unit of the original, so that `ferrocirc sweep
 * --monte-carlo` samples it (normal, tolerance = 2 sigma: include/ferrocirc/units.h). A
 * "calibration" block records the data file, the UTC date, the method, the parameters with
 * their standard errors, covariance and correlation (SI), chi-square, and the residual and
 * leave-one-out error of every value. The design parser ignores that block; the Monte Carlo
 * draws the fitted values jointly from its covariance (src/study/mc_joint.c). */
#define _POSIX_C_SOURCE 200809L /* strtok_r, gmtime_r */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdlib.h>
#include <stdio.h>
#include <string.h>
#include <time.h>

#include "ferrocirc/output.h"
#include "calibrate.h"

/* Replace the item at a concrete path of tree by item (taken over). */
static int replace_at(cJSON *tree, const char *path, cJSON *item)
{
  char parent[256];
  const char *p = fci_cal_path_norm(path);
  const char *dot = strrchr(p, '.'), *br = strrchr(p, '[');
  const char *cut = (br && (!dot || br > dot)) ? br : dot;
  snprintf(parent, sizeof parent, "%.*s", cut ? (int)(cut - p) : 0, p);
  cJSON *par = cut ? (cJSON *)fci_cal_path_get(tree, parent) : tree;
  int ok = 0;
  if (par && cut == br) ok = cJSON_ReplaceItemInArray(par, atoi(br + 1), item);
  else if (par) ok = cJSON_ReplaceItemInObjectCaseSensitive(par, cut ? cut + 1 : p, item);
  if (!ok) cJSON_Delete(item);
  return ok ? 0 : -1;
}

static cJSON *toleranced(const fci_cal_param *q, double v, double se)
{
  char buf[96];
  cJSON *o = cJSON_CreateObject();
  if (q->unit[0]) {
    snprintf(buf, sizeof buf, "%.7g %s", v * q->k, q->unit);
    cJSON_AddStringToObject(o, "value", buf);
    snprintf(buf, sizeof buf, "\xc2\xb1%.4g %s", 2.0 * se * q->k, q->unit);
    cJSON_AddStringToObject(o, "tolerance", buf);
  } else {
    cJSON_AddNumberToObject(o, "value", v);
    cJSON_AddNumberToObject(o, "tolerance", 2.0 * se);
  }
  cJSON_AddStringToObject(o, "distribution", "normal");
  return o;
}

static cJSON *matrix(const double *a, int p)
{
  cJSON *m = cJSON_CreateArray();
  for (int i = 0; i < p; i++) cJSON_AddItemToArray(m, cJSON_CreateDoubleArray(a + i * p, p));
  return m;
}

static cJSON *param_list(const fci_cal_model *m, const fci_cal_fit *f)
{
  cJSON *a = cJSON_CreateArray();
  for (int i = 0; i < f->p; i++) {
    const fci_cal_param *q = fci_cal_model_param(m, i);
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "path", q->path);
    cJSON_AddNumberToObject(o, "value", f->theta[i]);          /* SI; no "tolerance" key here, */
    cJSON_AddNumberToObject(o, "standard_error", f->se[i]);    /* so Monte Carlo skips it */
    cJSON_AddNumberToObject(o, "start", q->start);
    cJSON_AddStringToObject(o, "unit_in_design", q->unit);
    if (q->bounded) cJSON_AddItemToObject(o, "bounds", cJSON_CreateDoubleArray((double[]){q->lo, q->hi}, 2));
    cJSON_AddBoolToObject(o, "at_bound", f->at_bound[i]);
    cJSON_AddStringToObject(o, "identifiability", f->ident[i] == FCI_CAL_OK ? "ok" :
                            f->ident[i] == FCI_CAL_WEAK ? "weak" : "not identifiable");
    cJSON_AddItemToArray(a, o);
  }
  return a;
}

static cJSON *residual_list(const fci_cal_data *d, const fci_cal_fit *f, const double *loo)
{
  cJSON *a = cJSON_CreateArray();
  for (int v = 0; v < d->nValue; v++) {
    const fci_cal_row *r = &d->row[d->vrow[v]];
    double meas = r->meas[d->vq[v]];
    cJSON *o = cJSON_CreateObject();
    cJSON_AddNumberToObject(o, "line", r->line);
    cJSON_AddStringToObject(o, "design", r->design);
    cJSON_AddStringToObject(o, "override", r->override);
    cJSON_AddStringToObject(o, "direction", r->reverse ? "reverse" : "forward");
    cJSON_AddStringToObject(o, "quantity", fci_cal_qname(d->vq[v]));
    cJSON_AddNumberToObject(o, "measured_Pa", meas);
    cJSON_AddNumberToObject(o, "model_Pa", f->pred[v]);
    cJSON_AddNumberToObject(o, "residual_Pa", f->pred[v] - meas);
    if (loo && isfinite(loo[v])) cJSON_AddNumberToObject(o, "leave_one_out_error_Pa", loo[v]);
    cJSON_AddItemToArray(a, o);
  }
  return a;
}

static cJSON *calibration_block(const fci_cal_model *m, const fci_cal_fit *f, const double *loo)
{
  const fci_cal_data *d = fci_cal_model_data(m);
  char date[32];
  time_t now = time(NULL);
  struct tm tm;
  gmtime_r(&now, &tm);
  strftime(date, sizeof date, "%Y-%m-%dT%H:%M:%SZ", &tm);
  cJSON *c = cJSON_CreateObject();
  cJSON_AddStringToObject(c, "data", d->file);
  cJSON_AddStringToObject(c, "date", date);
  cJSON_AddStringToObject(c, "method", "weighted nonlinear least squares, Levenberg-Marquardt "
                          "(MINPACK lmdif via cminpack); covariance from the central-difference "
                          "Jacobian at the optimum");
  cJSON_AddStringToObject(c, "weights", d->has_sigma ? "sigma column: covariance (J^T J)^-1" :
                          "none: covariance s^2 (J^T J)^-1, s^2 = reduced chi-square");
  cJSON_AddItemToObject(c, "parameters", param_list(m, f));
  cJSON_AddItemToObject(c, "covariance", matrix(f->cov, f->p));
  cJSON_AddItemToObject(c, "correlation", matrix(f->corr, f->p));
  cJSON_AddNumberToObject(c, "condition_number", isfinite(f->cond) ? f->cond : 1e308);
  cJSON_AddNumberToObject(c, "chi_square", f->chi2);
  cJSON_AddNumberToObject(c, "degrees_of_freedom", f->dof);
  cJSON_AddNumberToObject(c, "reduced_chi_square", f->redchi2);
  cJSON_AddItemToObject(c, "residuals", residual_list(d, f, loo));
  cJSON_AddStringToObject(c, "note", "Fitted values appear in the design as toleranced values "
                          "(tolerance = 2 standard errors, normal). ferrocirc sweep --monte-carlo "
                          "draws them jointly from the covariance above, one draw per sample "
                          "shared by every valve with this calibration. Ignored by the valve "
                          "model.");
  return c;
}

static int build(fci_cal_model *m, const char *design, const fci_cal_fit *f, const double *loo,
                 cJSON **out, fc_error *err)
{
  char paths[64][256];
  cJSON *tree = cJSON_Duplicate(fci_cal_model_tree(m, design), 1);
  if (!tree) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  for (int i = 0; i < f->p; i++) {
    const fci_cal_param *q = fci_cal_model_param(m, i);
    int n = 0;
    fci_cal_path_expand(tree, q->path, paths, 64, &n);
    for (int k = 0; k < n; k++)
      if (replace_at(tree, paths[k], toleranced(q, f->theta[i], f->se[i]))) {
        cJSON_Delete(tree);
        return fc_fail(err, FC_EPARAM, q->path, "cannot set the fitted value in the design");
      }
  }
  cJSON_DeleteItemFromObjectCaseSensitive(tree, "calibration");
  cJSON_AddItemToObject(tree, "calibration", calibration_block(m, f, loo));
  *out = tree;
  return FC_OK;
}

/* cJSON_Print indents with tabs; the files of the project use two spaces. Raw tabs occur only as
 * layout (a tab inside a string is written as \t). */
static void put_spaced(FILE *f, const char *text)
{
  for (const char *s = text; *s; s++) {
    if (*s != '\t') fputc(*s, f);
    else if (s > text && s[-1] == ':') fputc(' ', f);
    else fputs("  ", f);
  }
  fputc('\n', f);
}

int fci_cal_write(const char *file, fci_cal_model *m, const char *design, const fci_cal_fit *f,
                  const double *loo, fc_error *err)
{
  if (!fci_cal_model_tree(m, design))
    return fc_fail(err, FC_EUSAGE, NULL, "--design %s: not a design of %s", design,
                   fci_cal_model_data(m)->file);
  for (int i = 0; i < f->p; i++)
    if (!isfinite(f->se[i]) || f->ident[i] == FCI_CAL_NOT_IDENTIFIABLE)
      return fc_fail(err, FC_EPARAM, fci_cal_model_param(m, i)->path, "not identifiable from "
                     "%s: not writing %s (a calibrated design needs finite uncertainties)",
                     fci_cal_model_data(m)->file, file);
  cJSON *tree = NULL;
  int rc = build(m, design, f, loo, &tree, err);
  if (rc) return rc;
  /* the result must load as a design: check before writing */
  rc = fci_cal_model_check(m, design, tree, err);
  char *text = rc ? NULL : cJSON_Print(tree);
  cJSON_Delete(tree);
  if (rc) return rc;
  if (!text) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  fc_outfile *o = NULL;
  rc = fc_outfile_open(file, &o, err);
  if (!rc) {
    put_spaced(fc_outfile_stream(o), text);
    rc = fc_outfile_commit(o, err);
  }
  cJSON_free(text);
  return rc;
}
