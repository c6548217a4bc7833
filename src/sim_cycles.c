/* ferrocirc — cycle-by-cycle accounting of a run: volumes (from the quadratures), time open,
 * pressure-difference and flow extremes per element, pressure extremes and means per node; the
 * periodic-steady-state test; chatter detection. Extremes are taken at every internal step end
 * (and mode switches end steps), so peaks between output samples are kept; a node pressure
 * whose step-end values peak at one step end is refined by the vertex of the parabola through
 * that and the neighbouring step ends (peaks between step ends, see refine_extremes). */
#include <math.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "sim_run.h"

#define NEW(ptr, n) ((ptr) = fc_calloc((size_t)(n) > 0 ? (size_t)(n) : 1, sizeof *(ptr)))

static void reset_cycle(fci_run *R)
{
  int E = R->net->nElem, N = R->net->nNode;
  for (int i = 0; i < E; i++) {
    R->c_open[i] = 0;
    R->c_dpmax[i] = R->c_qmax[i] = -INFINITY;
    R->c_dpmin[i] = R->c_qmin[i] = INFINITY;
  }
  for (int n = 0; n < N; n++) { R->c_pmin[n] = INFINITY; R->c_pmax[n] = -INFINITY; }
}

int fci_cycles_init(fci_run *R)
{
  int E = R->net->nElem, N = R->net->nNode;
  fc_sim_result *r = R->res;
  size_t nc = (size_t)r->nCycleMax; /* alloc_result, src/sim_run.c */
  if (!NEW(R->c_open, E) || !NEW(R->c_dpmax, E) || !NEW(R->c_dpmin, E) || !NEW(R->c_qmax, E) ||
      !NEW(R->c_qmin, E) || !NEW(R->c_pmin, N) || !NEW(R->c_pmax, N) || !NEW(R->mode_el, E) ||
      !NEW(R->win_start, E) || !NEW(R->win_count, E) ||
      !NEW(r->cyc_p_min, nc * N) || !NEW(r->cyc_p_max, nc * N) ||
      !NEW(r->cyc_p_mean, nc * N) || !NEW(r->blown_elem, E) || !NEW(r->blown_time, E) ||
      !NEW(R->ph1, N) || !NEW(R->ph2, N))
    return FC_ENOMEM;
  for (int i = 0; i < E; i++) {
    r->blown_time[i] = NAN;
    if (R->net->elem[i].nRoot > 0) R->mode_el[R->nmode++] = i;
  }
  r->chatter_time = NAN;
  r->chatter_elem = -1;
  reset_cycle(R);
  return FC_OK;
}

void fci_cycles_free(fci_run *R)
{
  fc_free(R->c_open); fc_free(R->c_dpmax); fc_free(R->c_dpmin); fc_free(R->c_qmax);
  fc_free(R->c_qmin); fc_free(R->c_pmin); fc_free(R->c_pmax); fc_free(R->mode_el);
  fc_free(R->win_start); fc_free(R->win_count); fc_free(R->ph1); fc_free(R->ph2);
}

static void element_extremes(fci_run *R)
{
  const fci_sys *s = R->sys;
  for (int l = 0; l < R->next_el; l++) {
    int i = R->ext_el[l];
    double dp = s->p[s->ea[i]] - s->p[s->eb[i]], q = s->q[i];
    if (dp > R->c_dpmax[i]) R->c_dpmax[i] = dp;
    if (dp < R->c_dpmin[i]) R->c_dpmin[i] = dp;
    if (q > R->c_qmax[i]) R->c_qmax[i] = q;
    if (q < R->c_qmin[i]) R->c_qmin[i] = q;
  }
}

/* Every node, at every step end and interior point: written without branches so that the
 * compiler vectorises it (minpd/maxpd; the same values: x < m ? x : m keeps m on ties and
 * NaN, as the branch did). */
static void node_extremes(fci_run *R)
{
  const double *p = R->sys->p;
  double *pmin = R->c_pmin, *pmax = R->c_pmax;
  for (int n = 0; n < R->sys->nN; n++) {
    pmin[n] = p[n] < pmin[n] ? p[n] : pmin[n];
    pmax[n] = p[n] > pmax[n] ? p[n] : pmax[n];
  }
}

void fci_cycles_extremes(fci_run *R)
{
  element_extremes(R);
  node_extremes(R);
}

