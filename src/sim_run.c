/* ferrocirc — one run's bookkeeping (see sim_run.h). */
#include <math.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "sim_run.h"

#define NEW(ptr, n) ((ptr) = fc_calloc((size_t)(n) > 0 ? (size_t)(n) : 1, sizeof *(ptr)))

/* Elements with modes, forcing or a culture role, and those in report.track: every cycle of
 * theirs is kept in the result (the summary reports them cycle by cycle), and the volumes of
 * the two-terminal ones are CVODES quadratures, their flow signs roots. */
/* Valves (modes), culture regions, sources and report.elements. A source is an element whose
 * forcing has a corner somewhere: the type's slot alone is not enough, or every chamber (whose
 * type can be driven) would count, and "tracked" statistics would cover every node of a tree. */
static int tracked(const fc_net *net, int i)
{
  const fc_elem *e = &net->elem[i];
  int sm;
  if (e->nRoot > 0 || e->culture || (e->type->xCorner && e->type->xCorner(e, 0.0, &sm) < INFINITY))
    return 1;
  for (int k = 0; k < net->report.nTrack; k++)
    if (net->report.track[k] == i) return 1;
  return 0;
}

static int alloc_result(fci_run *R)
{
  fc_sim_result *r = fc_calloc(1, sizeof *r);
  if (!(R->res = r)) return FC_ENOMEM;
  int N = R->net->nNode, E = R->net->nElem;
  r->nNode = N;
  r->nElem = E;
  r->cycle_period = R->net->sim.cycle_period;
  if (!NEW(r->p_min, N) || !NEW(r->p_max, N) || !NEW(r->p_mean, N) || !NEW(r->q_min, E) ||
      !NEW(r->q_max, E) || !NEW(r->q_mean, E) || !NEW(r->v_net, E) || !NEW(r->v_back, E) ||
      !NEW(r->v_stored, N) || !NEW(r->v_inflow, N))
    return FC_ENOMEM;
  int ncyc = r->cycle_period > 0 ? (int)floor(R->net->sim.duration / r->cycle_period + 1e-9) : 0;
  r->nCycleMax = ncyc;
  if (!NEW(r->cyc_row, E)) return FC_ENOMEM;
  r->nKeep = 0;
  for (int i = 0; i < E; i++) r->cyc_row[i] = tracked(R->net, i) ? r->nKeep++ : -1;
  size_t m = (size_t)FC_SIM_CYCLE_RING * E + (size_t)ncyc * r->nKeep;
  if (!NEW(r->cyc_v_net, m) || !NEW(r->cyc_v_back, m) || !NEW(r->cyc_open, m) ||
      !NEW(r->cyc_dp_max, m) || !NEW(r->cyc_dp_min, m) || !NEW(r->cyc_q_max, m) ||
      !NEW(r->cyc_q_min, m))
    return FC_ENOMEM;
  for (int n = 0; n < N; n++) { r->p_min[n] = INFINITY; r->p_max[n] = -INFINITY; }
  for (int i = 0; i < E; i++) {
    int two = R->net->elem[i].nTerm == 2;
    r->q_min[i] = two ? INFINITY : NAN;
    r->q_max[i] = two ? -INFINITY : NAN;
    r->q_mean[i] = two ? 0 : NAN;
  }
  return FC_OK;
}

/* cachegrind, a 458 754-element tree, one beat: the mask removes 40 M last-level write misses;
 * callgrind, 898 elements: it adds 1.9 % instructions */
#define QKEEP_MIN_ELEMENTS 100000

/* "tracked" statistics: an interior point of a step needs every node pressure (the extremes),
 * the flows of the reported elements and the inflows of the reported stores, and no other
 * flow, so it evaluates only the FLOW elements at those stores besides the reported ones
 * (fci_sys_eval_some; on a tree with one probed chamber about a tenth of the network). */
