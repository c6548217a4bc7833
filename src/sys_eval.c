/* ferrocirc — evaluating the assembled system: pressures, flows, right-hand side, events.
 * See sys.h for the formulation (exact elimination of algebraic nodes). */
#include <math.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "sys.h"

#define NEWTON_MAX 30 /* algebraic Newton iterations for nonlinear elements; affine ones need 1 */

static void fixed_pressures(fci_sys *s, double t)
{
  const fc_net *net = s->net;
  for (int k = 0; k < s->nfix; k++) {
    const fc_elem *e = &net->elem[s->fix_order[k]];
    double v = e->type->xFix(e, t);
    int d = s->fix_node[k];
    if (e->role == FC_ROLE_FIX) s->p[d] = v;
    else if (d == e->node[1]) s->p[d] = s->p[e->node[0]] + v; /* p(to) = p(from) + P */
    else s->p[d] = s->p[e->node[1]] - v;
  }
}

/* Flow of FLOW element i (linear from its coefficients, else through xFlow), into q and the
 * inflows of its nodes. */
static void flow_one(fci_sys *s, double t, const double *x, int i)
{
  int j = s->lin_of[i];
  if (j >= 0) {
    const double *k = s->lin_k + 3 * j;
    double v = k[0] + k[1] * s->p[s->lin_a[j]] + k[2] * s->p[s->lin_b[j]];
    s->q[i] = v;
    s->qin[s->lin_a[j]] -= v;
    s->qin[s->lin_b[j]] += v;
    return;
  }
  const fc_elem *e = &s->net->elem[i];
  double pp[2] = {s->p[e->node[0]], s->p[e->node[1]]};
  fci_flow f = {0};
  e->type->xFlow(e, t, pp, e->nState ? x + e->iState : NULL, &f);
  s->q[i] = f.q;
  s->dqa[i] = f.dq_dpa;
  s->dqb[i] = f.dq_dpb;
  memcpy(s->dqx + FCI_MAX_OWN * i, f.dq_dx, sizeof f.dq_dx);
  s->qin[e->node[0]] -= f.q;
  s->qin[e->node[1]] += f.q;
}

/* Linear elements j0 <= j < j1, all conductances: (0 + g pa) - g pb is k0 + k1 pa + k2 pb with
 * k0 = 0, k2 = -k1 bit for bit (signed zeros included), from one coefficient. */
static void cond_flows(fci_sys *s, int j0, int j1)
{
  const double *p = s->p, *g = s->lin_g;
  const int *la = s->lin_a, *lb = s->lin_b, *le = s->lin_el;
  const unsigned char *keep = s->qkeep;
  double *q = s->q, *qin = s->qin;
  if (keep) /* the flows nobody reads are not stored: at 10^5 elements, megabytes per pass */
    for (int j = j0; j < j1; j++) {
      double v = (0.0 + g[j] * p[la[j]]) - g[j] * p[lb[j]];
      if (keep[le[j]]) q[le[j]] = v;
      qin[la[j]] -= v;
      qin[lb[j]] += v;
    }
  else
    for (int j = j0; j < j1; j++) {
      double v = (0.0 + g[j] * p[la[j]]) - g[j] * p[lb[j]];
      q[le[j]] = v;
      qin[la[j]] -= v;
      qin[lb[j]] += v;
    }
}

/* The linear elements in element order, so that the inflow sums are what they always were:
 * runs of conductances, and between them the few others (an open valve, with its offset)
 * through flow_one, from their three coefficients. */
static void flows(fci_sys *s, double t, const double *x)
{
  memset(s->qin, 0, (size_t)s->nN * sizeof *s->qin);
  int j = 0;
  for (int n = 0; n < s->nlinx; n++) {
    int jx = s->linx_j[n];
    cond_flows(s, j, jx);
    flow_one(s, t, x, s->lin_el[jx]);
    j = jx + 1;
  }
  cond_flows(s, j, s->nlin);
  for (int g = 0; g < s->ngen; g++) flow_one(s, t, x, s->gen_el[g]);
}

