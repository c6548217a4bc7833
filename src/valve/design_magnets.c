/* ferrocirc — reading the "magnets" of a valve design.
 *
 * Each magnet: "shape" "cylinder" ("diameter", "length" along its axis; axially magnetised) or
 * "block" ("size": [x, y, z] edges, axis-aligned); "grade" (magnet_grade.c, corrected to the
 * ferrofluid's temperature) or "remanence"; "magnetization": "+z" (default), "-x", ... or a
 * vector [mx, my, mz] (a cylinder's axis follows it); placement either "side" ("below" or
 * "above"), "gap" from the floor or the roof to the nearest face, "x" and "y" of the centre, or
 * "position": [x, y, z] of the centre. Magnets may not overlap the channel. */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "valve_int.h"

#define Q(obj, key, dim, req, def, sign, out) \
  fci_get_quantity(obj, key, dim, req, def, sign, out, path, ctx, err)

static int parse_direction(const cJSON *it, double n[3], const char *kp, fc_error *err)
{
  static const char *const names[] = {"+x", "-x", "+y", "-y", "+z", "-z"};
  memset(n, 0, 3 * sizeof(double));
  if (!it) {
    n[2] = 1.0;
    return FC_OK;
  }
  if (cJSON_IsString(it)) {
    for (int i = 0; i < 6; i++)
      if (strcmp(it->valuestring, names[i]) == 0) {
        n[i / 2] = (i % 2) ? -1.0 : 1.0;
        return FC_OK;
      }
  } else if (cJSON_IsArray(it) && cJSON_GetArraySize(it) == 3) {
    double s = 0.0;
    for (int i = 0; i < 3; i++) {
      const cJSON *c = cJSON_GetArrayItem(it, i);
      n[i] = cJSON_IsNumber(c) ? c->valuedouble : NAN;
      s += n[i] * n[i];
    }
    if (s > 0.0 && isfinite(s)) {
      for (int i = 0; i < 3; i++) n[i] /= sqrt(s);
      return FC_OK;
    }
  }
  return fc_fail(err, FC_EPARAM, kp, "expected \"+x\", \"-x\", \"+y\", \"-y\", \"+z\", \"-z\" "
                 "or a non-zero vector [mx, my, mz]");
}

static int get_vec3(const cJSON *obj, const char *key, double v[3], const char *path,
                    const fci_parse_ctx *ctx, fc_error *err)
{
  char kp[256], ip[300];
  const cJSON *a = cJSON_GetObjectItemCaseSensitive(obj, key);
  fci_path_key(kp, sizeof kp, path, key);
  if (!cJSON_IsArray(a) || cJSON_GetArraySize(a) != 3)
    return fc_fail(err, FC_EPARAM, kp, "expected three lengths [x, y, z], e.g. "
                   "[\"0 mm\", \"0 mm\", \"-3 mm\"]");
  for (int i = 0; i < 3; i++) {
    snprintf(ip, sizeof ip, "%s[%d]", kp, i);
    int rc = fc_units_json(ctx->units, cJSON_GetArrayItem(a, i), FC_DIM_LENGTH, &v[i], ip, err);
    if (rc) return rc;
  }
  return FC_OK;
}

static int parse_shape(fci_magnet *m, const cJSON *obj, const char *path,
                       const fci_parse_ctx *ctx, fc_error *err)
{
  char kp[256];
  const cJSON *sh = cJSON_GetObjectItemCaseSensitive(obj, "shape");
  if (cJSON_IsString(sh) && strcmp(sh->valuestring, "cylinder") == 0) {
    double dia;
    m->shape = FCI_MAG_CYLINDER;
    int rc = Q(obj, "diameter", FC_DIM_LENGTH, 1, 0.0, FCI_POS, &dia);
    if (!rc) rc = Q(obj, "length", FC_DIM_LENGTH, 1, 0.0, FCI_POS, &m->length);
    m->radius = 0.5 * dia;
    return rc;
  }
  if (cJSON_IsString(sh) && strcmp(sh->valuestring, "block") == 0) {
    m->shape = FCI_MAG_BLOCK;
    int rc = get_vec3(obj, "size", m->size, path, ctx, err);
    for (int i = 0; !rc && i < 3; i++)
      if (!(m->size[i] > 0.0))
        return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "size"),
                       "every edge must be > 0");
    return rc;
  }
  return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "shape"),
                 "expected \"cylinder\" or \"block\"");
}

static int parse_remanence(fc_valve_design *d, fci_magnet *m, const cJSON *obj,
                           const char *path, const fci_parse_ctx *ctx, fc_error *err)
{
  char kp[256];
  const cJSON *g = cJSON_GetObjectItemCaseSensitive(obj, "grade");
  int has_br = cJSON_GetObjectItemCaseSensitive(obj, "remanence") != NULL;
  fci_path_key(kp, sizeof kp, path, g ? "grade" : "remanence");
  if (!g == !has_br)
    return fc_fail(err, FC_EPARAM, kp, "give exactly one of \"grade\" (%s) or \"remanence\"",
                   fci_grade_names());
  if (has_br) return Q(obj, "remanence", FC_DIM_FLUX_DENSITY, 1, 0.0, FCI_POS, &m->br);
  if (!cJSON_IsString(g)) return fc_fail(err, FC_EPARAM, kp, "expected a grade name such as "
                                         "\"N42\"");
  double br20, tc, tmax;
  int rc = fci_grade_lookup(g->valuestring, &br20, &tc, &tmax, kp, err);
  if (rc) return rc;
  m->br = br20 * (1.0 + tc * (d->temperature - 293.15));
  if (d->temperature > tmax)
    fci_design_warn(d, "%s: %s is rated to %.0f degC, below the design temperature %.1f degC: "
                    "it may lose magnetisation for good", kp, g->valuestring, tmax - 273.15,
                    d->temperature - 273.15);
  return FC_OK;
}