static int scope_points(fci_run *R)
{
  const fc_net *net = R->net;
  const fci_sys *s = R->sys;
  int E = net->nElem, N = net->nNode, ok = 1;
  R->npt_el = -1;
  if (R->stats_all || s->nz > 0 || s->nlink > 0) return FC_OK;
  unsigned char *nd = fc_calloc((size_t)N, 1), *el = fc_calloc((size_t)E, 1);
  if (!nd || !el || !NEW(R->pt_el, E) || !NEW(R->pt_nd, N)) ok = -1;
  for (int j = 0; ok > 0 && j < R->nst_store; j++) nd[s->xnode[R->st_store[j]]] = 1;
  for (int l = 0; ok > 0 && l < R->next_el; l++) el[R->ext_el[l]] = 1;
  for (int l = 0; ok > 0 && l < R->nst_el; l++) el[R->st_el[l]] = 1;
  int n = 0;
  for (int i = 0; ok > 0 && i < E; i++) {
    const fc_elem *e = &net->elem[i];
    int near = e->nTerm == 2 && (nd[e->node[0]] || nd[e->node[1]]);
    if (e->role == FC_ROLE_FLOW && (el[i] || near)) R->pt_el[n++] = i;
    else if (el[i]) ok = 0; /* a reported element whose flow is not its own law: evaluate all */
  }
  if (ok > 0) {
    R->npt_el = n;
    for (int v = 0; v < N; v++) if (nd[v]) R->pt_nd[R->npt_nd++] = v;
    /* Without samples, the flows read after an evaluation are those of these lists (the
     * quadratures and their flow-sign roots, the extremes and step integrals, the interior
     * points' elements): the evaluation may leave
     * the others unstored (sys.h qkeep). The samples read every flow. Only on networks whose
     * per-element arrays outgrow the cache: below, the mask's load and branch cost more than
     * the stores they save (docs/performance.md, sixth round). */
    if (!(R->sink && R->sink->xSample) && E >= QKEEP_MIN_ELEMENTS) {
      if (!NEW(R->qkeep, E)) ok = -1;
      /* sign_el is part of quad_el, st_el of ext_el (scope_init) */
      for (int l = 0; ok > 0 && l < R->nquad; l++) R->qkeep[R->quad_el[l]] = 1;
      for (int l = 0; ok > 0 && l < R->next_el; l++) R->qkeep[R->ext_el[l]] = 1;
      for (int l = 0; ok > 0 && l < n; l++) R->qkeep[R->pt_el[l]] = 1;
      if (ok > 0) R->sys->qkeep = R->qkeep;
    }
  }
  fc_free(nd);
  fc_free(el);
  return ok < 0 ? FC_ENOMEM : FC_OK;
}

/* The lists of sim_run.h's report scope, after qoff and qpn are known. */
static int scope_init(fci_run *R)
{
  const fc_net *net = R->net;
  const fci_sys *s = R->sys;
  int E = net->nElem, N = net->nNode;
  R->stats_all = !net->report.tracked_only;
  if (!NEW(R->rep_el, E) || !NEW(R->rep_node, N) || !NEW(R->st_el, E) || !NEW(R->ext_el, E) ||
      !NEW(R->st_node, N) || !NEW(R->st_store, s->ns))
    return FC_ENOMEM;
  for (int n = 0; n < net->report.nNodes; n++) R->rep_node[net->report.nodes[n]] = 1;
  for (int i = 0; i < E; i++) {
    const fc_elem *e = &net->elem[i];
    if (!R->stats_all && !tracked(net, i)) continue;
    R->rep_el[i] = 1;
    for (int t = 0; t < e->nTerm; t++) R->rep_node[e->node[t]] = 1;
  }
  for (int n = 0; n < N; n++) R->rep_node[n] |= R->stats_all;
  for (int i = 0; i < E; i++) {
    if (!R->rep_el[i] || net->elem[i].nTerm != 2) continue;
    R->ext_el[R->next_el++] = i;
    if (R->qoff[i] < 0) R->st_el[R->nst_el++] = i;
  }
  for (int n = 0; n < N; n++) if (R->rep_node[n] && R->qpn[n] < 0) R->st_node[R->nst_node++] = n;
  for (int k = 0; k < s->ns; k++) if (R->rep_node[s->xnode[k]]) R->st_store[R->nst_store++] = k;
  return scope_points(R);
}