/* After an update zbuf of the ALG pressures: q += dq/dpa dpa + dq/dpb dpb, inflows likewise,
 * for the FLOW elements at an ALG node (the others' pressures did not move), in the order of
 * the linear and the generic lists (src/sys_linear.c), which keeps the inflow sums' order. */
static void update_flows(fci_sys *s)
{
  const double *z = s->zbuf;
  for (int u = 0; u < s->nupd; u++) {
    int i = s->upd_el[u];
    double da = z[s->upd_z[2 * u]], db = z[s->upd_z[2 * u + 1]];
    if (da == 0 && db == 0) continue;
    double dq = s->dqa[i] * da + s->dqb[i] * db;
    s->q[i] += dq;
    s->qin[s->ea[i]] -= dq;
    s->qin[s->eb[i]] += dq;
  }
}

/* Updates per entry of the matrix and its factors up to which the fixed-pivot LU takes a
 * pattern (sys_lu.h). Trees, chains and loops of channels fill in nothing: 0.17 on the valve-fed
 * trees of docs/performance.md. Meshes do: 3.7, 7.6 and 15.8 on grids of 16 x 16, 32 x 32 and
 * 64 x 64 nodes, where at 64 x 64 the lists took 47 MB against KLU's 18 MB and 0.98 s against
 * 0.75 s (circuit (c), eighth round). */
#define LU_CAP 1.0

/* The fixed-pivot LU of matrix M (pattern M, values v0 + gamma v1), built at its first use; a
 * pattern it refuses clears *want, and KLU takes that matrix from then on. 1 if it factored
 * (counted in nFixed), 0 if KLU must. */
static int fixed_factor(fci_sys *s, fci_lu **lu, int *want, const fci_csc *M, const double *v0,
                        const double *v1, double gamma)
{
  if (*want && !*lu && !(*lu = fci_lu_new(M->n, M->colptr, M->rowind, LU_CAP)))
    *want = 0; /* fill-in, or out of memory here */
  int on = *want && fci_lu_factor(*lu, v0, v1, gamma) == FC_OK;
  s->nFixed += on;
  return on;
}

/* Solve M x = b in place with M's last factorisation: the fixed-pivot LU's if on, else KLU's. */
static int solve_with(const fci_lu *lu, int on, fci_klu *k, const fci_csc *M, double *b)
{
  if (!on) return fci_klu_solve(k, M, b);
  fci_lu_solve(lu, b);
  return FC_OK;
}

/* Conservation F_i = qin at each ALG node; dF/dz from the element partials. */
static int assemble_G(fci_sys *s)
{
  memset(s->G.val, 0, (size_t)s->G.nnz * sizeof *s->G.val);
  for (int f = 0; f < s->nflow; f++) {
    int i = s->flow_el[f];
    const int *sl = s->gslot + 4 * i;
    double d[2] = {s->dqa[i], s->dqb[i]};
    for (int t = 0; t < 2; t++)
      for (int u = 0; u < 2; u++)
        if (sl[2 * t + u] >= 0) s->G.val[sl[2 * t + u]] += (t == 0 ? -d[u] : d[u]);
  }
  s->nGfact++;
  /* Every row a node's conservation, every column its pressure: for passive elements each
   * column's diagonal outweighs the rest, as in the Newton matrix of a compliant network, so
   * the pivots can be fixed (sys_lu.h), KLU taking what they do not suit. */
  s->glu_on = fixed_factor(s, &s->glu, &s->glu_want, &s->G, s->G.val, NULL, 0);
  return s->glu_on ? FC_OK : fci_klu_factor(&s->gk, &s->G, 0);
}

