/* ferrocirc — calibrated valve designs in Monte Carlo studies.
 *
 * A design written by `ferrocirc valve calibrate` holds its fitted values twice: as toleranced
 * values in the design (tolerance 2 standard errors, normal) and in its "calibration" block
 * (parameters with design paths and SI values, covariance in SI). Sampled as independent
 * tolerances they would lose the correlation of the fit. Here the fitted parameters of one
 * calibration are drawn jointly instead, x = theta + L z with L L^T = C (mc_cov.c), in SI, and
 * written into the toleranced values they fit, converted to each value's unit.
 *
 * One draw per calibration and point, shared by every element whose design carries that
 * calibration: the uncertainty of a fit is epistemic (what the bench data leave unknown about
 * the fluid and magnets of a family), not a spread between the valves built from it. If the
 * true Ms is 2 % below the fitted one, it is below in every valve of the family at once.
 * Drawing each valve separately would treat it as a spread between valves: errors that in truth
 * add up over the valves of a network (or cancel, as between a pump's inlet and outlet valves)
 * would partly average out instead, and the spread of any result that depends on several
 * valves would be wrong in either direction. Designs "carry the same
 * calibration" when their "calibration" blocks are identical (same data, date, fit), which
 * covers every element linking one calibrated file and also copies of it with other, unfitted
 * changes (say another gap). Toleranced values that are not fitted (a gap's fabrication
 * tolerance) stay independent per element.
 *
 * Streams: the joint draw of point k comes from its own generator, seeded from (seed, a hash of
 * the calibration block, k), so it depends on nothing but those: not on jobs, shards, element
 * order or the other tolerances. The independent tolerances keep their stream untouched: a
 * value that is not fitted gets the same number as it would without any calibration. */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "sweep.h"
#include "valve/calibrate.h"

typedef struct group {
  int    m;                                         /* fitted parameters */
  uint64_t tag;                                     /* hash of the calibration block */
  double mean[FCI_MC_MAX_JOINT];                    /* fitted values theta [SI] */
  double l[FCI_MC_MAX_JOINT * FCI_MC_MAX_JOINT];    /* L with L L^T = C [SI] */
  int    rank;                                      /* of C; < m: a direction is not sampled */
  const cJSON *block;                               /* borrowed from the study tree (setup only) */
} group;

typedef struct target {
  int    group, param;   /* which fitted value */
  int    index;          /* toleranced value (S->p) it sets */
  double scale;          /* value in that toleranced value's unit per SI unit */
} target;

struct fci_mc_joint {
  int     ngroup, ntarget;
  group  *g;             /* owned */
  target *t;             /* owned */
};

/* FNV-1a over the block as printed (Fowler, Noll & Vo; public-domain hash [from memory]). */
static int block_tag(const cJSON *block, uint64_t *tag)
{
  char *s = cJSON_PrintUnformatted(block);
  if (!s) return -1;
  uint64_t h = 0xcbf29ce484222325ull;
  for (const char *p = s; *p; p++) h = (h ^ (unsigned char)*p) * 0x100000001b3ull;
  cJSON_free(s);
  *tag = fci_rng_mix(h);
  return 0;
}

/* Value in `unit` per SI unit; "" is an SI number. */
static int unit_scale(const fc_units *u, const char *unit, double *k, const char *path,
                      fc_error *err)
{
  fc_error scratch = {0};
  *k = 1.0;
  if (!unit[0]) return FC_OK;
  for (int d = FC_DIM_NONE + 1; d < FC_DIM_COUNT; d++)
    if (!fc_units_out_factor(u, unit, (fc_dim)d, k, "", &scratch)) return FC_OK;
  return fc_fail(err, FC_EPARAM, path, "fitted value in \"%s\": expected a unit that is a pure "
                 "multiple of an SI unit", unit);
}