int fci_run_init(fci_run *R, fc_net *net, const fc_sim_sink *sink, fc_error *err)
{
  memset(R, 0, sizeof *R);
  R->net = net;
  R->sink = sink;
  int rc = fci_sys_build(net, &R->sys, err);
  if (rc) return rc;
  fci_sys *s = R->sys;
  int E = net->nElem;
  if (!NEW(R->qoff, E) || !NEW(R->quad_el, E) || !NEW(R->qbuf, E) || !NEW(R->modes, E) || !NEW(R->corner_el, E) ||
      !NEW(R->sign_el, E) || !NEW(R->sign_side, E) || !NEW(R->x0, s->nx) || !NEW(R->v0, s->ns) || alloc_result(R) ||
      fci_cycles_init(R))
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  /* Backflow integrals max(-q, 0) have a kink where q changes sign; for the elements whose
   * backflow is reported cycle by cycle (valves, report.elements, culture regions) and for
   * sources, the sign change is a root, so that no step straddles it, and their volumes are
   * error-controlled CVODES quadratures. So is the pressure of every imposed node: its
   * integral holds the step to the forcing where no state does (a network without compliance).
   * Every other element and node is integrated from the dense output (src/sim_steps.c), which
   * splits each step at its flow's sign changes (locating every sign change of a large tree by
   * a root would stop the integrator far more often than the physics needs). */
  for (int i = 0; i < E; i++) {
    const fc_elem *e = &net->elem[i];
    /* Only elements with a corner somewhere: a chamber without a driven backing has none, and
     * asking each of 25 000 of them at every step cost 5 % of a large run. */
    int sm;
    if (e->type->xCorner && e->type->xCorner(e, 0.0, &sm) < INFINITY) R->corner_el[R->ncorner++] = i;
    int tr = e->nTerm == 2 && tracked(net, i);
    R->qoff[i] = tr ? R->nq : -1;
    if (tr) { R->quad_el[R->nquad++] = i; R->nq += 2; }
    if (e->role == FC_ROLE_FLOW && tr) R->sign_el[R->nsign++] = i;
  }
  R->nroot_all = s->nroot + R->nsign;
  if (!NEW(R->rootsfound, R->nroot_all) || !NEW(R->qpn, net->nNode) ||
      !NEW(R->qp_node, net->nNode) || fci_steps_init(&R->steps, net->nNode, E, s->ns))
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  for (int n = 0; n < net->nNode; n++) {
    R->qpn[n] = s->kind[n] == FCI_NODE_FIXED ? R->nq++ : -1;
    if (R->qpn[n] >= 0) R->qp_node[R->nqp++] = n;
  }
  if (!NEW(R->vq_cycle, R->nq) || !NEW(R->qmag, R->nq) || !NEW(R->qtmp, R->nq) || scope_init(R))
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  R->dt = net->sim.sample_interval;
  R->next_cycle = net->sim.cycle_period > 0 ? net->sim.cycle_period : INFINITY;
  fci_sys_rest(s, R->x0);
  if (net->sim.initial == FC_INIT_STEADY && s->nx && (rc = fci_sys_steady(s, 0.0, R->x0, err)))
    return rc;
  return FC_OK;
}

