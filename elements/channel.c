/* ferrocirc element "channel": a straight rigid channel in steady laminar flow.
 *
 * Resistance from the exact laminar laws (src/hydraulics.c): circular bore, Hagen–Poiseuille
 * R = 8 mu L/(pi r^4); rectangle w x h, the Fourier-series result R = 12 mu L/(w h^3 F(h/w))
 * (Bruus 2008, Theoretical Microfluidics, Ch. 2). q = (p_from - p_to)/R.
 * With "inertance": true the flow q becomes an ODE state, Lh dq/dt = p_from - p_to - R q, with
 * Lh = beta rho L/A and beta the kinetic-energy factor of the steady profile (4/3 circle, series
 * value for rectangles): the exact first-order (in omega) impedance term, valid while the
 * Womersley number stays below ~2 (physics reference §2).
 * Keys: length [m], diameter [m] | width + height [m], viscosity [Pa s] (default: the network
 * fluid), inertance (bool), culture (bool: report wall shear). Role FLOW, linear. */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>

#include "elem.h"
#include "elem_types.h"
#include "ferrocirc/hydraulics.h"

#define PI 3.14159265358979323846

typedef struct channel_param {
  double length;         /* [m] */
  double diameter;       /* bore [m], 0 for a rectangle */
  double width, height;  /* rectangle sides [m], 0 for a bore */
  double mu;             /* viscosity used [Pa s] */
  double R;              /* resistance [Pa s/m^3] */
  double Lh;             /* inertance [Pa s^2/m^3] */
  double shear;          /* wall shear per unit flow [Pa/(m^3/s)] */
  int    inertial;       /* 1: the flow is an own state */
} channel_param;

static const char *const keys[] = {"length",    "diameter", "width",   "height",
                                   "viscosity", "inertance", "culture", NULL};

#define FC_CHANNEL_MIN_ASPECT 1e-9

/* Exactly one cross-section form: "diameter", or "width" with "height". */
static int parse_section(channel_param *P, const cJSON *obj, const char *path,
                         const fci_parse_ctx *ctx, fc_error *err)
{
  char kp[320];
  int hasD = cJSON_GetObjectItemCaseSensitive(obj, "diameter") != NULL;
  int hasW = cJSON_GetObjectItemCaseSensitive(obj, "width") != NULL;
  int hasH = cJSON_GetObjectItemCaseSensitive(obj, "height") != NULL;
  if (hasD && (hasW || hasH))
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, hasW ? "width" : "height"),
                   "give either \"diameter\" (circular bore) or \"width\" and \"height\" "
                   "(rectangle), not both");
  if (hasD)
    return fci_get_quantity(obj, "diameter", FC_DIM_LENGTH, 1, 0.0, FCI_POS, &P->diameter, path,
                            ctx, err);
  if (!hasW && !hasH)
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "diameter"),
                   "missing cross-section: give \"diameter\" (circular bore) or \"width\" and "
                   "\"height\" (rectangle), in m");
  int rc = fci_get_quantity(obj, "width", FC_DIM_LENGTH, 1, 0.0, FCI_POS, &P->width, path, ctx,
                            err);
  if (!rc) rc = fci_get_quantity(obj, "height", FC_DIM_LENGTH, 1, 0.0, FCI_POS, &P->height,
                                 path, ctx, err);
  /* The duct series (src/hydraulics.c) take alpha^4 and 1/alpha: below 1e-9 (a 1 nm slit in a
   * 1 m wide channel) they underflow long before any real chip gets there. */
  double a = fmin(P->width, P->height) / fmax(P->width, P->height);
  if (!rc && !(a >= FC_CHANNEL_MIN_ASPECT))
    rc = fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "height"),
                 "height/width aspect ratio %.3g is outside the range of the rectangular-duct "
                 "model; expected the smaller side at least %.0e times the larger",
                 a, FC_CHANNEL_MIN_ASPECT);
  return rc;
}

/* A lumped channel is between 1 nm and 1 km in every dimension: outside that the formulas
 * below over- or underflow (a 1e-304 m bore has an area of 0) long before physics ends. */
static int check_size(double v, const char *key, const char *path, fc_error *err)
{
  char kp[320];
  if (v == 0.0 || (v >= 1e-9 && v <= 1e3)) return FC_OK; /* 0: that form was not given */
  return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, key),
                 "%g m is outside the range of a lumped channel; expected 1 nm to 1 km", v);
}

/* R, Lh and the shear factor from the geometry (src/hydraulics.c for the sources). */
static void derive(channel_param *P, double rho)
{
  if (P->diameter > 0) {
    double r = P->diameter / 2, A = PI * r * r;
    P->R = fc_hyd_circle_resistance(P->mu, P->length, r);
    P->Lh = fc_hyd_inertance(FC_HYD_BETA_CIRCLE, rho, P->length, A);
    /* circle: Poiseuille wall shear 4 mu/(pi r^3) per unit flow, uniform round the wall */
    P->shear = fc_hyd_circle_shear(P->mu, 1.0, r);
  } else {
    double w = fmax(P->width, P->height), h = fmin(P->width, P->height), a = h / w;
    P->R = fc_hyd_rect_resistance(P->mu, P->length, w, h);
    P->Lh = fc_hyd_inertance(fc_hyd_rect_beta(a), rho, P->length, w * h);
    /* rectangle: the shear at the centre of the wide wall (where cells on the floor of a
     * flat channel sit): parallel-plate 6 mu/(w h^2) times 8 S/(pi^2 F), physics ref. R9 */
    P->shear = fc_hyd_plates_shear(P->mu, 1.0, w, h) * fc_hyd_rect_centre_shear_factor(a);
  }
}