/* Parameters and covariance of a calibration block into g. */
static int parse_group(const cJSON *c, const char *path, group *g, fc_error *err)
{
  const cJSON *ps = cJSON_GetObjectItemCaseSensitive(c, "parameters");
  const cJSON *cov = cJSON_GetObjectItemCaseSensitive(c, "covariance");
  char sub[600], why[200];
  int m = cJSON_IsArray(ps) ? cJSON_GetArraySize(ps) : 0;
  if (m < 1 || m > FCI_MC_MAX_JOINT)
    return fc_fail(err, FC_EPARAM, path, "calibration: expected \"parameters\", an array of 1..%d "
                   "fitted values", FCI_MC_MAX_JOINT);
  if (!cJSON_IsArray(cov) || cJSON_GetArraySize(cov) != m)
    return fc_fail(err, FC_EPARAM, path, "calibration.covariance: expected a %d x %d array", m, m);
  double cm[FCI_MC_MAX_JOINT * FCI_MC_MAX_JOINT];
  for (int i = 0; i < m; i++) {
    const cJSON *row = cJSON_GetArrayItem(cov, i), *v = cJSON_GetObjectItemCaseSensitive(
        cJSON_GetArrayItem(ps, i), "value");
    snprintf(sub, sizeof sub, "%s.calibration.parameters[%d].value", path, i);
    if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble))
      return fc_fail(err, FC_EPARAM, sub, "expected the fitted value as a number (SI)");
    g->mean[i] = v->valuedouble;
    snprintf(sub, sizeof sub, "%s.calibration.covariance[%d]", path, i);
    if (!cJSON_IsArray(row) || cJSON_GetArraySize(row) != m)
      return fc_fail(err, FC_EPARAM, sub, "expected a row of %d numbers", m);
    for (int j = 0; j < m; j++) {
      const cJSON *x = cJSON_GetArrayItem(row, j);
      if (!cJSON_IsNumber(x))
        return fc_fail(err, FC_EPARAM, sub, "expected a row of %d numbers", m);
      cm[i * m + j] = x->valuedouble;
    }
  }
  snprintf(sub, sizeof sub, "%s.calibration.covariance", path);
  if (fci_mc_cov_factor(m, cm, g->l, &g->rank, why, sizeof why))
    return fc_fail(err, FC_EPARAM, sub, "%s", why);
  g->m = m;
  g->block = c;
  return block_tag(c, &g->tag) ? fc_fail(err, FC_ENOMEM, NULL, "out of memory") : FC_OK;
}

/* Toleranced value `index` is fitted parameter j of group gi: check that the design still says
 * what the calibration says (value and 2 SE, normal), and record it. */
static int add_target(fci_mc_joint *J, const fci_study *S, int gi, int j, int index, fc_error *err)
{
  const group *g = &J->g[gi];
  const fci_param *p = &S->p[index];
  double k, var = 0.0;
  for (int q = 0; q < g->m; q++) var += g->l[j * g->m + q] * g->l[j * g->m + q];
  double se = sqrt(var); /* (L L^T)_jj = C_jj */
  int rc = unit_scale(S->units, p->unit, &k, p->path, err);
  if (rc) return rc;
  /* the design writes the value to 7 and the tolerance to 4 significant digits */
  if (fabs(p->nominal - k * g->mean[j]) > 1e-6 * fabs(k * g->mean[j]) + 0.05 * k * se)
    return fc_fail(err, FC_EPARAM, p->path, "value %.9g %s differs from the calibration's fitted "
                   "value %.9g %s: restore it or remove the \"calibration\" block", p->nominal,
                   p->unit, k * g->mean[j], p->unit);
  if (p->uniform || fabs(p->half - 2.0 * k * se) > 2e-3 * 2.0 * k * se + 1e-300)
    return fc_fail(err, FC_EPARAM, p->path, "tolerance %s%.6g %s (%s) is not the calibration's "
                   "2 standard errors, %.6g %s normal: Monte Carlo draws fitted values from the "
                   "calibration's covariance; restore it or remove the \"calibration\" block",
                   "\xc2\xb1", p->half, p->unit, p->uniform ? "uniform" : "normal",
                   2.0 * k * se, p->unit);
  for (int t = 0; t < J->ntarget; t++)
    if (J->t[t].index == index)
      return fc_fail(err, FC_EPARAM, p->path, "fitted by two parameters of one calibration");
  target *nt = fc_realloc(J->t, (size_t)(J->ntarget + 1) * sizeof *nt);
  if (!nt) return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  J->t = nt;
  J->t[J->ntarget++] = (target){gi, j, index, k};
  return FC_OK;
}

/* The group of the calibration block c (found or added); -1 with err set on failure. */
static int find_group(fci_mc_joint *J, const cJSON *c, const char *path, fc_error *err)
{
  for (int g = 0; g < J->ngroup; g++)
    if (cJSON_Compare(J->g[g].block, c, 1)) return g;
  group *ng = fc_realloc(J->g, (size_t)(J->ngroup + 1) * sizeof *ng);
  if (!ng) { fc_fail(err, FC_ENOMEM, NULL, "out of memory"); return -1; }
  J->g = ng;
  memset(&ng[J->ngroup], 0, sizeof *ng);
  if (parse_group(c, path, &ng[J->ngroup], err)) return -1;
  return J->ngroup++;
}

