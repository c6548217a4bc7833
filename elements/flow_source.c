/* ferrocirc element "flow_source": an ideal flow source (syringe pump, displacement pump).
 *
 * q(t) from -> to is imposed whatever the pressures: the ideal current source of the electrical
 * analogy. A real pump's stall pressure and ripple are not modelled here; give the ripple in the
 * waveform (e.g. a table or a sine, physics reference §8). Key: flow [m^3/s, waveform].
 * Role FLOW (affine: no pressure dependence). */
#include <stdio.h>

#include "elem.h"
#include "elem_types.h"

typedef struct flow_source_param {
  fc_waveform *flow; /* imposed flow [m^3/s] (owned) */
} flow_source_param;

static const char *const keys[] = {"flow", NULL};

static void flow_source_free(fc_elem *e)
{
  flow_source_param *P = e->param;
  if (!P) return;
  fc_waveform_free(P->flow);
  P->flow = NULL;
}

static int flow_source_parse(fc_elem *e, const struct cJSON *obj, const char *path,
                             const fci_parse_ctx *ctx, fc_error *err)
{
  flow_source_param *P = e->param;
  int rc = fci_get_waveform(obj, "flow", FC_DIM_FLOW, 1, 0.0, &P->flow, path, ctx, err);
  if (rc) return rc;
  e->role = FC_ROLE_FLOW;
  return FC_OK;
}

static void flow_source_flow(const fc_elem *e, double t, const double p[2], const double *x,
                             fci_flow *out)
{
  const flow_source_param *P = e->param;
  (void)p;
  (void)x;
  *out = (fci_flow){0};
  out->q = fc_waveform_eval(P->flow, t);
}

static double flow_source_corner(const fc_elem *e, double t, int *smooth)
{
  const flow_source_param *P = e->param;
  *smooth = fc_waveform_corners_smooth(P->flow);
  return fc_waveform_next_corner(P->flow, t);
}

static void flow_source_info(const fc_elem *e, const fci_fluid *fluid, fci_info *info)
{
  const flow_source_param *P = e->param;
  (void)fluid;
  info->period = fc_waveform_period(P->flow);
  if (info->no_text) return;
  snprintf(info->text, sizeof info->text, "flow source: mean %.4g m^3/s, period %.4g s",
           fc_waveform_mean(P->flow), info->period);
}

static const fc_elem_type table = {
  .version = FC_ELEM_V,
  .name = "flow_source",
  .szParam = sizeof(flow_source_param),
  .nTermDefault = 2,
  .fLinear = 1,
  .keys = keys,
  .xParse = flow_source_parse,
  .xFree = flow_source_free,
  .xFlow = flow_source_flow,
  .xInfo = flow_source_info,
  .xCorner = flow_source_corner,
};

const fc_elem_type *const fci_type_flow_source = &table;
