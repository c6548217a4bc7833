/* ferrocirc element "chamber": a compliance at one node, C(p) = dV/dp.
 *
 * Exactly one of:
 *   compliance  C [m^3/Pa], constant;
 *   gas_volume  V0 [m^3] of trapped gas at gauge pressure gas_pressure p0 (default 0): isothermal
 *               ideal gas (Boyle), C(p) = V0 (p0 + pamb)/(p + pamb)^2, pamb = the network's
 *               absolute ambient pressure; near-isothermal for micro-bubbles below ~100 Hz
 *               (physics reference §2);
 *   tube        {diameter (inner), wall_thickness, youngs_modulus, length, poisson_ratio = 0.5}:
 *               thick-walled elastic tube, open ends (Lame; Timoshenko & Goodier),
 *               C = (2 pi a^2 L/E)[(b^2 + a^2)/(b^2 - a^2) + nu].
 * Optional backing_pressure p_back(t) [Pa waveform] acts on the far side of the compliant wall
 * (a driven membrane): the compliance then responds to p - p_back, and the stored volume is
 * V = C (p - p_back(t)) (src/elem.h). culture: true flags the chamber for reports.
 * Role STORE. Volumes: liquid taken up relative to p - p_back = 0. */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>

#include "elem.h"
#include "elem_types.h"
#include "ferrocirc/hydraulics.h"

enum { KIND_CONST = 1, KIND_GAS, KIND_TUBE };

/* Below this fraction of ambient the gas law is clamped: such a state is unphysical (the
 * liquid would cavitate first), but a Newton iterate may visit it and C must stay finite. */
#define GAS_FLOOR 1e-3

typedef struct chamber_param {
  int    kind;        /* KIND_* */
  double C;           /* constant compliance [m^3/Pa] (const, tube) */
  double V0, p0abs;   /* gas volume [m^3] at absolute pressure p0abs [Pa] */
  double pamb;        /* absolute ambient pressure [Pa] */
  fc_waveform *back;  /* backing pressure [Pa], NULL if none (owned) */
} chamber_param;

static const char *const keys[] = {"compliance", "gas_volume", "gas_pressure", "tube",
                                   "backing_pressure", "culture", NULL};
static const char *const tube_keys[] = {"diameter", "length", "wall_thickness",
                                        "youngs_modulus", "poisson_ratio", NULL};

static void chamber_free(fc_elem *e)
{
  chamber_param *P = e->param;
  if (!P) return;
  fc_waveform_free(P->back);
  P->back = NULL;
}

static int parse_tube(chamber_param *P, const cJSON *tube, const char *tp,
                      const fci_parse_ctx *ctx, fc_error *err)
{
  double d, t, E, L, nu;
  const struct { const char *key; fc_dim dim; int req, sign; double def, *out; } q[] = {
    {"diameter", FC_DIM_LENGTH, 1, FCI_POS, 0, &d},
    {"wall_thickness", FC_DIM_LENGTH, 1, FCI_POS, 0, &t},
    {"youngs_modulus", FC_DIM_PRESSURE, 1, FCI_POS, 0, &E},
    {"length", FC_DIM_LENGTH, 1, FCI_POS, 0, &L},
    {"poisson_ratio", FC_DIM_NONE, 0, FCI_ANY, 0.5, &nu},
  };
  char kp[320];
  int rc = fci_check_keys(tube, tube_keys, NULL, tp, err);
  for (size_t i = 0; !rc && i < sizeof q / sizeof q[0]; i++)
    rc = fci_get_quantity(tube, q[i].key, q[i].dim, q[i].req, q[i].def, q[i].sign, q[i].out, tp,
                          ctx, err);
  if (rc) return rc;
  if (!(nu > -1.0 && nu <= 0.5)) /* bounds of an isotropic elastic solid */
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, tp, "poisson_ratio"),
                   "must be in (-1, 0.5], got %g", nu);
  /* A wall thinner than the rounding of the radius (b == a in doubles) has no Lame solution;
   * a compliance that over- or underflows is no chamber either. */
  if (!(d / 2 + t > d / 2))
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, tp, "wall_thickness"),
                   "%g m is too thin beside a %g m bore to compute; expected a real wall", t, d);
  P->C = fc_hyd_tube_compliance_thick(d / 2, d / 2 + t, E, nu, L);
  if (!(isfinite(P->C) && P->C > 0))
    return fc_fail(err, FC_EPARAM, tp, "the tube's compliance (%g m3/Pa) is not a finite positive "
                   "number; expected the sizes and modulus of a real tube", P->C);
  return FC_OK;
}

