/* ferrocirc element "resistor": a lumped linear hydraulic resistance.
 *
 * q = (p_from - p_to)/R, the defining law of a linear (Poiseuille-regime) resistance; use it for a
 * measured or datasheet value (tubing, filter, connector). Key: resistance [Pa s/m^3] > 0.
 * Role FLOW, linear. */
#include <stdio.h>

#include "elem.h"
#include "elem_types.h"

typedef struct resistor_param {
  double R; /* resistance [Pa s/m^3] */
} resistor_param;

static const char *const keys[] = {"resistance", NULL};

static int resistor_parse(fc_elem *e, const struct cJSON *obj, const char *path,
                          const fci_parse_ctx *ctx, fc_error *err)
{
  resistor_param *P = e->param;
  int rc = fci_get_quantity(obj, "resistance", FC_DIM_RESISTANCE, 1, 0.0, FCI_POS, &P->R, path,
                            ctx, err);
  if (rc) return rc;
  e->role = FC_ROLE_FLOW;
  return FC_OK;
}

static void resistor_flow(const fc_elem *e, double t, const double p[2], const double *x,
                          fci_flow *out)
{
  const resistor_param *P = e->param;
  (void)t;
  (void)x;
  *out = (fci_flow){0};
  out->q = (p[0] - p[1]) / P->R;
  out->dq_dpa = 1.0 / P->R;
  out->dq_dpb = -1.0 / P->R;
}

static int resistor_linear(const fc_elem *e, double k[3])
{
  const resistor_param *P = e->param;
  k[0] = 0;
  k[1] = 1.0 / P->R;
  k[2] = -1.0 / P->R;
  return 1;
}

static void resistor_info(const fc_elem *e, const fci_fluid *fluid, fci_info *info)
{
  const resistor_param *P = e->param;
  (void)fluid;
  info->resistance = P->R;
  if (info->no_text) return;
  snprintf(info->text, sizeof info->text, "resistor: R = %.4g Pa s/m^3", P->R);
}

static const fc_elem_type table = {
  .version = FC_ELEM_V,
  .name = "resistor",
  .szParam = sizeof(resistor_param),
  .nTermDefault = 2,
  .fLinear = 1,
  .keys = keys,
  .xParse = resistor_parse,
  .xFlow = resistor_flow,
  .xLinear = resistor_linear,
  .xInfo = resistor_info,
};

const fc_elem_type *const fci_type_resistor = &table;