static int solve_alg(fci_sys *s, double t, const double *x)
{
  for (int it = 0; it < NEWTON_MAX; it++) {
    if ((s->gdirty || s->nonlinear) && assemble_G(s)) return 1;
    s->gdirty = 0;
    for (int i = 0; i < s->nz; i++) s->zbuf[i] = -s->qin[s->znode[i]];
    if (solve_with(s->glu, s->glu_on, &s->gk, &s->G, s->zbuf)) return 1;
    double worst = 0;
    for (int i = 0; i < s->nz; i++) {
      double *pz = &s->p[s->znode[i]];
      *pz += s->zbuf[i];
      double r = fabs(s->zbuf[i]) / (fabs(*pz) + s->net->sim.abs_tol_p);
      if (r > worst) worst = r;
    }
    if (!s->nonlinear) {
      /* Affine elements: the flows follow the pressure update exactly, without a second pass
       * through every element's law. */
      update_flows(s);
      return 0;
    }
    flows(s, t, x);
    if (worst < 1e-12) return 0;
  }
  return 1;
}

/* Flows of ideal pressure sources follow from conservation at the node each one drives; the
 * reverse of the fixing order settles chains of them from the far end inward. */
static void link_flows(fci_sys *s)
{
  const fc_net *net = s->net;
  for (int k = s->nfix - 1; k >= 0; k--) {
    int i = s->fix_order[k], d = s->fix_node[k];
    const fc_elem *e = &net->elem[i];
    if (e->role != FC_ROLE_LINK) continue;
    double q = (d == e->node[1]) ? -s->qin[d] : s->qin[d];
    s->q[i] = q;
    s->qin[e->node[0]] -= q;
    s->qin[e->node[1]] += q;
  }
}

#define SWAP(a, b) do { void *tmp_ = (a); (a) = (b); (b) = tmp_; } while (0)

int fci_sys_swap(fci_sys *s)
{
  if (s->ngen > 0 || s->ldirty) return 0;
  SWAP(s->p, s->p2);
  SWAP(s->q, s->q2);
  SWAP(s->qin, s->qin2);
  SWAP(s->Csum, s->Csum2);
  SWAP(s->dCsum, s->dCsum2);
  SWAP(s->xlast, s->xlast2);
  double t = s->tlast;
  s->tlast = s->tlast2;
  s->tlast2 = t;
  int c = s->cached;
  s->cached = s->cached2;
  s->cached2 = c;
  return 1;
}

void fci_sys_invalidate(fci_sys *s)
{
  s->cached = s->cached2 = 0;
  s->gdirty = 1;
  s->ldirty = 1;
}

/* Pressure of store k holding volume V (relative to 0 gauge, or to the backing pressure of a
 * driven membrane): Newton on sum_e V_e(t, p) = V from the last pressure; one step is exact for
 * constant compliances, a few for a gas bubble. Also leaves C(p) in Csum[k]. */
static int store_pressure(fci_sys *s, double t, int k, double V)
{
  double *p = &s->p[s->xnode[k]], last = INFINITY;
  if (s->Cconst[k] > 0) { /* constant compliances: V = C p, p = V (1/C) to an ulp */
    *p = V * s->Cinv[k];
    s->Csum[k] = s->Cconst[k];
    s->dCsum[k] = 0;
    return 0;
  }
  for (int it = 0; it < NEWTON_MAX; it++) {
    double C = 0, dC = 0, v = 0;
    for (int j = s->store_ptr[k]; j < s->store_ptr[k + 1]; j++) {
      const fc_elem *e = &s->net->elem[s->store_el[j]];
      double c, dc;
      e->type->xStore(e, t, *p, &c, &dc);
      v += e->type->xVolume(e, t, *p);
      C += c;
      dC += dc;
    }
    if (!(C > 0) || !isfinite(v)) return 1;
    s->Csum[k] = C;
    s->dCsum[k] = dC;
    double dp = (V - v) / C;
    /* Constant compliance: one step is exact. Otherwise Newton converges quadratically until
     * rounding of V (relative to V/C, which can be far above p) stops the decrease. */
    if (dC == 0) { *p += dp; return 0; }
    if (fabs(dp) >= last) return 0;
    *p += dp;
    if (fabs(dp) <= 1e-15 * (fabs(*p) + fabs(V / C))) return 0;
    last = fabs(dp);
  }
  return 1;
}