static int place(const fc_valve_design *d, fci_magnet *m, const cJSON *obj, const char *path,
                 const fci_parse_ctx *ctx, fc_error *err)
{
  char kp[256];
  if (cJSON_GetObjectItemCaseSensitive(obj, "position")) {
    if (cJSON_GetObjectItemCaseSensitive(obj, "side"))
      return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "side"),
                     "give either \"position\" or \"side\" with \"gap\", not both");
    return get_vec3(obj, "position", m->c, path, ctx, err);
  }
  const cJSON *s = cJSON_GetObjectItemCaseSensitive(obj, "side");
  int below = cJSON_IsString(s) && strcmp(s->valuestring, "below") == 0;
  int above = cJSON_IsString(s) && strcmp(s->valuestring, "above") == 0;
  if (!below && !above)
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "side"),
                   "expected \"below\" or \"above\" (with \"gap\"), or give \"position\"");
  double gap, w, h, dw, dh;
  int rc = Q(obj, "gap", FC_DIM_LENGTH, 1, 0.0, FCI_NONNEG, &gap);
  if (!rc) rc = Q(obj, "x", FC_DIM_LENGTH, 0, 0.0, FCI_ANY, &m->c[0]);
  if (!rc) rc = Q(obj, "y", FC_DIM_LENGTH, 0, 0.0, FCI_ANY, &m->c[1]);
  if (rc) return rc;
  fci_design_shape(d, m->c[0], &w, &h, &dw, &dh);
  double hz = fci_magnet_half_z(m);
  m->c[2] = below ? -gap - hz : h + gap + hz;
  return FC_OK;
}

static int check_clear(const fc_valve_design *d, const fci_magnet *m, const char *path,
                       fc_error *err)
{
  double lo[3], hi[3], wmax = 0.0, hmax = 0.0;
  for (int i = 0; i < d->nSec; i++) {
    wmax = fmax(wmax, fmax(d->sec[i].w0, d->sec[i].w1));
    hmax = fmax(hmax, fmax(d->sec[i].h0, d->sec[i].h1));
  }
  fci_magnet_box(m, lo, hi);
  double clo[3] = {d->sec[0].x0, -0.5 * wmax, 0.0}, chi[3] = {d->sec[d->nSec - 1].x1,
                                                              0.5 * wmax, hmax};
  double eps = 1e-12;
  for (int i = 0; i < 3; i++)
    if (hi[i] <= clo[i] + eps || lo[i] >= chi[i] - eps) return FC_OK;
  return fc_fail(err, FC_EPARAM, path, "the magnet overlaps the channel's bounding box "
                 "(x %g..%g mm, y +-%g mm, z 0..%g mm): move it out, or set \"position\"",
                 clo[0] * 1e3, chi[0] * 1e3, 0.5 * wmax * 1e3, hmax * 1e3);
}

static int parse_one(fc_valve_design *d, fci_magnet *m, const cJSON *obj, const char *path,
                     const fci_parse_ctx *ctx, fc_error *err)
{
  static const char *const keys[] = {"shape", "diameter", "length", "size", "grade",
    "remanence", "magnetization", "side", "gap", "x", "y", "position", "name", "note", NULL};
  char kp[256];
  if (!cJSON_IsObject(obj)) return fc_fail(err, FC_EJSON, path, "expected a magnet object");
  int rc = fci_check_keys(obj, keys, NULL, path, err);
  if (!rc) rc = parse_direction(cJSON_GetObjectItemCaseSensitive(obj, "magnetization"), m->n,
                                fci_path_key(kp, sizeof kp, path, "magnetization"), err);
  if (!rc) rc = parse_shape(m, obj, path, ctx, err);
  if (!rc) rc = parse_remanence(d, m, obj, path, ctx, err);
  if (!rc) rc = place(d, m, obj, path, ctx, err);
  if (!rc) rc = check_clear(d, m, path, err);
  return rc;
}

int fci_design_parse_magnets(fc_valve_design *d, const cJSON *arr, const char *path,
                             const fci_parse_ctx *ctx, fc_error *err)
{
  char ip[300];
  int n = cJSON_IsArray(arr) ? cJSON_GetArraySize(arr) : -1;
  if (n < 1) return fc_fail(err, FC_EPARAM, path, "expected a non-empty array of magnets");
  d->mag = fc_calloc((size_t)n, sizeof *d->mag);
  if (!d->mag) return fc_fail(err, FC_ENOMEM, path, "out of memory");
  int i = 0;
  for (const cJSON *m = arr->child; m; m = m->next, i++) {
    snprintf(ip, sizeof ip, "%s[%d]", path, i);
    int rc = parse_one(d, &d->mag[i], m, ip, ctx, err);
    if (rc) return rc;
    d->nMag = i + 1;
  }
  return FC_OK;
}