static int channel_parse(fc_elem *e, const struct cJSON *obj, const char *path,
                         const fci_parse_ctx *ctx, fc_error *err)
{
  channel_param *P = e->param;
  int rc = fci_get_quantity(obj, "length", FC_DIM_LENGTH, 1, 0.0, FCI_POS, &P->length, path,
                            ctx, err);
  if (!rc) rc = parse_section(P, obj, path, ctx, err);
  static const char *const dims[] = {"length", "diameter", "width", "height"};
  const double *vals[] = {&P->length, &P->diameter, &P->width, &P->height};
  for (int k = 0; k < 4 && !rc; k++) rc = check_size(*vals[k], dims[k], path, err);
  if (!rc) rc = fci_get_quantity(obj, "viscosity", FC_DIM_VISCOSITY, 0, ctx->fluid->viscosity,
                                 FCI_POS, &P->mu, path, ctx, err);
  if (!rc) rc = fci_get_bool(obj, "inertance", 0, &P->inertial, path, err);
  if (!rc) rc = fci_get_bool(obj, "culture", 0, &e->culture, path, err);
  if (rc) return rc;
  derive(P, ctx->fluid->density);
  /* Extreme but in-range values (a viscosity of 1e300 Pa s) can still overflow R. */
  if (!(isfinite(P->R) && P->R > 0 && isfinite(P->Lh) && isfinite(P->shear)))
    return fc_fail(err, FC_EPARAM, path, "the channel's resistance (%g Pa.s/m3) is not a finite "
                   "positive number; expected a geometry and viscosity of a real channel", P->R);
  e->role = FC_ROLE_FLOW;
  e->nState = P->inertial ? 1 : 0;
  return FC_OK;
}

static int channel_linear(const fc_elem *e, double k[3])
{
  const channel_param *P = e->param;
  if (P->inertial) return 0;
  k[0] = 0;
  k[1] = 1.0 / P->R;
  k[2] = -1.0 / P->R;
  return 1;
}

static void channel_flow(const fc_elem *e, double t, const double p[2], const double *x,
                         fci_flow *out)
{
  const channel_param *P = e->param;
  (void)t;
  *out = (fci_flow){0};
  if (P->inertial) {
    out->q = x[0];
    out->dq_dx[0] = 1.0;
    return;
  }
  out->q = (p[0] - p[1]) / P->R;
  out->dq_dpa = 1.0 / P->R;
  out->dq_dpb = -1.0 / P->R;
}

/* Lh dq/dt = p_from - p_to - R q; J row: d/dp_from, d/dp_to, d/dq. */
static int channel_rhs(const fc_elem *e, double t, const double p[2], const double *x,
                       double *dxdt, double *J)
{
  const channel_param *P = e->param;
  (void)t;
  dxdt[0] = (p[0] - p[1] - P->R * x[0]) / P->Lh;
  if (J) {
    J[0] = 1.0 / P->Lh;
    J[1] = -1.0 / P->Lh;
    J[2] = -P->R / P->Lh;
  }
  return 0;
}

static void channel_info(const fc_elem *e, const fci_fluid *fluid, fci_info *info)
{
  const channel_param *P = e->param;
  (void)fluid;
  info->resistance = P->R;
  info->inertance = P->inertial ? P->Lh : 0.0;
  info->shear_per_flow = P->shear;
  if (info->no_text) return;
  if (P->diameter > 0)
    snprintf(info->text, sizeof info->text,
             "channel: bore %.4g m, length %.4g m, R = %.4g Pa s/m^3, Lh = %.4g Pa s^2/m^3%s",
             P->diameter, P->length, P->R, P->Lh, P->inertial ? "" : " (not simulated)");
  else
    snprintf(info->text, sizeof info->text,
             "channel: %.4g x %.4g m, length %.4g m, R = %.4g Pa s/m^3, Lh = %.4g Pa s^2/m^3%s",
             P->width, P->height, P->length, P->R, P->Lh, P->inertial ? "" : " (not simulated)");
}

static const fc_elem_type table = {
  .version = FC_ELEM_V,
  .name = "channel",
  .szParam = sizeof(channel_param),
  .nTermDefault = 2,
  .fLinear = 1,
  .keys = keys,
  .xParse = channel_parse,
  .xFlow = channel_flow,
  .xLinear = channel_linear,
  .xRhs = channel_rhs,
  .xInfo = channel_info,
};

const fc_elem_type *const fci_type_channel = &table;