void fci_run_free(fci_run *R)
{
  fci_sys_free(R->sys);
  fci_cycles_free(R);
  fc_sim_result_free(R->res);
  fc_free(R->qkeep);
  fc_free(R->qoff); fc_free(R->quad_el); fc_free(R->qbuf); fc_free(R->modes); fc_free(R->corner_el);
  fc_free(R->rootsfound); fc_free(R->sign_el); fc_free(R->sign_side); fc_free(R->x0); fc_free(R->v0); fc_free(R->vq_cycle);
  fc_free(R->qpn); fc_free(R->qp_node); fc_free(R->qmag); fc_free(R->qtmp);
  fc_free(R->rep_el); fc_free(R->rep_node); fc_free(R->st_el); fc_free(R->ext_el);
  fc_free(R->st_node); fc_free(R->st_store); fc_free(R->pt_el); fc_free(R->pt_nd);
  fci_steps_free(&R->steps);
  memset(R, 0, sizeof *R);
}

void fc_sim_result_free(fc_sim_result *r)
{
  if (!r) return;
  fc_free(r->p_min); fc_free(r->p_max); fc_free(r->p_mean); fc_free(r->q_min); fc_free(r->q_max);
  fc_free(r->q_mean); fc_free(r->v_net); fc_free(r->v_back); fc_free(r->v_stored);
  fc_free(r->v_inflow); fc_free(r->cyc_v_net); fc_free(r->cyc_v_back); fc_free(r->cyc_open);
  fc_free(r->cyc_dp_max); fc_free(r->cyc_dp_min); fc_free(r->cyc_q_max); fc_free(r->cyc_q_min);
  fc_free(r->cyc_p_min); fc_free(r->cyc_p_max); fc_free(r->cyc_p_mean); fc_free(r->blown_elem);
  fc_free(r->cyc_row);
  fc_free(r->blown_time);
  fc_free(r);
}

void fci_run_quad_rhs(const fci_run *R, double *dq)
{
  const fci_sys *s = R->sys;
  for (int j = 0; j < R->nquad; j++) {
    int i = R->quad_el[j], o = R->qoff[i];
    dq[o] = s->q[i];
    dq[o + 1] = s->q[i] < 0 ? -s->q[i] : 0;
  }
  for (int j = 0; j < R->nqp; j++) dq[R->qpn[R->qp_node[j]]] = s->p[R->qp_node[j]];
}

static int emit(fci_run *R, double t, fc_error *err)
{
  const fci_sys *s = R->sys;
  if (!R->sink || !R->sink->xSample) return FC_OK;
  for (int i = 0; i < s->nE; i++) {
    R->qbuf[i] = s->eb[i] >= 0 ? s->q[i] : NAN;
    R->modes[i] = R->net->elem[i].mode;
  }
  if (R->sink->xSample(R->sink->ctx, t, s->p, R->qbuf, R->modes))
    return fc_fail(err, FC_EIO, NULL, "writing the sample at t = %.9g s failed", t);
  return FC_OK;
}

/* The state and the modes to a sink that evaluates (t, x) itself (xState). */
static int emit_state(fci_run *R, double t, const double *x, fc_error *err)
{
  for (int k = 0; k < R->nmode; k++) R->modes[R->mode_el[k]] = R->net->elem[R->mode_el[k]].mode;
  if (R->sink->xState(R->sink->ctx, t, R->sys->nx ? x : NULL, R->modes))
    return fc_fail(err, FC_EIO, NULL, "writing the sample at t = %.9g s failed", t);
  return FC_OK;
}

/* some = 1: the interior-point evaluation of "tracked" statistics (scope_points), where possible */
static int eval_or_fail_at(fci_run *R, double t, const double *x, int some, fc_error *err)
{
  const double *xx = R->sys->nx ? x : NULL;
  int e = some && R->npt_el >= 0
        ? fci_sys_eval_some(R->sys, t, xx, R->pt_el, R->npt_el, R->pt_nd, R->npt_nd) : -1;
  if (e < 0) e = fci_sys_eval(R->sys, t, xx); /* no partial evaluation here: the whole one */
  if (e == 2)
    return fc_fail(err, FC_ESOLVE, NULL, "a compliance's stored volume has no pressure at t = "
                   "%.9g s (a gas bubble compressed beyond its range?)", t);
  if (e)
    return fc_fail(err, FC_ESOLVE, NULL, "the conservation equations at the algebraic nodes are "
                   "singular at t = %.9g s (a part of the network is cut off by closed valves "
                   "with zero leak?)", t);
  return FC_OK;
}