/* Imposed and stored pressures (not the algebraic ones); 1 if a store has no pressure. */
static int pressures(fci_sys *s, double t, const double *x)
{
  fixed_pressures(s, t);
  if (s->all_const) { /* V = C p as above; Csum and dCsum were set with Cconst */
    for (int k = 0; k < s->ns; k++) s->p[s->xnode[k]] = x[k] * s->Cinv[k];
    return 0;
  }
  for (int k = 0; k < s->ns; k++)
    if (store_pressure(s, t, k, x[k])) return 1;
  return 0;
}

int fci_sys_eval_some(fci_sys *s, double t, const double *x, const int *el, int nel,
                      const int *nd, int nnd)
{
  if (s->nz > 0 || s->nlink > 0) return -1;
  s->cached = 0;
  if (s->ldirty) fci_sys_linear_refresh(s);
  if (pressures(s, t, x)) return 2;
  for (int j = 0; j < nnd; j++) s->qin[nd[j]] = 0;
  for (int j = 0; j < nel; j++) flow_one(s, t, x, el[j]);
  return 0;
}

int fci_sys_eval(fci_sys *s, double t, const double *x)
{
  s->nEval++;
  if (s->cached && t == s->tlast && (s->nx == 0 || !memcmp(x, s->xlast, (size_t)s->nx * sizeof *x))) {
    s->nEvalHit++;
    return 0;
  }
  s->cached = 0;
  if (s->ldirty) fci_sys_linear_refresh(s);
  if (pressures(s, t, x)) return 2;
  flows(s, t, x);
  if (s->nz > 0 && solve_alg(s, t, x)) return 1;
  link_flows(s);
  if (s->nx) memcpy(s->xlast, x, (size_t)s->nx * sizeof *x);
  s->tlast = t;
  s->cached = 1;
  return 0;
}

int fci_sys_rhs_from_eval(fci_sys *s, double t, const double *x, double *xdot)
{
  const fc_net *net = s->net;
  double J[FCI_MAX_OWN * (2 + FCI_MAX_OWN)];
  for (int k = 0; k < s->ns; k++) xdot[k] = s->qin[s->xnode[k]]; /* dV/dt = sum of inflows */
  for (int j = 0; j < s->nstate_el; j++) {
    const fc_elem *e = &net->elem[s->state_el[j]];
    double pp[2] = {s->p[e->node[0]], s->p[e->node[1]]};
    int rc = e->type->xRhs(e, t, pp, x + e->iState, xdot + e->iState, J);
    if (rc) return rc;
  }
  return 0;
}

void fci_sys_roots(fci_sys *s, double t, const double *x, double *g)
{
  const fc_net *net = s->net;
  for (int j = 0; j < s->nroot_el; j++) {
    const fc_elem *e = &net->elem[s->root_el[j]];
    double pp[2] = {s->p[e->node[0]], e->nTerm == 2 ? s->p[e->node[1]] : 0};
    e->type->xRoot(e, t, pp, e->nState ? x + e->iState : NULL, g + e->iRoot);
  }
}

void fci_sys_rest(const fci_sys *s, double *x)
{
  for (int k = 0; k < s->nx; k++) x[k] = k < s->ns ? fci_sys_store_volume(s, 0.0, k, 0.0) : 0.0;
}

double fci_sys_store_volume(const fci_sys *s, double t, int k, double p)
{
  const fc_net *net = s->net;
  double v = 0;
  for (int j = s->store_ptr[k]; j < s->store_ptr[k + 1]; j++) {
    const fc_elem *e = &net->elem[s->store_el[j]];
    v += e->type->xVolume(e, t, p);
  }
  return v;
}

/* ---- Newton matrix (see sys.h) ---- */

