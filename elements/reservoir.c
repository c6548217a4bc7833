/* ferrocirc element "reservoir": an open liquid reservoir that fixes the pressure of its node.
 *
 * p_node(t) = P(t) + rho g h (hydrostatics), P the gauge pressure applied above the liquid
 * surface (a waveform: pressure controller, or 0 for an open vessel), h the height of that surface
 * above the port ("liquid_height"; negative when the port lies above the surface), rho the
 * network fluid's density, g = gn = 9.80665 m/s^2 (standard gravity, exact by definition).
 * The level is taken as constant: the reservoir is assumed large against the volume that flows.
 * Keys: pressure [Pa, waveform, default 0], liquid_height [m, default 0]. Role FIX. */
#include <math.h>
#include <stdio.h>

#include "elem.h"
#include "elem_types.h"

#define GN 9.80665 /* standard acceleration of gravity [m/s^2], exact (CGPM 1901) */

typedef struct reservoir_param {
  fc_waveform *pressure; /* gauge pressure over the free surface [Pa] (owned) */
  double height;         /* free surface above the port [m] */
  double head;           /* rho gn height [Pa] */
} reservoir_param;

static const char *const keys[] = {"pressure", "liquid_height", NULL};

static void reservoir_free(fc_elem *e)
{
  reservoir_param *P = e->param;
  if (!P) return;
  fc_waveform_free(P->pressure);
  P->pressure = NULL;
}

static int reservoir_parse(fc_elem *e, const struct cJSON *obj, const char *path,
                           const fci_parse_ctx *ctx, fc_error *err)
{
  reservoir_param *P = e->param;
  int rc = fci_get_waveform(obj, "pressure", FC_DIM_PRESSURE, 0, 0.0, &P->pressure, path, ctx,
                            err);
  if (!rc)
    rc = fci_get_quantity(obj, "liquid_height", FC_DIM_LENGTH, 0, 0.0, FCI_ANY, &P->height,
                          path, ctx, err);
  if (rc) {
    reservoir_free(e);
    return rc;
  }
  P->head = ctx->fluid->density * GN * P->height;
  e->role = FC_ROLE_FIX;
  return FC_OK;
}

static double reservoir_fix(const fc_elem *e, double t)
{
  const reservoir_param *P = e->param;
  return fc_waveform_eval(P->pressure, t) + P->head;
}

static double reservoir_corner(const fc_elem *e, double t, int *smooth)
{
  const reservoir_param *P = e->param;
  *smooth = fc_waveform_corners_smooth(P->pressure);
  return fc_waveform_next_corner(P->pressure, t);
}

static void reservoir_info(const fc_elem *e, const fci_fluid *fluid, fci_info *info)
{
  const reservoir_param *P = e->param;
  (void)fluid;
  info->period = fc_waveform_period(P->pressure);
  if (info->no_text) return;
  snprintf(info->text, sizeof info->text,
           "reservoir: mean surface pressure %.4g Pa + head %.4g Pa (liquid %.4g m above port)",
           fc_waveform_mean(P->pressure), P->head, P->height);
}

static const fc_elem_type table = {
  .version = FC_ELEM_V,
  .name = "reservoir",
  .szParam = sizeof(reservoir_param),
  .nTermDefault = 1,
  .fLinear = 1,
  .keys = keys,
  .xParse = reservoir_parse,
  .xFree = reservoir_free,
  .xFix = reservoir_fix,
  .xInfo = reservoir_info,
  .xCorner = reservoir_corner,
};

const fc_elem_type *const fci_type_reservoir = &table;
