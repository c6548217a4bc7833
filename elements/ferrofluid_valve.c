/* ferrocirc element "ferrofluid_valve": a passive check valve made of a ferrofluid plug held in
 * the channel by permanent magnets. Either `design` (an inline valve design or {"file": ...},
 * see docs/valve-model.md) whose cracking, reseat and blowout pressures come from the valve
 * model (src/valve/), or the explicit numbers of a measured valve (crack_forward, ...). Keys
 * given beside a design override the model's values (e.g. a measured open_resistance).
 * The switching law is elements/valve_law.h. Forward = the design's +x = from -> to. */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "elem.h"
#include "elem_types.h"
#include "ferrocirc/valve.h"
#include "valve_law.h"

typedef struct ffv_param {
  fci_valve_law law;       /* thresholds in use [Pa], resistances */
  int from_design;         /* 1 if the thresholds came from the valve model */
} ffv_param;

static const char *const keys[] = {"design", FCI_VALVE_LAW_KEYS, NULL};

static int from_design(ffv_param *P, const cJSON *d, const char *path, const fci_parse_ctx *ctx,
                       fc_error *err)
{
  char p[256];
  fc_valve_design *des = NULL;
  fc_valve_pressures vp;
  fci_path_key(p, sizeof p, path, "design");
  int rc = fc_valve_design_parse(d, p, ctx->units, ctx->basedir, &des, err);
  if (!rc && (rc = fc_valve_design_solve(des, &vp, err)) && !err->path[0])
    memcpy(err->path, p, sizeof p);
  if (!rc) {
    fci_valve_law *L = &P->law;
    L->crack_f = vp.crack_forward;
    L->crack_r = vp.crack_reverse;
    L->reseat_f = vp.reseat_forward;
    L->reseat_r = vp.reseat_reverse;
    L->blow_f = vp.blowout_forward;
    L->blow_r = vp.blowout_reverse;
    L->R_open = fc_valve_design_open_resistance(des, ctx->fluid->viscosity);
    P->from_design = 1;
  }
  fc_valve_design_free(des);
  return rc;
}

static int ffv_parse(fc_elem *e, const struct cJSON *obj, const char *path,
                     const fci_parse_ctx *ctx, fc_error *err)
{
  ffv_param *P = e->param;
  const cJSON *d = cJSON_GetObjectItemCaseSensitive(obj, "design");
  int rc = d ? from_design(P, d, path, ctx, err) : FC_OK;
  if (!rc) rc = fci_valve_law_parse(&P->law, obj, path, ctx, d != NULL, err);
  if (rc) return rc;
  e->role = FC_ROLE_FLOW;
  e->nRoot = FCI_VALVE_NROOT;
  e->mode = FCI_VALVE_SEALED;
  return FC_OK;
}

static void ffv_flow(const fc_elem *e, double t, const double p[2], const double *x, fci_flow *out)
{
  const ffv_param *P = e->param;
  (void)t; (void)x;
  fci_valve_law_flow(&P->law, e->mode, p, out);
}

static int ffv_linear(const fc_elem *e, double k[3])
{
  const ffv_param *P = e->param;
  return fci_valve_law_linear(&P->law, e->mode, k);
}

static void ffv_root(const fc_elem *e, double t, const double p[2], const double *x, double *g)
{
  const ffv_param *P = e->param;
  (void)t; (void)x;
  fci_valve_law_roots(&P->law, e->mode, p, g);
}

static int ffv_event(fc_elem *e, double t, const int *found, const double p[2], const double *x)
{
  ffv_param *P = e->param;
  (void)x;
  return fci_valve_law_event(&P->law, e, t, found, p);
}

static void ffv_info(const fc_elem *e, const fci_fluid *fluid, fci_info *info)
{
  const ffv_param *P = e->param;
  (void)fluid;
  fci_valve_law_info(&P->law, info, P->from_design ? "ferrofluid valve (model)" : "ferrofluid valve");
}

static const fc_elem_type table = {
  .version = FC_ELEM_V,
  .name = "ferrofluid_valve",
  .szParam = sizeof(ffv_param),
  .nTermDefault = 2,
  .fLinear = 1,
  .keys = keys,
  .xParse = ffv_parse,
  .xFlow = ffv_flow,
  .xLinear = ffv_linear,
  .xRoot = ffv_root,
  .xEvent = ffv_event,
  .xInfo = ffv_info,
};

const fc_elem_type *const fci_type_ferrofluid_valve = &table;