/* Extremes between step ends. Step ends are where the integrator's error control holds, but
 * a smooth peak usually falls inside a step, and the largest step-end value then misses it by
 * about p'' h^2 / 8. When the middle one of three successive step-end pressures (t2, p2),
 * (t1, p1), (t, p) is a strict local extreme, the vertex of the parabola through the three lies
 * in (t2, t) and misses the peak only by O(h^3) times the third derivative; it is taken as a
 * candidate extreme of the current cycle and of the run. Not done across a step end t1 on a
 * root or a stop time (mode switch, flow-sign root, waveform corner, cycle boundary): there the
 * slope or the curvature may jump, a parabola through both sides can overshoot by far (a pump
 * node's pressure falling onto a plateau at a smooth pulse corner: -415 Pa for a true -202 Pa),
 * and the extreme is the step end itself; nor across a cycle boundary, where a parabola could
 * put the previous cycle's peak into the next one. */
static void refine_extremes(fci_run *R, double t)
{
  const fci_sys *s = R->sys;
  if (R->nhist > 0 && t <= R->th1) { node_extremes(R); return; } /* the same point again */
  /* One pass over the nodes: the parabola's vertex, the step end's own pressure (the node
   * extremes of accumulate) and the history (p goes into the buffer of the oldest point, which
   * becomes the newest): at 65 536 chambers each pass streams megabytes. */
  const double *p = s->p;
  double *pmin = R->c_pmin, *pmax = R->c_pmax, *old = R->ph2;
  if (R->nhist == 2) {
    const double *mid = R->ph1;
    double h2 = R->th1 - R->th2, h1 = t - R->th1;
    for (int n = 0; n < s->nN; n++) {
      double a = old[n], b = mid[n], c = p[n];
      old[n] = c;
      pmin[n] = c < pmin[n] ? c : pmin[n];
      pmax[n] = c > pmax[n] ? c : pmax[n];
      if (!((b > a && b > c) || (b < a && b < c))) continue;
      /* Divided differences: slopes of the two chords, and k, half the curvature. */
      double m2 = (b - a) / h2, m1 = (c - b) / h1, k = (m1 - m2) / (h1 + h2);
      if (k == 0) continue;
      /* The parabola b + m d + k d^2 in d = tau - t1, m its slope at t1. */
      double m = m2 + k * h2, d = -m / (2 * k), v = b + m * d + k * d * d;
      if (!(d > -h2 && d < h1) || !isfinite(v)) continue;
      if (v > pmax[n]) pmax[n] = v;
      if (v < pmin[n]) pmin[n] = v;
    }
  } else {
    memcpy(old, p, (size_t)s->nN * sizeof *p);
    node_extremes(R);
  }
  R->ph2 = R->ph1;
  R->ph1 = old;
  R->th2 = R->th1;
  R->th1 = t;
  R->nhist = R->step_stopped ? 1 : (R->nhist < 2 ? R->nhist + 1 : 2);
}

/* nodes = 0: the node extremes at t were taken already (refine_extremes). */
static void accumulate(fci_run *R, double t, int nodes)
{
  const fc_net *net = R->net;
  double dt = t - R->t_prev;
  for (int k = 0; k < R->nmode; k++) {
    int i = R->mode_el[k];
    if (net->elem[i].mode != 0) R->c_open[i] += dt;
  }
  R->t_prev = t;
  element_extremes(R);
  if (nodes) node_extremes(R);
}

/* Largest change of any element's cycle net volume, relative to the largest such volume. */
static double periodic_change(const fc_sim_result *r, int c)
{
  double dmax = 0, vmax = 0;
  int E = r->nElem;
  for (int i = 0; i < E; i++) {
    double a = r->cyc_v_net[fc_sim_cycle_at(r, c, i)], b = r->cyc_v_net[fc_sim_cycle_at(r, c - 1, i)];
    if (isnan(a)) continue;
    if (fabs(a - b) > dmax) dmax = fabs(a - b);
    if (fabs(a) > vmax) vmax = fabs(a);
  }
  return vmax > 0 ? dmax / vmax : dmax;
}

