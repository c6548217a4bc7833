/* ferrocirc — reading a valve design: channel, ferrofluid, carrier, numerics (format
 * "ferrocirc-valve/1"; keys documented in docs/valve-model.md). Magnets: design_magnets.c.
 * Every quantity is a JSON number (SI) or "NUMBER UNIT"; every error names its JSON path. */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "valve_int.h"

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

#define Q(obj, key, dim, req, def, sign, out) \
  fci_get_quantity(obj, key, dim, req, def, sign, out, path, ctx, err)

void fci_design_warn(fc_valve_design *d, const char *fmt, ...)
{
  if (d->nWarn >= (int)(sizeof d->warn / sizeof d->warn[0])) return;
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(d->warn[d->nWarn++], sizeof d->warn[0], fmt, ap);
  va_end(ap);
}

const fci_section *fci_design_section(const fc_valve_design *d, double x)
{
  for (int i = 0; i < d->nSec; i++)
    if (x < d->sec[i].x1) return x >= d->sec[i].x0 ? &d->sec[i] : NULL;
  return (x == d->sec[d->nSec - 1].x1) ? &d->sec[d->nSec - 1] : NULL;
}

void fci_design_shape(const fc_valve_design *d, double x, double *w, double *h, double *dw,
                      double *dh)
{
  const fci_section *s = fci_design_section(d, x);
  if (!s) s = (x < d->sec[0].x0) ? &d->sec[0] : &d->sec[d->nSec - 1];
  double len = s->x1 - s->x0, u = fmin(1.0, fmax(0.0, (x - s->x0) / len));
  *w = s->w0 + u * (s->w1 - s->w0);
  *h = s->h0 + u * (s->h1 - s->h0);
  *dw = (s->w1 - s->w0) / len;
  *dh = (s->h1 - s->h0) / len;
}

/* "contact_angle": {"advancing": A, "receding": R}, angles through the ferrofluid. */
static int parse_angles(const cJSON *obj, const char *path, const fci_parse_ctx *ctx,
                        double *adv, double *rec, fc_error *err)
{
  static const char *const keys[] = {"advancing", "receding", "note", NULL};
  int rc = fci_check_keys(obj, keys, NULL, path, err);
  if (!rc) rc = Q(obj, "advancing", FC_DIM_ANGLE, 1, 0.0, FCI_NONNEG, adv);
  if (!rc) rc = Q(obj, "receding", FC_DIM_ANGLE, 1, 0.0, FCI_NONNEG, rec);
  if (rc) return rc;
  char kp[256];
  if (*adv > M_PI + 1e-12)
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "advancing"),
                   "must be at most 180 deg, got %g deg", *adv * 180.0 / M_PI);
  if (*rec > *adv)
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "receding"),
                   "must not exceed the advancing angle (%g deg), got %g deg",
                   *adv * 180.0 / M_PI, *rec * 180.0 / M_PI);
  return FC_OK;
}

static int parse_section(fc_valve_design *d, const cJSON *obj, const char *path, double x0,
                         double adv, double rec, const fci_parse_ctx *ctx, fc_error *err)
{
  static const char *const keys[] = {"length", "width", "height", "width_end", "height_end",
                                     "contact_angle", "note", NULL};
  fci_section *s = &d->sec[d->nSec];
  double len;
  if (!cJSON_IsObject(obj)) return fc_fail(err, FC_EJSON, path, "expected a section object "
                                           "{\"length\", \"width\", \"height\"}");
  int rc = fci_check_keys(obj, keys, NULL, path, err);
  if (!rc) rc = Q(obj, "length", FC_DIM_LENGTH, 1, 0.0, FCI_POS, &len);
  if (!rc) rc = Q(obj, "width", FC_DIM_LENGTH, 1, 0.0, FCI_POS, &s->w0);
  if (!rc) rc = Q(obj, "height", FC_DIM_LENGTH, 1, 0.0, FCI_POS, &s->h0);
  if (!rc) rc = Q(obj, "width_end", FC_DIM_LENGTH, 0, s->w0, FCI_POS, &s->w1);
  if (!rc) rc = Q(obj, "height_end", FC_DIM_LENGTH, 0, s->h0, FCI_POS, &s->h1);
  if (rc) return rc;
  const cJSON *ca = NULL;
  rc = fci_get_object(obj, "contact_angle", 0, &ca, path, err);
  s->th_adv = adv;
  s->th_rec = rec;
  if (!rc && ca) {
    char kp[256];
    rc = parse_angles(ca, fci_path_key(kp, sizeof kp, path, "contact_angle"), ctx, &s->th_adv,
                      &s->th_rec, err);
  }
  s->x0 = x0;
  s->x1 = x0 + len;
  if (!rc) d->nSec++;
  return rc;
}

