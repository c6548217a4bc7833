/* ferrocirc — breakthrough (crack) and reseat of a ferrofluid plug: the level-set picture.
 *
 * In a static ferrofluid the composite pressure is p* = C + mu0 Phi(H) - rho g z (Neuringer &
 * Rosensweig 1964), and a free surface facing carrier at pressure p carries
 * p = p* + mu0 Mn^2/2 + Pi. Where magnetic pressures dwarf capillary ones (kPa against
 * gamma/h ~ 10-50 Pa in mm channels) each free surface therefore lies on a level set of the
 * meniscus potential Psi = mu0 Phi + mu0 Mn^2/2 - (rho_ff - rho_c) g z: the upstream surface on
 * Psi = lambda1 = p1 - C - Pi1, the downstream one on Psi = lambda2 = p2 - C - Pi2, so
 *     p1 - p2 = lambda1 - lambda2 + Pi1 - Pi2,
 * the Bernoulli balance of the physics reference (sec. 5) on every path at once. Along each path
 * P (lines parallel to x through the cross-section) upstream carrier reaches the first point with
 * Psi_P >= lambda1, downstream carrier the last point with Psi_P >= lambda2; the plug volume fixes
 * lambda2 for a given lambda1. The plug leaks when lambda1 exceeds max Psi_P on some path:
 * first on the path whose maximum is lowest (the weakest field), Lambda = min_P max Psi_P, so
 *     crack = Lambda - lambda2(Lambda) + Pi1(receding) - Pi2(advancing).
 * Reseat: the open finger closes when the ferrofluid re-advances into it (upstream tip at the
 * advancing angle), and the ferrofluid that refills it comes from the downstream surface, which
 * therefore recedes; the plug is in its displaced crack configuration (lambda2(Lambda)), so
 *     reseat = Lambda - lambda2(Lambda) + Pi1(advancing) - Pi2(receding).
 * Pressures in Pa, volumes in m^3. */
#include <math.h>

#include "valve_int.h"

enum { REC = 0, ADV = 1, STAT = 2 };

static double lerp_x(const fci_line *L, const double *a, double x)
{
  /* Linear interpolation of a node array at position x (clamped to the grid). */
  if (x <= L->x[0]) return a[0];
  if (x >= L->x[L->n - 1]) return a[L->n - 1];
  int lo = 0, hi = L->n - 1;
  while (hi - lo > 1) {
    int mid = (lo + hi) / 2;
    if (L->x[mid] <= x) lo = mid;
    else hi = mid;
  }
  double t = (x - L->x[lo]) / (L->x[hi] - L->x[lo]);
  return a[lo] + t * (a[hi] - a[lo]);
}

/* First crossing of level from the upstream end (+INFINITY if never reached). */
static double first_at(const fci_line *L, const double *psi, double level)
{
  if (psi[0] >= level) return L->x[0];
  for (int j = 1; j < L->n; j++)
    if (psi[j] >= level)
      return L->x[j - 1] + (level - psi[j - 1]) / (psi[j] - psi[j - 1]) * (L->x[j] - L->x[j - 1]);
  return INFINITY;
}

/* Last crossing of level seen from the downstream end (-INFINITY if never reached). */
static double last_at(const fci_line *L, const double *psi, double level)
{
  int n = L->n;
  if (psi[n - 1] >= level) return L->x[n - 1];
  for (int j = n - 2; j >= 0; j--)
    if (psi[j] >= level)
      return L->x[j] + (psi[j] - level) / (psi[j] - psi[j + 1]) * (L->x[j + 1] - L->x[j]);
  return -INFINITY;
}

static double path_weight(const fci_line *L, int p)
{
  /* Simpson weights on the m x m path grid, normalised to a total of 1. */
  int m = (int)lround(sqrt((double)L->np)), iy = p / m, iz = p % m;
  double wy = (iy == 0 || iy == m - 1) ? 1.0 : (iy % 2 ? 4.0 : 2.0);
  double wz = (iz == 0 || iz == m - 1) ? 1.0 : (iz % 2 ? 4.0 : 2.0);
  return wy * wz / (9.0 * (m - 1) * (m - 1));
}

