/* ferrocirc — statics of a ferrofluid plug pushed along a line problem (towards +x): rest
 * position and blowout of the whole plug; the crack and reseat come from plug_crack.c.
 *
 * Expulsion of the plug as a whole is a force balance on all of it: with the menisci at x1
 * (upstream) and x2 (downstream, fixed by the plug volume), planar on average, the ferrohydro-
 * static Bernoulli equation with the interface condition (Neuringer & Rosensweig 1964;
 * Rosensweig 1985, ch. 5; physics reference sec. 5) gives the pressure difference the plug holds,
 *     F(x1) = Psibar(x1) - Psibar(x2) + Pi1 - Pi2,
 * Psibar the cross-section mean of mu0 Phi(H) + mu0 Mn^2/2 - (rho_ff - rho_c) g z: the mean,
 * because the magnetic body force on the plug integrates to the area integral of mu0 Phi over
 * each meniscus. Pi1 at the receding and Pi2 at the advancing angle while pushed forward (F+);
 * the mean cosine at rest (F0). Rest: the minimum of U = int F0 dV1 (a stable zero of F0).
 * Loaded quasi-statically the plug slides forward to the first position whose F+ reaches the
 * applied pressure; no static position exists anywhere downstream above max F+ beyond the rest
 * position: that is the blowout. Pressures in Pa. */
#include <math.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "valve_int.h"

enum { REC = 0, ADV = 1, STAT = 2 };

typedef struct work {
  const fci_line *L;
  int    *k;          /* [n] node at or before x2 */
  double *t;          /* [n] fraction of the way from node k to k+1 */
  double *f0, *fp;    /* [n] body balance at rest and pushed forward */
  int     jmax;       /* last node with the whole plug inside the channel */
} work;

static double at2(const work *w, const double *a, int j)
{
  int k = w->k[j];
  return (k + 1 < w->L->n) ? a[k] + w->t[j] * (a[k + 1] - a[k]) : a[k];
}

/* x2 for every x1 node; two pointers since the channel volume increases along x. */
static void place_far_meniscus(work *w, double volume)
{
  const fci_line *L = w->L;
  int k = 0;
  w->jmax = -1;
  for (int j = 0; j < L->n; j++) {
    double target = L->vol[j] + volume;
    if (target > L->vol[L->n - 1]) break;
    while (k + 1 < L->n && L->vol[k + 1] < target) k++;
    double dv = (k + 1 < L->n) ? L->vol[k + 1] - L->vol[k] : 0.0;
    w->k[j] = k;
    w->t[j] = dv > 0.0 ? (target - L->vol[k]) / dv : 0.0;
    w->jmax = j;
  }
}

static void body_balance(work *w)
{
  const fci_line *L = w->L;
  for (int j = 0; j <= w->jmax; j++) {
    double mag = L->pbar[j] - at2(w, L->pbar, j);
    w->f0[j] = mag + L->c1[STAT][j] - at2(w, L->c2[STAT], j);
    w->fp[j] = mag + L->c1[REC][j] - at2(w, L->c2[ADV], j);
  }
}

/* Rest position: the global minimum of the plug's energy U(V1) = int F0 dV1. */
static int rest_node(const work *w)
{
  const fci_line *L = w->L;
  double u = 0.0, best = 0.0;
  int j0 = 0;
  for (int j = 1; j <= w->jmax; j++) {
    u += 0.5 * (w->f0[j - 1] + w->f0[j]) * (L->vol[j] - L->vol[j - 1]);
    if (u < best) {
      best = u;
      j0 = j;
    }
  }
  return j0;
}

static double blowout(const work *w, int j0)
{
  double b = 0.0;
  for (int j = j0; j <= w->jmax; j++) b = fmax(b, w->fp[j]);
  return b;
}

int fci_statics_push(const fci_line *L, double volume, fci_dir_result *r, fc_error *err)
{
  work w = {L, NULL, NULL, NULL, NULL, -1};
  size_t n = (size_t)L->n;
  int rc = FC_OK;
  memset(r, 0, sizeof *r);
  w.k = fc_calloc(n, sizeof(int));
  w.t = fc_calloc(n, sizeof(double));
  w.f0 = fc_calloc(2 * n, sizeof(double));
  if (!w.k || !w.t || !w.f0) {
    rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory in the plug statics");
    goto fail;
  }
  w.fp = w.f0 + n;
  place_far_meniscus(&w, volume);
  if (w.jmax < 2) {
    rc = fc_fail(err, FC_EPARAM, NULL, "the plug (%g uL) does not fit in the channel (%g uL)",
                 volume * 1e9, L->vol[L->n - 1] * 1e9);
    goto fail;
  }
  body_balance(&w);
  int j0 = rest_node(&w);
  if (j0 == 0 || j0 == w.jmax) {
    rc = fc_fail(err, FC_ESOLVE, NULL, "the magnets hold the plug at no stable position inside "
                 "the channel (it would leave through the %s end): move the magnets or the plug, "
                 "or lengthen the channel", j0 == 0 ? "upstream" : "downstream");
    goto fail;
  }
  rc = fci_statics_crack(L, volume, r, err);
  if (rc) goto fail;
  r->blowout = blowout(&w, j0);
  r->x_rest = 0.5 * (L->x[j0] + at2(&w, L->x, j0));
  if (r->blowout <= r->crack) { /* pushed out whole before any path opens: nothing reseats */
    r->crack = r->blowout;
    r->reseat = 0.0;
    r->expelled = 1;
    r->path = -1;
  }
fail:
  fc_free(w.k);
  fc_free(w.t);
  fc_free(w.f0);
  return rc;
}
