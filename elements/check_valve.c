/* ferrocirc element "check_valve": a generic hysteretic check valve given by its numbers alone
 * (a mechanical duckbill or flap valve from a datasheet, or a bench measurement), so that it can
 * be compared with a ferrofluid valve in the same circuit. The law is elements/valve_law.h:
 * cracking, reseat and blowout thresholds in each direction, open resistance and sealed leak. A
 * mechanical check valve that never opens backwards is modelled by a large crack_reverse.
 * Role FLOW, affine in pressure within each mode; exact switching by root functions. */
#include "elem.h"
#include "elem_types.h"
#include "valve_law.h"

static const char *const keys[] = {FCI_VALVE_LAW_KEYS, NULL};

static int cv_parse(fc_elem *e, const struct cJSON *obj, const char *path,
                    const fci_parse_ctx *ctx, fc_error *err)
{
  fci_valve_law *L = e->param;
  int rc = fci_valve_law_parse(L, obj, path, ctx, 0, err);
  if (rc) return rc;
  e->role = FC_ROLE_FLOW;
  e->nRoot = FCI_VALVE_NROOT;
  e->mode = FCI_VALVE_SEALED;
  return FC_OK;
}

static void cv_flow(const fc_elem *e, double t, const double p[2], const double *x, fci_flow *out)
{
  (void)t; (void)x;
  fci_valve_law_flow(e->param, e->mode, p, out);
}

static int cv_linear(const fc_elem *e, double k[3])
{
  return fci_valve_law_linear(e->param, e->mode, k);
}

static void cv_root(const fc_elem *e, double t, const double p[2], const double *x, double *g)
{
  (void)t; (void)x;
  fci_valve_law_roots(e->param, e->mode, p, g);
}

static int cv_event(fc_elem *e, double t, const int *found, const double p[2], const double *x)
{
  (void)x;
  return fci_valve_law_event(e->param, e, t, found, p);
}

static void cv_info(const fc_elem *e, const fci_fluid *fluid, fci_info *info)
{
  (void)fluid;
  fci_valve_law_info(e->param, info, "check valve");
}

static const fc_elem_type table = {
  .version = FC_ELEM_V,
  .name = "check_valve",
  .szParam = sizeof(fci_valve_law),
  .nTermDefault = 2,
  .fLinear = 1,
  .keys = keys,
  .xParse = cv_parse,
  .xFlow = cv_flow,
  .xLinear = cv_linear,
  .xRoot = cv_root,
  .xEvent = cv_event,
  .xInfo = cv_info,
};

const fc_elem_type *const fci_type_check_valve = &table;