static void close_cycle(fci_run *R, const double *yq)
{
  fc_sim_result *r = R->res;
  const fc_net *net = R->net;
  int c = r->nCycle, E = net->nElem, N = net->nNode;
  const fci_steps *S = &R->steps;
  for (int i = 0; i < E; i++) {
    size_t k = fc_sim_cycle_at(r, c, i);
    int o = R->qoff[i], two = net->elem[i].nTerm == 2 && R->rep_el[i];
    r->cyc_v_net[k] = o >= 0 ? yq[o] - R->vq_cycle[o] : two ? S->cq[i] : NAN;
    r->cyc_v_back[k] = o >= 0 ? yq[o + 1] - R->vq_cycle[o + 1] : two ? S->cb[i] : NAN;
    r->cyc_open[k] = R->c_open[i];
    r->cyc_dp_max[k] = two ? R->c_dpmax[i] : NAN;
    r->cyc_dp_min[k] = two ? R->c_dpmin[i] : NAN;
    r->cyc_q_max[k] = two ? R->c_qmax[i] : NAN;
    r->cyc_q_min[k] = two ? R->c_qmin[i] : NAN;
  }
  for (int n = 0; n < N; n++) {
    size_t k = (size_t)c * N + n;
    int o = R->qpn[n];
    r->cyc_p_min[k] = R->c_pmin[n];
    r->cyc_p_max[k] = R->c_pmax[n];
    r->cyc_p_mean[k] = !R->rep_node[n] ? NAN
                       : (o >= 0 ? yq[o] - R->vq_cycle[o] : S->cp[n]) / r->cycle_period;
  }
  fci_steps_close_cycle(&R->steps, N, E, R->sys->ns);
  r->nCycle++;
  memcpy(R->vq_cycle, yq, (size_t)R->nq * sizeof *yq);
  double tol = net->sim.until_periodic;
  if (tol > 0 && c >= 1 && !r->periodic_cycle && periodic_change(r, c) < tol) {
    r->periodic_cycle = c + 1;
    R->done = 1;
  }
}

/* The run's extremes are those of its cycles: folded in before each cycle's are reset, and
 * at the end (fci_run_finish), so each point is compared once, not twice. */
void fci_cycles_fold_extremes(fci_run *R)
{
  const fci_sys *s = R->sys;
  fc_sim_result *r = R->res;
  for (int l = 0; l < R->next_el; l++) {
    int i = R->ext_el[l];
    if (R->c_qmin[i] < r->q_min[i]) r->q_min[i] = R->c_qmin[i];
    if (R->c_qmax[i] > r->q_max[i]) r->q_max[i] = R->c_qmax[i];
  }
  for (int n = 0; n < s->nN; n++) {
    if (R->c_pmin[n] < r->p_min[n]) r->p_min[n] = R->c_pmin[n];
    if (R->c_pmax[n] > r->p_max[n]) r->p_max[n] = R->c_pmax[n];
  }
}

void fci_cycles_step(fci_run *R, double t, const double *yq)
{
  double T = R->net->sim.cycle_period;
  refine_extremes(R, t);
  accumulate(R, t, 0);
  if (!(T > 0) || t < R->next_cycle * (1 - 1e-12)) return;
  if (R->res->nCycle < R->res->nCycleMax) close_cycle(R, yq);
  fci_cycles_fold_extremes(R);
  reset_cycle(R);
  /* Keep the point at the boundary in the next cycle too, so its extremes include it. */
  accumulate(R, t, 1);
  R->next_cycle = (double)(R->res->nCycle + 1) * T;
}

int fci_cycles_chatter(fci_run *R, int i, double t, fc_error *err)
{
  const fci_sim_opts *o = &R->net->sim;
  fc_elem *e = &R->net->elem[i];
  if (t - R->win_start[i] > o->chatter_window) {
    R->win_start[i] = t;
    R->win_count[i] = 0;
  }
  if (++R->win_count[i] <= o->chatter_max) return FC_OK;
  if (isnan(R->res->chatter_time)) {
    R->res->chatter_time = t;
    R->res->chatter_elem = i;
  }
  if (!o->chatter_continue)
    return fc_fail(err, FC_ECHATTER, e->path, "\"%s\" chattered: %d switches within %.3g s at "
                   "t = %.9g s (its pressure difference hovers at a threshold). Give the valve "
                   "more hysteresis (reseat further below crack), add compliance upstream, or set "
                   "simulation.chatter.action to \"continue\" to hold it open for one window",
                   e->id, R->win_count[i], o->chatter_window, t);
  e->hold_until = t + o->chatter_window;
  R->res->chatter_holds++;
  R->win_start[i] = t;
  R->win_count[i] = 0;
  return FC_OK;
}

double fci_cycles_next_release(const fci_run *R, double t)
{
  double tr = INFINITY;
  for (int k = 0; k < R->nmode; k++) {
    double h = R->net->elem[R->mode_el[k]].hold_until;
    if (h > t && h < tr) tr = h;
  }
  return tr;
}