static int eval_or_fail(fci_run *R, double t, const double *x, fc_error *err)
{
  return eval_or_fail_at(R, t, x, 0, err);
}

/* After an evaluation at a step end: the side of each sign root's flow, where it is not 0. */
static void note_sides(fci_run *R)
{
  for (int k = 0; k < R->nsign; k++) {
    double q = R->sys->q[R->sign_el[k]];
    if (q != 0) R->sign_side[k] = q > 0 ? 1 : -1;
  }
}

int fci_run_begin(fci_run *R, const double *yq, fc_error *err)
{
  int rc = eval_or_fail(R, 0.0, R->x0, err);
  if (rc) return rc;
  for (int k = 0; k < R->sys->ns; k++) R->v0[k] = R->x0[k];
  for (int k = 0; k < R->nsign; k++) R->sign_side[k] = 1;
  note_sides(R);
  memcpy(R->vq_cycle, yq, (size_t)R->nq * sizeof *yq);
  fci_cycles_extremes(R); /* the first cycle includes its start, as later ones do */
  fci_steps_left(R);
  R->next_sample = 1;
  R->t_prev = 0;
  return R->sink && R->sink->xState ? emit_state(R, 0.0, R->x0, err) : emit(R, 0.0, err);
}

double fci_run_next_stop(const fci_run *R, double t, int *kind)
{
  double ts = R->net->sim.duration;
  int hard = FCI_STOP_KINK;
  if (R->next_cycle < ts * (1 + 1e-12)) {
    /* the end on a cycle boundary (the usual whole number of cycles) is the end */
    hard = R->next_cycle < ts * (1 - 1e-12) ? FCI_STOP_REBASE : FCI_STOP_KINK;
    if (R->next_cycle < ts) ts = R->next_cycle;
  }
  double tr = fci_cycles_next_release(R, t);
  if (tr < ts * (1 + 1e-12)) { hard = FCI_STOP_KINK; if (tr < ts) ts = tr; }
  /* The earliest corner; smooth only if every corner that falls on it (within rounding) is. */
  double tc = INFINITY;
  int sm = 1;
  for (int k = 0; k < R->ncorner; k++) {
    const fc_elem *e = &R->net->elem[R->corner_el[k]];
    int s1;
    double c = e->type->xCorner(e, t * (1 + 1e-14) + 1e-300, &s1);
    if (c < tc * (1 - 1e-12)) { sm = s1; tc = c; }
    else if (c <= tc * (1 + 1e-12)) { sm &= s1; if (c < tc) tc = c; }
  }
  /* A corner within rounding of another stop is that stop too (a pulse starting on a cycle). */
  int ck = sm ? FCI_STOP_SMOOTH : FCI_STOP_KINK;
  if (tc < ts * (1 - 1e-12)) { *kind = ck; return tc; }
  *kind = tc <= ts * (1 + 1e-12) && ck > hard ? ck : hard;
  return tc < ts ? tc : ts;
}

int fci_run_pending_sample(fci_run *R, double t, double *ts)
{
  double tend = R->net->sim.duration, cand = (double)R->next_sample * R->dt;
  if (cand > tend * (1 + 1e-12)) {
    if (R->final_done || t < tend * (1 - 1e-14)) return 0;
    double last = (double)(R->next_sample - 1) * R->dt;
    R->final_done = 1;
    if (fabs(last - tend) <= 1e-9 * R->dt) return 0;
    *ts = tend;
    return 1;
  }
  if (cand > t * (1 + 1e-14)) return 0;
  if (cand > t) cand = t;
  if (cand > tend) cand = tend;
  *ts = cand;
  R->next_sample++;
  return 1;
}