/* Element i's design: map every fitted parameter to the toleranced values it fits. */
static int add_element(fci_mc_joint *J, const fci_study *S, int i, const cJSON *c, fc_error *err)
{
  char path[64], pat[600];
  snprintf(path, sizeof path, "$.elements[%d].design", i);
  int gi = find_group(J, c, path, err);
  if (gi < 0) return err->code;
  const cJSON *ps = cJSON_GetObjectItemCaseSensitive(c, "parameters");
  for (int j = 0; j < J->g[gi].m; j++) {
    const cJSON *pp = cJSON_GetObjectItemCaseSensitive(cJSON_GetArrayItem(ps, j), "path");
    if (!cJSON_IsString(pp))
      return fc_fail(err, FC_EPARAM, path, "calibration.parameters[%d]: expected \"path\"", j);
    snprintf(pat, sizeof pat, "%s.%s", path, fci_cal_path_norm(pp->valuestring));
    int found = 0, rc;
    for (int k = 0; k < S->np; k++)
      if (fci_cal_path_match(pat, S->p[k].path)) {
        if ((rc = add_target(J, S, gi, j, k, err))) return rc;
        found++;
      }
    if (!found)
      return fc_fail(err, FC_EPARAM, path, "calibration.parameters[%d]: \"%s\" is not a "
                     "toleranced value of the design (the calibration no longer matches it: "
                     "restore the value or remove the \"calibration\" block)", j, pp->valuestring);
  }
  return FC_OK;
}

int fci_mc_joint_new(const fci_study *S, fci_mc_joint **out, fc_error *err)
{
  const cJSON *els = cJSON_GetObjectItemCaseSensitive(S->base, "elements");
  fci_mc_joint *J = fc_calloc(1, sizeof *J);
  int i = 0, rc = J ? FC_OK : fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  *out = NULL;
  for (const cJSON *el = J && cJSON_IsArray(els) ? els->child : NULL; el && !rc; el = el->next, i++) {
    const cJSON *d = cJSON_GetObjectItemCaseSensitive(el, "design");
    const cJSON *c = cJSON_IsObject(d) ? cJSON_GetObjectItemCaseSensitive(d, "calibration") : NULL;
    /* a block without a covariance (written by hand, say) leaves the tolerances independent */
    if (cJSON_IsObject(c) && cJSON_GetObjectItemCaseSensitive(c, "covariance"))
      rc = add_element(J, S, i, c, err);
  }
  for (int g = 0; J && g < J->ngroup; g++) J->g[g].block = NULL;
  if (rc || !J->ngroup) {
    fci_mc_joint_free(J);
    return rc;
  }
  *out = J;
  return FC_OK;
}

void fci_mc_joint_apply(const fci_mc_joint *J, uint64_t seed, long k, double *v)
{
  for (int gi = 0; J && gi < J->ngroup; gi++) {
    const group *g = &J->g[gi];
    double z[FCI_MC_MAX_JOINT], x[FCI_MC_MAX_JOINT];
    fci_rng r;
    fci_rng_seed(&r, fci_rng_mix(seed ^ g->tag), (uint64_t)k);
    for (int j = 0; j < g->m; j++) z[j] = fci_rng_normal(&r);
    for (int i = 0; i < g->m; i++) {
      x[i] = g->mean[i];
      for (int j = 0; j < g->m; j++) x[i] += g->l[i * g->m + j] * z[j];
    }
    for (int t = 0; t < J->ntarget; t++)
      if (J->t[t].group == gi) v[J->t[t].index] = J->t[t].scale * x[J->t[t].param];
  }
}

int fci_mc_joint_groups(const fci_mc_joint *J, int *nfitted, int *ndeficient)
{
  int nf = 0, nd = 0;
  for (int g = 0; J && g < J->ngroup; g++) {
    nf += J->g[g].m;
    nd += J->g[g].rank < J->g[g].m;
  }
  if (nfitted) *nfitted = nf;
  if (ndeficient) *ndeficient = nd;
  return J ? J->ngroup : 0;
}

void fci_mc_joint_free(fci_mc_joint *J)
{
  if (!J) return;
  fc_free(J->g);
  fc_free(J->t);
  fc_free(J);
}
