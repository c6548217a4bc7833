/* ferrocirc — hysteretic valve law (see valve_law.h). */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>

#include "valve_law.h"

static int get_p(const struct cJSON *obj, const char *key, int required, double *v,
                 const char *path, const fci_parse_ctx *ctx, fc_error *err)
{
  int have = cJSON_GetObjectItemCaseSensitive(obj, key) != NULL;
  if (!have && !required) return FC_OK;
  return fci_get_quantity(obj, key, FC_DIM_PRESSURE, 1, 0.0, FCI_NONNEG, v, path, ctx, err);
}

static int check_order(const fci_valve_law *L, const char *path, fc_error *err)
{
  char p[320];
  if (!(L->crack_f > 0) || !(L->crack_r > 0))
    return fc_fail(err, FC_EPARAM, fci_path_key(p, sizeof p, path, L->crack_f > 0 ? "crack_reverse" : "crack_forward"),
                   "cracking pressures must be > 0 (got %g and %g Pa)", L->crack_f, L->crack_r);
  if (L->reseat_f >= L->crack_f)
    return fc_fail(err, FC_EPARAM, fci_path_key(p, sizeof p, path, "reseat_forward"),
                   "reseat pressure %g Pa must be below the cracking pressure %g Pa", L->reseat_f, L->crack_f);
  if (L->reseat_r >= L->crack_r)
    return fc_fail(err, FC_EPARAM, fci_path_key(p, sizeof p, path, "reseat_reverse"),
                   "reseat pressure %g Pa must be below the cracking pressure %g Pa", L->reseat_r, L->crack_r);
  if (L->blow_f < L->crack_f || L->blow_r < L->crack_r)
    return fc_fail(err, FC_EPARAM, fci_path_key(p, sizeof p, path, "blowout"),
                   "blowout pressure (%g / %g Pa) must not be below the cracking pressure "
                   "(%g / %g Pa)", L->blow_f, L->blow_r, L->crack_f, L->crack_r);
  return FC_OK;
}

int fci_valve_law_parse(fci_valve_law *L, const struct cJSON *obj, const char *path,
                        const fci_parse_ctx *ctx, int have_design, fc_error *err)
{
  int rc, req = !have_design;
  double b = INFINITY;
  if (!have_design) L->blow_f = L->blow_r = INFINITY;
  if ((rc = get_p(obj, "crack_forward", req, &L->crack_f, path, ctx, err)) ||
      (rc = get_p(obj, "crack_reverse", req, &L->crack_r, path, ctx, err)) ||
      (rc = get_p(obj, "reseat_forward", 0, &L->reseat_f, path, ctx, err)) ||
      (rc = get_p(obj, "reseat_reverse", 0, &L->reseat_r, path, ctx, err)) ||
      (rc = get_p(obj, "blowout", 0, &b, path, ctx, err)))
    return rc;
  if (isfinite(b)) L->blow_f = L->blow_r = b;
  if ((rc = get_p(obj, "blowout_forward", 0, &L->blow_f, path, ctx, err)) ||
      (rc = get_p(obj, "blowout_reverse", 0, &L->blow_r, path, ctx, err)) ||
      (rc = fci_get_quantity(obj, "open_resistance", FC_DIM_RESISTANCE, !(L->R_open > 0), L->R_open,
                             FCI_POS, &L->R_open, path, ctx, err)) ||
      (rc = fci_get_quantity(obj, "leak_conductance", FC_DIM_CONDUCTANCE, 0, FCI_VALVE_LEAK_DEFAULT,
                             FCI_NONNEG, &L->G_leak, path, ctx, err)))
    return rc;
  return check_order(L, path, err);
}

void fci_valve_law_flow(const fci_valve_law *L, int mode, const double p[2], fci_flow *out)
{
  double dp = p[0] - p[1], g = mode == FCI_VALVE_SEALED ? L->G_leak : 1.0 / L->R_open;
  double off = mode == FCI_VALVE_FWD ? -L->reseat_f : mode == FCI_VALVE_REV ? L->reseat_r : 0;
  *out = (fci_flow){0};
  out->q = g * (dp + off);
  out->dq_dpa = g;
  out->dq_dpb = -g;
}

int fci_valve_law_linear(const fci_valve_law *L, int mode, double k[3])
{
  fci_flow f;
  fci_valve_law_flow(L, mode, (const double[2]){0, 0}, &f);
  k[0] = f.q;
  k[1] = f.dq_dpa;
  k[2] = f.dq_dpb;
  return 1;
}

void fci_valve_law_roots(const fci_valve_law *L, int mode, const double p[2], double *g)
{
  double dp = p[0] - p[1];
  switch (mode) {
  case FCI_VALVE_SEALED: g[0] = dp - L->crack_f; g[1] = dp + L->crack_r; break;
  case FCI_VALVE_FWD: g[0] = dp - L->reseat_f; g[1] = 1; break;
  case FCI_VALVE_REV: g[0] = dp + L->reseat_r; g[1] = 1; break;
  default: g[0] = g[1] = 1; break;
  }
  /* Blowout thresholds; a never-blowing valve gets a constant, sign-stable function. */
  int blown = mode == FCI_VALVE_BLOWN;
  g[2] = blown || !isfinite(L->blow_f) ? -1 : dp - L->blow_f;
  g[3] = blown || !isfinite(L->blow_r) ? -1 : -dp - L->blow_r;
}

int fci_valve_law_event(const fci_valve_law *L, fc_elem *e, double t, const int *found,
                        const double p[2])
{
  double dp = p[0] - p[1];
  int old = e->mode, held = t < e->hold_until;
  if (old == FCI_VALVE_BLOWN) return 0;
  if (found[2] > 0 || found[3] > 0 || dp >= L->blow_f || -dp >= L->blow_r) e->mode = FCI_VALVE_BLOWN;
  else if (old == FCI_VALVE_SEALED && (found[0] > 0 || dp > L->crack_f)) e->mode = FCI_VALVE_FWD;
  else if (old == FCI_VALVE_SEALED && (found[1] < 0 || -dp > L->crack_r)) e->mode = FCI_VALVE_REV;
  else if (old == FCI_VALVE_FWD && !held && (found[0] < 0 || dp < L->reseat_f)) e->mode = FCI_VALVE_SEALED;
  else if (old == FCI_VALVE_REV && !held && (found[0] > 0 || -dp < L->reseat_r)) e->mode = FCI_VALVE_SEALED;
  return e->mode != old;
}

void fci_valve_law_info(const fci_valve_law *L, fci_info *info, const char *kind)
{
  info->resistance = L->R_open;
  info->blowout_forward = isfinite(L->blow_f) ? L->blow_f : 0;
  info->blowout_reverse = isfinite(L->blow_r) ? L->blow_r : 0;
  if (info->no_text) return;
  snprintf(info->text, sizeof info->text, "%s: crack %.4g / %.4g Pa, reseat %.4g / %.4g Pa, "
           "blowout %.4g / %.4g Pa, R_open %.3g Pa s/m^3", kind, L->crack_f, L->crack_r,
           L->reseat_f, L->reseat_r, L->blow_f, L->blow_r, L->R_open);
}