/* Plug volume for surface levels l1, l2; *xb: weighted mean position of the downstream surface,
 * *xc: plug centroid (both for reporting and for the capillary jump there). */
static double held_volume(const fci_line *L, double l1, double l2, double *xb, double *xc)
{
  double v = 0.0, sb = 0.0, sw = 0.0, sc = 0.0;
  for (int p = 0; p < L->np; p++) {
    const double *psi = L->ppath + (size_t)p * (size_t)L->n;
    double a = first_at(L, psi, l1), b = last_at(L, psi, l2), w = path_weight(L, p);
    if (!(a < b)) continue;
    double dv = w * (lerp_x(L, L->vol, b) - lerp_x(L, L->vol, a));
    v += dv;
    sb += w * b;
    sw += w;
    sc += dv * 0.5 * (a + b);
  }
  *xb = sw > 0.0 ? sb / sw : NAN;
  *xc = v > 0.0 ? sc / v : NAN;
  return v;
}

/* lambda2 such that the plug holds `volume` for upstream level l1, by bisection (the held volume
 * falls as lambda2 rises). FC_EPARAM if even a plug reaching the channel end is too small. */
static int solve_l2(const fci_line *L, double l1, double volume, double lo, double hi, double *l2,
                    double *xb, double *xc, fc_error *err)
{
  if (held_volume(L, l1, lo, xb, xc) < volume)
    return fc_fail(err, FC_EPARAM, NULL, "the plug (%g uL) would reach the end of the channel "
                   "before it cracks: lengthen the channel downstream", volume * 1e9);
  for (int it = 0; it < 200 && hi - lo > 1e-12 * (fabs(hi) + fabs(lo) + 1.0); it++) {
    double mid = 0.5 * (lo + hi);
    if (held_volume(L, l1, mid, xb, xc) >= volume) lo = mid;
    else hi = mid;
  }
  *l2 = lo;
  held_volume(L, l1, lo, xb, xc);
  return FC_OK;
}

int fci_statics_crack(const fci_line *L, double volume, fci_dir_result *r, fc_error *err)
{
  double lam = INFINITY, pmin = INFINITY, pmax = -INFINITY, xpk = 0.0;
  int pw = 0;
  for (int p = 0; p < L->np; p++) {
    const double *psi = L->ppath + (size_t)p * (size_t)L->n;
    double top = -INFINITY, xt = 0.0;
    for (int j = 0; j < L->n; j++) {
      if (psi[j] > top) {
        top = psi[j];
        xt = L->x[j];
      }
      pmin = fmin(pmin, psi[j]);
      pmax = fmax(pmax, psi[j]);
    }
    if (top < lam) {
      lam = top;
      pw = p;
      xpk = xt;
    }
  }
  double l2 = 0.0, xb = 0.0, xc = 0.0;
  int rc = solve_l2(L, lam, volume, pmin - 1.0, pmax + 1.0, &l2, &xb, &xc, err);
  if (rc) return rc;
  double base = lam - l2;
  r->crack = base + lerp_x(L, L->c1[REC], xpk) - lerp_x(L, L->c2[ADV], xb);
  r->reseat = base + lerp_x(L, L->c1[ADV], xpk) - lerp_x(L, L->c2[REC], xb);
  r->sealed = base + lerp_x(L, L->c1[STAT], xpk) - lerp_x(L, L->c2[STAT], xb) > 0.0;
  if (!r->sealed) r->crack = r->reseat = 0.0;
  r->crack = fmax(0.0, r->crack);
  r->reseat = fmin(r->crack, fmax(0.0, r->reseat));
  r->path = pw;
  r->x_crack = xc;
  return FC_OK;
}