int fci_run_sample(fci_run *R, double ts, const double *x, fc_error *err)
{
  if (R->sink->xState) return emit_state(R, ts, x, err);
  int rc = eval_or_fail(R, ts, x, err);
  return rc ? rc : emit(R, ts, err);
}

int fci_run_step_point(fci_run *R, int j, double t, const double *x, fc_error *err)
{
  int rc = eval_or_fail_at(R, t, x, 1, err);
  if (rc) return rc;
  fci_steps_point(R, j);
  fci_cycles_extremes(R);
  return FC_OK;
}

int fci_run_step_restart(fci_run *R, double t, const double *x, fc_error *err)
{
  int rc = eval_or_fail(R, t, x, err);
  if (!rc) fci_steps_left(R);
  return rc;
}

int fci_run_step_end(fci_run *R, double t, const double *x, const double *yq, double h, int m,
                     const double *s, fc_error *err)
{
  int rc = eval_or_fail(R, t, x, err);
  if (rc) return rc;
  if (h > 0) fci_steps_integrate(R, h, m, s);
  note_sides(R);
  fci_run_quad_rhs(R, R->qtmp);
  for (int k = 0; k < R->nq; k++)
    if (fabs(R->qtmp[k]) > R->qmag[k]) R->qmag[k] = fabs(R->qtmp[k]);
  fci_steps_left(R);
  fci_cycles_step(R, t, yq);
  if (R->sink && R->sink->xProgress) R->sink->xProgress(R->sink->ctx, t);
  return FC_OK;
}

int fci_run_events(fci_run *R, double t, const double *x, const int *found, int *changed,
                   fc_error *err)
{
  fci_sys *s = R->sys;
  int rc = eval_or_fail(R, t, x, err);
  if (rc) return rc;
  *changed = 0;
  /* A flow found crossing zero is on its new side from the root on, even where it is exactly 0
   * there (fci_run_sign_roots): else the root would be found again at the same instant. */
  for (int k = 0; k < R->nsign; k++)
    if (found[s->nroot + k]) R->sign_side[k] = found[s->nroot + k] > 0 ? 1 : -1;
  for (int i = 0; i < s->nE; i++) {
    fc_elem *e = &R->net->elem[i];
    if (!e->nRoot || !e->type->xEvent) continue;
    int any = 0;
    for (int k = 0; k < e->nRoot; k++) any |= found[e->iRoot + k] != 0;
    if (!any) continue;
    double pp[2] = {s->p[e->node[0]], e->nTerm == 2 ? s->p[e->node[1]] : 0};
    int old = e->mode;
    if (!e->type->xEvent(e, t, found + e->iRoot, pp, e->nState ? x + e->iState : NULL)) continue;
    *changed = 1;
    fci_sys_invalidate(s);
    R->res->stats.events++;
    if (e->mode == 2 && !R->res->blown_elem[i]) { R->res->blown_elem[i] = 1; R->res->blown_time[i] = t; }
    if ((rc = fci_cycles_chatter(R, i, t, err))) return rc;
    if (R->sink && R->sink->xEvent && R->sink->xEvent(R->sink->ctx, t, i, old, e->mode, pp[0] - pp[1]))
      return fc_fail(err, FC_EIO, NULL, "writing the event at t = %.9g s failed", t);
  }
  return FC_OK;
}