/* One of the three forms; the error names the second one found, or the missing choice. */
static int parse_form(chamber_param *P, const cJSON *obj, const char *path,
                      const fci_parse_ctx *ctx, fc_error *err)
{
  static const char *const forms[] = {"compliance", "gas_volume", "tube"};
  char kp[320];
  int found = -1, rc;
  for (int i = 0; i < 3; i++) {
    if (!cJSON_GetObjectItemCaseSensitive(obj, forms[i])) continue;
    if (found >= 0)
      return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, forms[i]),
                     "give only one of \"compliance\", \"gas_volume\", \"tube\" (\"%s\" is "
                     "already given)", forms[found]);
    found = i;
  }
  if (found < 0)
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "compliance"),
                   "missing: give one of \"compliance\" (m3/Pa), \"gas_volume\" (m3) or "
                   "\"tube\" {...}");
  if (found != 1 && cJSON_GetObjectItemCaseSensitive(obj, "gas_pressure"))
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "gas_pressure"),
                   "only meaningful with \"gas_volume\"");
  P->kind = found == 0 ? KIND_CONST : found == 1 ? KIND_GAS : KIND_TUBE;
  if (found == 0)
    return fci_get_quantity(obj, "compliance", FC_DIM_COMPLIANCE, 1, 0, FCI_POS, &P->C, path, ctx,
                            err);
  if (found == 2) {
    const cJSON *tube;
    if ((rc = fci_get_object(obj, "tube", 1, &tube, path, err))) return rc;
    return parse_tube(P, tube, fci_path_key(kp, sizeof kp, path, "tube"), ctx, err);
  }
  double p0;
  P->pamb = ctx->fluid->ambient;
  rc = fci_get_quantity(obj, "gas_volume", FC_DIM_VOLUME, 1, 0, FCI_POS, &P->V0, path, ctx, err);
  if (!rc) rc = fci_get_quantity(obj, "gas_pressure", FC_DIM_PRESSURE, 0, 0, FCI_ANY, &p0, path,
                                 ctx, err);
  if (rc) return rc;
  P->p0abs = p0 + P->pamb;
  if (!(P->p0abs > 0))
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "gas_pressure"),
                   "must be above vacuum (> %g Pa gauge for ambient %g Pa), got %g Pa", -P->pamb,
                   P->pamb, p0);
  return FC_OK;
}

static int chamber_parse(fc_elem *e, const struct cJSON *obj, const char *path,
                         const fci_parse_ctx *ctx, fc_error *err)
{
  chamber_param *P = e->param;
  int rc = parse_form(P, obj, path, ctx, err);
  if (!rc && cJSON_GetObjectItemCaseSensitive(obj, "backing_pressure"))
    rc = fci_get_waveform(obj, "backing_pressure", FC_DIM_PRESSURE, 1, 0, &P->back, path, ctx,
                          err);
  if (!rc) rc = fci_get_bool(obj, "culture", 0, &e->culture, path, err);
  if (rc) {
    chamber_free(e);
    return rc;
  }
  e->role = FC_ROLE_STORE;
  return FC_OK;
}

/* Transmural pressure p - p_back(t). */
static double transmural(const chamber_param *P, double t, double p)
{
  return P->back ? p - fc_waveform_eval(P->back, t) : p;
}

/* C and dC/d(dp) at transmural pressure dp (gas: clamped below GAS_FLOOR of ambient). */
static double compliance_at(const chamber_param *P, double dp, double *dC)
{
  *dC = 0.0;
  if (P->kind != KIND_GAS) return P->C;
  double pabs = fmax(dp + P->pamb, GAS_FLOOR * P->pamb);
  double C = fc_hyd_gas_compliance(P->V0, P->p0abs, pabs);
  if (dp + P->pamb > GAS_FLOOR * P->pamb) *dC = -2.0 * C / pabs; /* d/dp of V0 p0/pabs^2 */
  return C;
}

static void chamber_store(const fc_elem *e, double t, double p, double *C, double *dC_dp)
{
  const chamber_param *P = e->param;
  /* only a gas pocket's compliance depends on the pressure: the others need no backing waveform */
  *C = compliance_at(P, P->kind == KIND_GAS ? transmural(P, t, p) : p, dC_dp);
}

static double chamber_volume(const fc_elem *e, double t, double p)
{
  const chamber_param *P = e->param;
  double dp = transmural(P, t, p);
  if (P->kind != KIND_GAS) return P->C * dp;
  double dfl = (GAS_FLOOR - 1.0) * P->pamb, dC;
  if (dp >= dfl) return fc_hyd_gas_stored(P->V0, P->p0abs, P->pamb, dp);
  /* continued linearly below the clamp, so that dV/dp = C holds there too */
  return fc_hyd_gas_stored(P->V0, P->p0abs, P->pamb, dfl) + compliance_at(P, dfl, &dC) * (dp - dfl);
}

static int chamber_linear(const fc_elem *e, double k[3])
{
  const chamber_param *P = e->param;
  if (P->kind == KIND_GAS || P->back) return 0;
  k[0] = P->C;
  k[1] = k[2] = 0;
  return 1;
}

static double chamber_corner(const fc_elem *e, double t, int *smooth)
{
  const chamber_param *P = e->param;
  *smooth = P->back ? fc_waveform_corners_smooth(P->back) : 1;
  return P->back ? fc_waveform_next_corner(P->back, t) : INFINITY;
}

static void chamber_info(const fc_elem *e, const fci_fluid *fluid, fci_info *info)
{
  static const char *const kind[] = {"", "constant", "isothermal gas", "elastic tube"};
  const chamber_param *P = e->param;
  double dC;
  (void)fluid;
  info->compliance = compliance_at(P, 0.0, &dC);
  info->period = P->back ? fc_waveform_period(P->back) : 0.0;
  if (info->no_text) return;
  snprintf(info->text, sizeof info->text, "chamber: %s compliance %.4g m^3/Pa at 0 Pa%s",
           kind[P->kind], info->compliance, P->back ? ", driven backing pressure" : "");
}

static const fc_elem_type table = {
  .version = FC_ELEM_V,
  .name = "chamber",
  .szParam = sizeof(chamber_param),
  .nTermDefault = 1,
  .fLinear = 0,
  .keys = keys,
  .xParse = chamber_parse,
  .xFree = chamber_free,
  .xStore = chamber_store,
  .xVolume = chamber_volume,
  .xInfo = chamber_info,
  .xCorner = chamber_corner,
  .xLinear = chamber_linear,
};

const fc_elem_type *const fci_type_chamber = &table;