static int parse_channel(fc_valve_design *d, const cJSON *obj, const char *path,
                         const fci_parse_ctx *ctx, fc_error *err)
{
  static const char *const keys[] = {"start", "sections", "note", NULL};
  char kp[256], ip[300];
  double x0;
  int rc = fci_check_keys(obj, keys, NULL, path, err);
  if (!rc) rc = Q(obj, "start", FC_DIM_LENGTH, 0, 0.0, FCI_ANY, &x0);
  if (rc) return rc;
  const cJSON *arr = cJSON_GetObjectItemCaseSensitive(obj, "sections");
  fci_path_key(kp, sizeof kp, path, "sections");
  int n = cJSON_IsArray(arr) ? cJSON_GetArraySize(arr) : 0;
  if (n < 1) return fc_fail(err, FC_EPARAM, kp, "expected a non-empty array of sections "
                            "[{\"length\", \"width\", \"height\"}, ...]");
  d->sec = fc_calloc((size_t)n, sizeof *d->sec);
  if (!d->sec) return fc_fail(err, FC_ENOMEM, kp, "out of memory");
  int i = 0;
  for (const cJSON *s = arr->child; s; s = s->next, i++) {
    snprintf(ip, sizeof ip, "%s[%d]", kp, i);
    rc = parse_section(d, s, ip, x0, d->sec[0].th_adv, d->sec[0].th_rec, ctx, err);
    if (rc) return rc;
    x0 = d->sec[i].x1;
  }
  return FC_OK;
}

static int parse_magnetics(fc_valve_design *d, const cJSON *obj, const char *path,
                           const fci_parse_ctx *ctx, fc_error *err)
{
  int byp = cJSON_GetObjectItemCaseSensitive(obj, "domain_magnetization") != NULL;
  int rc = Q(obj, "temperature", FC_DIM_TEMPERATURE, 0, 293.15, FCI_POS, &d->temperature);
  if (rc) return rc;
  if (byp) { /* particle data: Rosensweig 1985, ch. 2 */
    double md, dp, phi;
    rc = Q(obj, "domain_magnetization", FC_DIM_FIELD, 1, 0.0, FCI_POS, &md);
    if (!rc) rc = Q(obj, "particle_diameter", FC_DIM_LENGTH, 1, 0.0, FCI_POS, &dp);
    if (!rc) rc = Q(obj, "volume_fraction", FC_DIM_NONE, 1, 0.0, FCI_POS, &phi);
    if (rc) return rc;
    double m = md * M_PI * dp * dp * dp / 6.0;
    d->ff.ms = phi * md;
    d->ff.hs = FCI_KB * d->temperature / (FCI_MU0 * m);
    d->ff.chi0 = d->ff.ms / (3.0 * d->ff.hs);
    return FC_OK;
  }
  char kp[256];
  const cJSON *pol = cJSON_GetObjectItemCaseSensitive(obj, "saturation_polarization");
  if (pol && cJSON_GetObjectItemCaseSensitive(obj, "saturation_magnetization"))
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "saturation_polarization"),
                   "give either saturation_magnetization or saturation_polarization, not both");
  if (pol) {
    double js;
    rc = Q(obj, "saturation_polarization", FC_DIM_FLUX_DENSITY, 1, 0.0, FCI_POS, &js);
    d->ff.ms = js / FCI_MU0;
  } else {
    rc = Q(obj, "saturation_magnetization", FC_DIM_FIELD, 1, 0.0, FCI_POS, &d->ff.ms);
  }
  if (!rc) rc = Q(obj, "initial_susceptibility", FC_DIM_NONE, 1, 0.0, FCI_POS, &d->ff.chi0);
  if (rc) return rc;
  d->ff.hs = d->ff.ms / (3.0 * d->ff.chi0);
  return FC_OK;
}

static int parse_ferrofluid(fc_valve_design *d, const cJSON *obj, const char *path,
                            const fci_parse_ctx *ctx, double *adv, double *rec, fc_error *err)
{
  static const char *const keys[] = {"saturation_magnetization", "saturation_polarization",
    "initial_susceptibility", "domain_magnetization", "particle_diameter", "volume_fraction",
    "temperature", "volume", "density", "contact_angle", "demagnetization_factor", "name",
    "note", NULL};
  char kp[256];
  int rc = fci_check_keys(obj, keys, NULL, path, err);
  if (!rc) rc = parse_magnetics(d, obj, path, ctx, err);
  if (!rc) rc = Q(obj, "volume", FC_DIM_VOLUME, 1, 0.0, FCI_POS, &d->volume);
  if (!rc) rc = Q(obj, "density", FC_DIM_DENSITY, 1, 0.0, FCI_POS, &d->rho_ff);
  if (!rc) rc = Q(obj, "demagnetization_factor", FC_DIM_NONE, 0, 0.0, FCI_NONNEG, &d->ff.demag);
  if (rc) return rc;
  if (d->ff.demag > 1.0)
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "demagnetization_factor"),
                   "must be between 0 and 1, got %g", d->ff.demag);
  const cJSON *ca = NULL;
  rc = fci_get_object(obj, "contact_angle", 1, &ca, path, err);
  if (!rc) rc = parse_angles(ca, fci_path_key(kp, sizeof kp, path, "contact_angle"), ctx, adv,
                             rec, err);
  return rc;
}