int fci_run_finish(fci_run *R, double t, const double *x, const double *yq, fc_error *err)
{
  fci_sys *s = R->sys;
  fc_sim_result *r = R->res;
  int rc = eval_or_fail(R, t, x, err);
  if (rc) return rc;
  r->t_end = t;
  fci_cycles_fold_extremes(R);
  double T = t > 0 ? t : 1;
  const fci_steps *S = &R->steps;
  for (int i = 0; i < s->nE; i++) {
    int o = R->qoff[i];
    if (R->net->elem[i].nTerm != 2) continue;
    if (!R->rep_el[i]) { r->v_net[i] = r->v_back[i] = r->q_mean[i] = r->q_min[i] = r->q_max[i] = NAN; continue; }
    r->v_net[i] = o >= 0 ? yq[o] : S->tq[i] + S->cq[i];
    r->v_back[i] = o >= 0 ? yq[o + 1] : S->tb[i] + S->cb[i];
    r->q_mean[i] = r->v_net[i] / T;
  }
  for (int n = 0; n < s->nN; n++) {
    double I = R->qpn[n] >= 0 ? yq[R->qpn[n]] : S->tp[n] + S->cp[n];
    r->p_mean[n] = !R->rep_node[n] ? NAN : t > 0 ? I / T : s->p[n];
  }
  for (int k = 0; k < s->ns; k++) {
    int n = s->xnode[k];
    r->v_stored[n] = x[k] - R->v0[k];
    r->v_inflow[n] = R->rep_node[n] ? S->ti[k] + S->ci[k] : NAN;
  }
  return FC_OK;
}

const char *fci_run_state_owner(const fci_run *R, int k)
{
  const fci_sys *s = R->sys;
  if (k < s->ns) return R->net->elem[s->store_el[s->store_ptr[k]]].id;
  for (int i = 0; i < s->nE; i++) {
    const fc_elem *e = &R->net->elem[i];
    if (e->nState && k >= e->iState && k < e->iState + e->nState) return e->id;
  }
  return "(unknown)";
}

int fci_run_release(fci_run *R, double t, const double *x, int *changed, fc_error *err)
{
  static const int none[FCI_MAX_ROOT] = {0};
  fci_sys *s = R->sys;
  *changed = 0;
  int rc = eval_or_fail(R, t, x, err);
  for (int k = 0; !rc && k < R->nmode; k++) {
    fc_elem *e = &R->net->elem[R->mode_el[k]];
    if (!(e->hold_until > 0) || e->hold_until > t * (1 + 1e-12)) continue;
    e->hold_until = 0;
    double pp[2] = {s->p[e->node[0]], e->nTerm == 2 ? s->p[e->node[1]] : 0};
    int old = e->mode;
    if (!e->type->xEvent || !e->type->xEvent(e, t, none, pp, e->nState ? x + e->iState : NULL)) continue;
    *changed = 1;
    fci_sys_invalidate(s);
    R->res->stats.events++;
    if (R->sink && R->sink->xEvent &&
        R->sink->xEvent(R->sink->ctx, t, R->mode_el[k], old, e->mode, pp[0] - pp[1]))
      rc = fc_fail(err, FC_EIO, NULL, "writing the event at t = %.9g s failed", t);
  }
  return rc;
}

/* A flow-sign root only ends a step on the kink of a reverse-volume integrand: the state is
 * smooth there and the integrator steps on without a restart (a restart at each cost 5-10
 * steps, docs/performance.md). But a flow that reaches exactly zero and stays there (a flow
 * source's pause, a stagnant branch) would be a root "found at and very near" the last one,
 * which CVODES rejects (CV_ILL_INPUT, cvRcheck2). So an exact zero counts as a tiny value on
 * the side where the flow was last seen at a step end or entered at its last root: a plateau of
 * zero flow is no root, the root comes where the flow leaves it on the other side. The tiny
 * value is far below any flow worth resolving, yet its product with another g value (CVODES
 * tests sign changes by glo * ghi < 0, cvRootfind) must not underflow to zero: 1e-150. */
#define ZERO_SIDE 1e-150
void fci_run_sign_roots(const fci_run *R, double *g)
{
  for (int k = 0; k < R->nsign; k++) {
    double q = R->sys->q[R->sign_el[k]];
    g[k] = q != 0 ? q : R->sign_side[k] * ZERO_SIDE;
  }
}