/* Values in the order of sys_layout.c's walk_aug. steady: diag(C) dropped and gamma = 1. */
static void stamp_aug(fci_sys *s, double t, const double *x, double gamma, int steady)
{
  const fc_net *net = s->net;
  double *A = s->A.val, J[FCI_MAX_OWN * (2 + FCI_MAX_OWN)], tmp[FCI_MAX_OWN];
  int k = 0;
  memset(A, 0, (size_t)s->A.nnz * sizeof *A);
  for (int r = 0; r < s->nx; r++, k++) {
    A[s->aslot[k]] += steady ? 0 : r < s->ns ? s->Cpre[r] : 1;
  }
  for (int f = 0; f < s->nflow; f++) {
    int i = s->flow_el[f];
    const fc_elem *e = &net->elem[i];
    int kind[2] = {s->kind[e->node[0]], s->kind[e->node[1]]};
    double d[2] = {s->dqa[i], s->dqb[i]}, *dx = s->dqx + FCI_MAX_OWN * i;
    for (int t2 = 0; t2 < 2; t2++) {
      if (kind[t2] == FCI_NODE_FIXED) continue;
      double f = (kind[t2] == FCI_NODE_STORE ? -gamma : 1.0) * (t2 == 0 ? -1.0 : 1.0);
      for (int u = 0; u < 2; u++) if (kind[u] != FCI_NODE_FIXED) A[s->aslot[k++]] += f * d[u];
      for (int m = 0; m < e->nState; m++) A[s->aslot[k++]] += f * dx[m];
    }
    if (!e->nState) continue;
    int w = 2 + e->nState;
    double pp[2] = {s->p[e->node[0]], s->p[e->node[1]]};
    e->type->xRhs(e, t, pp, x + e->iState, tmp, J);
    for (int r = 0; r < e->nState; r++) {
      for (int u = 0; u < 2; u++) if (kind[u] != FCI_NODE_FIXED) A[s->aslot[k++]] -= gamma * J[r * w + u];
      for (int m = 0; m < e->nState; m++) A[s->aslot[k++]] -= gamma * J[r * w + 2 + m];
    }
  }
}

/* The matrix as a0 + gamma a1: a0 = A(0), a1 = A(1) - A(0), each from one stamp (exact for
 * the Jacobian at (t, x); for every gamma while the network is affine, sys.h aff_able). */
static void stamp_parts(fci_sys *s, double t, const double *x, double *a0, double *a1)
{
  size_t nnz = (size_t)s->A.nnz;
  const double *A = s->A.val;
  stamp_aug(s, t, x, 0.0, 0);
  memcpy(a0, A, nnz * sizeof *A);
  stamp_aug(s, t, x, 1.0, 0);
  for (size_t p = 0; p < nnz; p++) a1[p] = A[p] - a0[p];
}

/* A(gamma) from the two parts, stamped once per mode. The sum differs from a direct stamp at
 * gamma only by rounding. */
static int affine_parts(fci_sys *s, double t, const double *x)
{
  size_t nnz = (size_t)s->A.nnz;
  if (!s->aff_ok) {
    if ((!s->aa0 && !(s->aa0 = fc_calloc(nnz, sizeof *s->aa0))) ||
        (!s->aa1 && !(s->aa1 = fc_calloc(nnz, sizeof *s->aa1))))
      return -1;
    stamp_parts(s, t, x, s->aa0, s->aa1);
    s->aff_ok = 1;
  }
  return 0;
}

/* The affine matrix is formed where it is used: as the fixed-pivot LU loads it, or in A.val
 * for KLU. */
static int setup(fci_sys *s, double t, const double *x, double gamma, int steady)
{
  if (fci_sys_eval(s, t, x)) return 1;
  memcpy(s->Cpre, s->Csum, (size_t)s->ns * sizeof *s->Cpre);
  int affine = !steady && s->aff_able && !affine_parts(s, t, x);
  if (!affine) stamp_aug(s, t, x, gamma, steady);
  s->nAfact++;
  s->lu_on = fixed_factor(s, &s->lu, &s->lu_want, &s->A, affine ? s->aa0 : s->A.val,
                          affine ? s->aa1 : NULL, gamma);
  if (s->lu_on) return 0;
  if (affine)
    for (int p = 0; p < s->A.nnz; p++) s->A.val[p] = s->aa0[p] + gamma * s->aa1[p];
  int rc = fci_klu_factor(&s->ak, &s->A, s->afactored);
  s->afactored = (rc == FC_OK);
  return rc ? 1 : 0;
}

