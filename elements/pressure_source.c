/* ferrocirc element "pressure_source": a pressure rise P(t) = p(to) - p(from) (pressure
 * controller, pump head), ideal or with an internal resistance.
 *
 * Without "resistance": the ideal voltage source of the electrical analogy, role LINK, xFix = P(t);
 * the engine takes its flow from conservation at the driven node. With "resistance" R > 0: the
 * Thevenin form, role FLOW, q = (p_from + P(t) - p_to)/R, which also models a regulator whose
 * output sags linearly with flow. Keys: pressure [Pa, waveform], resistance [Pa s/m^3] > 0. */
#include <cjson/cJSON.h>
#include <stdio.h>

#include "elem.h"
#include "elem_types.h"

typedef struct pressure_source_param {
  fc_waveform *rise; /* P(t) = p(to) - p(from) [Pa] (owned) */
  double R;          /* internal resistance [Pa s/m^3], 0 = ideal */
} pressure_source_param;

static const char *const keys[] = {"pressure", "resistance", NULL};

static void pressure_source_free(fc_elem *e)
{
  pressure_source_param *P = e->param;
  if (!P) return;
  fc_waveform_free(P->rise);
  P->rise = NULL;
}

static int pressure_source_parse(fc_elem *e, const struct cJSON *obj, const char *path,
                                 const fci_parse_ctx *ctx, fc_error *err)
{
  pressure_source_param *P = e->param;
  int rc = FC_OK;
  if (cJSON_GetObjectItemCaseSensitive(obj, "resistance"))
    rc = fci_get_quantity(obj, "resistance", FC_DIM_RESISTANCE, 1, 0.0, FCI_POS, &P->R, path,
                          ctx, err);
  if (!rc) rc = fci_get_waveform(obj, "pressure", FC_DIM_PRESSURE, 1, 0.0, &P->rise, path, ctx,
                                 err);
  if (rc) {
    pressure_source_free(e);
    return rc;
  }
  e->role = P->R > 0 ? FC_ROLE_FLOW : FC_ROLE_LINK;
  return FC_OK;
}

static void pressure_source_flow(const fc_elem *e, double t, const double p[2], const double *x,
                                 fci_flow *out)
{
  const pressure_source_param *P = e->param;
  (void)x;
  *out = (fci_flow){0};
  out->q = (p[0] + fc_waveform_eval(P->rise, t) - p[1]) / P->R;
  out->dq_dpa = 1.0 / P->R;
  out->dq_dpb = -1.0 / P->R;
}

static double pressure_source_fix(const fc_elem *e, double t)
{
  const pressure_source_param *P = e->param;
  return fc_waveform_eval(P->rise, t);
}

static double pressure_source_corner(const fc_elem *e, double t, int *smooth)
{
  const pressure_source_param *P = e->param;
  *smooth = fc_waveform_corners_smooth(P->rise);
  return fc_waveform_next_corner(P->rise, t);
}

static void pressure_source_info(const fc_elem *e, const fci_fluid *fluid, fci_info *info)
{
  const pressure_source_param *P = e->param;
  (void)fluid;
  info->resistance = P->R;
  info->period = fc_waveform_period(P->rise);
  if (info->no_text) return;
  snprintf(info->text, sizeof info->text,
           "pressure source: mean rise %.4g Pa, period %.4g s, internal R %.4g Pa s/m^3%s",
           fc_waveform_mean(P->rise), info->period, P->R, P->R > 0 ? "" : " (ideal)");
}

static const fc_elem_type table = {
  .version = FC_ELEM_V,
  .name = "pressure_source",
  .szParam = sizeof(pressure_source_param),
  .nTermDefault = 2,
  .fLinear = 1,
  .keys = keys,
  .xParse = pressure_source_parse,
  .xFree = pressure_source_free,
  .xFlow = pressure_source_flow,
  .xFix = pressure_source_fix,
  .xInfo = pressure_source_info,
  .xCorner = pressure_source_corner,
};

const fc_elem_type *const fci_type_pressure_source = &table;