static int parse_carrier(fc_valve_design *d, const cJSON *obj, const char *path,
                         const fci_parse_ctx *ctx, fc_error *err)
{
  static const char *const keys[] = {"type", "interfacial_tension", "density", "name", "note",
                                     NULL};
  char kp[256];
  int rc = fci_check_keys(obj, keys, NULL, path, err);
  if (rc) return rc;
  const cJSON *t = cJSON_GetObjectItemCaseSensitive(obj, "type");
  if (!cJSON_IsString(t) || (strcmp(t->valuestring, "air") && strcmp(t->valuestring, "liquid")))
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "type"),
                   "expected \"air\" or \"liquid\"");
  d->carrier_air = strcmp(t->valuestring, "air") == 0;
  /* Defaults: dry air at 20 degC, 101.325 kPa (1.204 kg/m3) and water at 20 degC (Tanaka et al.
   * 2001, 998.2 kg/m3). */
  rc = Q(obj, "interfacial_tension", FC_DIM_TENSION, 1, 0.0, FCI_NONNEG, &d->gamma);
  if (!rc) rc = Q(obj, "density", FC_DIM_DENSITY, 0, d->carrier_air ? 1.204 : 998.2, FCI_NONNEG,
                  &d->rho_carrier);
  return rc;
}

static int get_int(const cJSON *obj, const char *key, int def, int lo, int hi, int odd,
                   int *out, const char *path, fc_error *err)
{
  char kp[256];
  const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, key);
  *out = def;
  if (!it) return FC_OK;
  double v = cJSON_IsNumber(it) ? it->valuedouble : NAN;
  if (!(v >= lo && v <= hi) || v != floor(v) || (odd && ((long)v) % 2 == 0))
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, key),
                   "expected %s integer from %d to %d", odd ? "an odd" : "an", lo, hi);
  *out = (int)v;
  return FC_OK;
}

static int parse_numerics(fc_valve_design *d, const cJSON *obj, const char *path, fc_error *err)
{
  static const char *const keys[] = {"points", "paths", "note", NULL};
  int rc = obj ? fci_check_keys(obj, keys, NULL, path, err) : FC_OK;
  if (!rc) rc = get_int(obj, "points", 2001, 101, 200001, 0, &d->nPoint, path, err);
  if (!rc) rc = get_int(obj, "paths", 5, 3, 15, 1, &d->nPath, path, err);
  return rc;
}

/* The sections were read before the ferrofluid's default angles were known: fill them in. */
static void default_angles(fc_valve_design *d, double adv, double rec, const cJSON *channel)
{
  const cJSON *arr = cJSON_GetObjectItemCaseSensitive(channel, "sections");
  int i = 0;
  for (const cJSON *s = arr->child; s && i < d->nSec; s = s->next, i++)
    if (!cJSON_GetObjectItemCaseSensitive(s, "contact_angle")) {
      d->sec[i].th_adv = adv;
      d->sec[i].th_rec = rec;
    }
}

int fci_design_parse_body(fc_valve_design *d, const cJSON *obj, const char *path,
                          const fci_parse_ctx *ctx, fc_error *err)
{
  /* "calibration": the record of `ferrocirc valve calibrate` (data, residuals, covariance);
   * documentation only, the physics never reads it. */
  static const char *const keys[] = {"format", "name", "note", "channel", "ferrofluid",
                                     "carrier", "magnets", "numerics", "calibration", NULL};
  const cJSON *ch = NULL, *ff = NULL, *ca = NULL, *nu = NULL, *cal = NULL;
  char kp[256];
  double adv = 0.0, rec = 0.0;
  int rc = fci_check_keys(obj, keys, NULL, path, err);
  if (!rc) rc = fci_get_object(obj, "channel", 1, &ch, path, err);
  if (!rc) rc = fci_get_object(obj, "ferrofluid", 1, &ff, path, err);
  if (!rc) rc = fci_get_object(obj, "carrier", 1, &ca, path, err);
  if (!rc) rc = fci_get_object(obj, "numerics", 0, &nu, path, err);
  if (!rc) rc = fci_get_object(obj, "calibration", 0, &cal, path, err);
  if (!rc) rc = parse_channel(d, ch, fci_path_key(kp, sizeof kp, path, "channel"), ctx, err);
  if (!rc) rc = parse_ferrofluid(d, ff, fci_path_key(kp, sizeof kp, path, "ferrofluid"), ctx,
                                 &adv, &rec, err);
  if (!rc) default_angles(d, adv, rec, ch);
  if (!rc) rc = parse_carrier(d, ca, fci_path_key(kp, sizeof kp, path, "carrier"), ctx, err);
  if (!rc) rc = parse_numerics(d, nu, fci_path_key(kp, sizeof kp, path, "numerics"), err);
  if (rc) return rc;
  const cJSON *mags = cJSON_GetObjectItemCaseSensitive(obj, "magnets");
  return fci_design_parse_magnets(d, mags, fci_path_key(kp, sizeof kp, path, "magnets"), ctx,
                                  err);
}