int fci_sys_ksetup(fci_sys *s, double t, const double *x, double gamma)
{
  if (s->nx == 0) return 0;
  if (fci_sys_eval(s, t, x)) return 1;
  memcpy(s->Cpre, s->Csum, (size_t)s->ns * sizeof *s->Cpre);
  stamp_parts(s, t, x, s->kr->a0, s->kr->a1);
  return fci_krylov_setup(s, gamma);
}

int fci_sys_psetup(fci_sys *s, double t, const double *x, double gamma)
{
  if (s->nx == 0) return 0;
  return setup(s, t, x, gamma, 0);
}

int fci_sys_psolve(fci_sys *s, double *r)
{
  if (s->nx == 0) return 0;
  if (s->lu_on) { /* every unknown a store's pressure change (lu_want: nz = no = 0) */
    fci_lu_solve(s->lu, r);
    for (int k = 0; k < s->ns; k++) r[k] *= s->Cpre[k];
    return 0;
  }
  double *b = s->abuf;
  memcpy(b, r, (size_t)s->nx * sizeof *r);
  for (int i = 0; i < s->nz; i++) b[s->nx + i] = 0;
  if (fci_klu_solve(&s->ak, &s->A, b)) return 1; /* the fixed-pivot LU returned above */
  /* Store rows were solved for pressure changes; the states are volumes: dV = C dp. */
  for (int k = 0; k < s->nx; k++) r[k] = k < s->ns ? s->Cpre[k] * b[k] : b[k];
  return 0;
}

int fci_sys_steady(fci_sys *s, double t, double *x, fc_error *err)
{
  double J[FCI_MAX_OWN * (2 + FCI_MAX_OWN)];
  for (int it = 0; it < NEWTON_MAX; it++) {
    if (setup(s, t, x, 1.0, 1))
      return fc_fail(err, FC_ETOPO, "$.simulation.initial", "the steady state is undetermined "
                     "(a part of the network with compliance has no path to a reservoir, or a "
                     "loop has no resistance); use \"initial\": \"rest\"");
    double *b = s->abuf, worst = 0;
    /* Residual R = [-qin at stores; -xdot_own; qin at ALG (already 0)]; solve A d = -R, where the
     * store unknowns are pressure changes (sources frozen at t: a drive's rate does not count). */
    for (int k = 0; k < s->ns; k++) b[k] = s->qin[s->xnode[k]];
    for (int i = 0; i < s->nE; i++) {
      const fc_elem *e = &s->net->elem[i];
      if (!e->nState) continue;
      double pp[2] = {s->p[e->node[0]], s->p[e->node[1]]};
      e->type->xRhs(e, t, pp, x + e->iState, b + e->iState, J);
    }
    for (int i = 0; i < s->nz; i++) b[s->nx + i] = 0;
    if (solve_with(s->lu, s->lu_on, &s->ak, &s->A, b))
      return fc_fail(err, FC_ESOLVE, "$.simulation.initial", "steady-state solve failed");
    for (int k = 0; k < s->nx; k++) {
      double ref = k < s->ns ? fabs(s->p[s->xnode[k]] + b[k]) + s->net->sim.abs_tol_p
                             : fabs(x[k] + b[k]) + s->net->sim.abs_tol_q;
      x[k] = k < s->ns ? fci_sys_store_volume(s, t, k, s->p[s->xnode[k]] + b[k]) : x[k] + b[k];
      if (fabs(b[k]) / ref > worst) worst = fabs(b[k]) / ref;
    }
    if (worst < 1e-12) return fci_sys_eval(s, t, x) ? FC_ESOLVE : FC_OK;
  }
  return fc_fail(err, FC_ESOLVE, "$.simulation.initial", "steady state did not converge in %d "
                 "Newton iterations", NEWTON_MAX);
}
