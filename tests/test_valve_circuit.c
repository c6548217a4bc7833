/* Ferrofluid / check valves inside circuits (issue 4, "Checks"): exact switching instants on a
 * slow pressure ramp, the half-wave rectifier against its closed form (forward volume, zero
 * backflow behind a perfect reverse seal, the backflow a finite reverse crack lets through),
 * volume conservation across every switching event of a valve pump, chatter that ends within
 * bounded time (stop and continue), blowout and the periodic-steady-state stop.
 *
 * Networks are built from JSON strings and run with a sink that records every sample (with the
 * valve modes) and every switching event. Each expected value names its source beside it; the
 * analytic ones are derived in the comments from the valve law of elements/valve_law.h:
 *   sealed q = G_leak dp; open forward q = (dp - reseat_f)/R_open, reseals when q falls to 0;
 *   open reverse q = (dp + reseat_r)/R_open; blown q = dp/R_open. */
#define _POSIX_C_SOURCE 200809L
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include "test_sim_rec.h"

#define PI 3.14159265358979323846
#define MAX_EV 4096

/* ---------------------------------------------------------------- recording run */

typedef struct vevent {
  double t, dp;
  int elem, a, b;
} vevent;

typedef struct vrun {
  fc_net *net;
  fc_sim_result *res;
  fc_error err;
  int rc_load, rc_sim;
  rec r;             /* samples: t, p, q */
  int *mode;         /* n x nE modes at the samples */
  size_t mcap;
  vevent ev[MAX_EV]; /* switching events in order */
  int nev, ev_lost;
} vrun;

static int vr_sample(void *ctx, double t, const double *p, const double *q, const int *mode)
{
  vrun *V = ctx;
  size_t k = V->r.n;
  if (rec_sample(&V->r, t, p, q, mode)) return 1;
  if (V->r.cap > V->mcap) {
    int *m = realloc(V->mode, V->r.cap * (size_t)V->r.nE * sizeof *m);
    if (!m) return 1;
    V->mode = m;
    V->mcap = V->r.cap;
  }
  memcpy(V->mode + k * (size_t)V->r.nE, mode, (size_t)V->r.nE * sizeof *mode);
  return 0;
}

static int vr_event(void *ctx, double t, int elem, int a, int b, double dp)
{
  vrun *V = ctx;
  if (V->nev == MAX_EV) { V->ev_lost++; return 0; }
  V->ev[V->nev++] = (vevent){t, dp, elem, a, b};
  return 0;
}

static vrun *vrun_json(const char *json)
{
  vrun *V = calloc(1, sizeof *V);
  assert_non_null(V);
  V->rc_load = fc_net_load_buffer(json, strlen(json), "test.json", "", g_units, &V->net, &V->err);
  if (V->rc_load) {
    print_error("load: %s: %s (%s)\n", V->err.path, V->err.msg, fc_error_name(V->rc_load));
    return V;
  }
  V->r.nN = fc_net_node_count(V->net);
  V->r.nE = fc_net_elem_count(V->net);
  fc_sim_sink sink = {V, vr_sample, vr_event, NULL, NULL};
  V->rc_sim = fc_sim_run(V->net, &sink, &V->res, &V->err);
  if (V->rc_sim)
    print_message("run: %s: %s (%s)\n", V->err.path, V->err.msg, fc_error_name(V->rc_sim));
  return V;
}

static void vrun_free(vrun *V)
{
  if (!V) return;
  fc_sim_result_free(V->res);
  fc_net_free(V->net);
  rec_free(&V->r);
  free(V->mode);
  free(V);
}

static int elem_of(const vrun *V, const char *id)
{
  int i = fc_net_elem_find(V->net, id);
  assert_true(i >= 0);
  return i;
}

/* Relative error |a - b| / |b| (absolute when b = 0). */
static double relerr(double a, double b) { return b != 0 ? fabs(a - b) / fabs(b) : fabs(a); }

/* ---------------------------------------------------------------- 1. slow pressure ramp */

/* Reservoir pressure ramps (table waveform) 0 -> +1000 Pa over 1 s, down to -1000 Pa at 3 s,
 * back to 0 at 4 s; check valve src -> m (R_open 1e11, no leak), series resistor m -> out 1e10,
 * open reservoir out. No compliance: m is algebraic, so the valve's dp is a known function of t.
 *   sealed (leak 0): q = 0, p_m = 0, dp = p_s(t);
 *   open forward: q = (dp - reseat_f)/R_open = p_m/R, so q = 0 exactly when dp = reseat_f, and
 *   then p_s = dp: the valve reseals when the source itself falls through reseat_f;
 *   open reverse likewise at p_s = -reseat_r. */
static const char ramp_json[] =
  "{\"format\":\"ferrocirc-network/1\",\"elements\":["
  "{\"id\":\"src\",\"type\":\"reservoir\",\"node\":\"src\",\"pressure\":{\"shape\":\"table\","
  "\"points\":[[\"0 s\",\"0 Pa\"],[\"1 s\",\"1000 Pa\"],[\"3 s\",\"-1000 Pa\"],[\"4 s\",\"0 Pa\"]]}},"
  "{\"id\":\"valve\",\"type\":\"check_valve\",\"from\":\"src\",\"to\":\"m\",\"crack_forward\":\"300 Pa\","
  "\"reseat_forward\":\"100 Pa\",\"crack_reverse\":\"600 Pa\",\"reseat_reverse\":\"200 Pa\","
  "\"open_resistance\":1e11,\"leak_conductance\":0},"
  "{\"id\":\"Rs\",\"type\":\"resistor\",\"from\":\"m\",\"to\":\"out\",\"resistance\":1e10},"
  "{\"id\":\"out\",\"type\":\"reservoir\",\"node\":\"out\"}],"
  "\"simulation\":{\"duration\":\"4 s\",\"sample_interval\":\"10 ms\"}}";

static void ramp_opens_at_crack_and_reseals_at_reseat(void **state)
{
  (void)state;
  /* analytic: ramp p_s = k t (k = 1000 Pa/s) crosses crack_f 300 Pa at t = 300/k = 0.3 s; on the
   * way down p_s = 1000 - k (t - 1) crosses reseat_f 100 Pa at t = 1.9 s and -crack_r -600 Pa at
   * t = 2.6 s; on the last leg p_s = -1000 + k (t - 3) crosses -reseat_r -200 Pa at t = 3.8 s. */
  const struct { double t, dp; int a, b; } want[] = {
    {0.3, 300, 0, 1}, {1.9, 100, 1, 0}, {2.6, -600, 0, -1}, {3.8, -200, -1, 0}};
  /* Tolerance: the solver's absolute pressure tolerance (abs_tol default 1e-3 Pa) turned into
   * time through the ramp rate: 1e-3 Pa / 1000 Pa/s = 1e-6 s. CVODE itself locates a root to
   * 100 uround (|t| + |h|) (CVODE user guide, root finding) [from memory], ~1e-13 s here, so the
   * assertion fails only if the switching law or the event handling moves an instant. */
  const double tol_t = 1e-3 / 1000, tol_dp = 1e-3;
  vrun *V = vrun_json(ramp_json);
  assert_int_equal(V->rc_load, FC_OK);
  assert_int_equal(V->rc_sim, FC_OK);
  assert_int_equal(V->nev, 4);
  double et = 0, ep = 0;
  for (int k = 0; k < 4; k++) {
    const vevent *e = &V->ev[k];
    assert_int_equal(e->elem, elem_of(V, "valve"));
    assert_int_equal(e->a, want[k].a);
    assert_int_equal(e->b, want[k].b);
    CHECK_CLOSE(e->t, want[k].t, tol_t, 1.0, "ramp event time [s]");
    CHECK_CLOSE(e->dp, want[k].dp, tol_dp, 1.0, "ramp event dp [Pa]");
    et = fmax(et, fabs(e->t - want[k].t));
    ep = fmax(ep, fabs(e->dp - want[k].dp));
  }
  /* Between events: mode and flow. Open forward q = (p_s - reseat_f)/(R_open + R) (series
   * resistances, valve law above); open reverse q = (p_s + reseat_r)/(R_open + R); sealed 0. */
  int iv = elem_of(V, "valve");
  double eq = 0;
  for (size_t k = 0; k < V->r.n; k++) {
    double t = V->r.t[k], ps = t < 1 ? 1000 * t : t < 3 ? 1000 - 1000 * (t - 1) : -1000 + 1000 * (t - 3);
    int m = V->mode[k * (size_t)V->r.nE + (size_t)iv];
    if (fabs(t - 0.3) < 1e-6 || fabs(t - 1.9) < 1e-6 || fabs(t - 2.6) < 1e-6 || fabs(t - 3.8) < 1e-6)
      continue; /* a sample at an event instant may carry either mode */
    int wm = t > 0.3 && t < 1.9 ? 1 : t > 2.6 && t < 3.8 ? -1 : 0;
    assert_int_equal(m, wm);
    double wq = wm == 1 ? (ps - 100) / 1.1e11 : wm == -1 ? (ps + 200) / 1.1e11 : 0.0;
    double q = rec_q(&V->r, V->net, k, "valve");
    CHECK_CLOSE(q, wq, 1e-9, 900 / 1.1e11, "ramp flow [m^3/s]");
    eq = fmax(eq, fabs(q - wq) / (900 / 1.1e11));
  }
  print_message("ramp: max |t_event - analytic| %.2e s, |dp - threshold| %.2e Pa, flow %.2e rel\n",
                et, ep, eq);
  vrun_free(V);
}

/* ---------------------------------------------------------------- 2. half-wave rectifier */

/* Reservoir p_s = P sin(wt) (P = 1000 Pa, 1 Hz) -> check valve -> resistor R -> open reservoir;
 * no compliance, no leak. As in the ramp case (valve in series with R, q = 0 exactly at
 * dp = reseat), the valve opens when p_s rises through crack_f (theta_1 = asin(c/P)) and
 * reseals when p_s falls through reseat_f (theta_2 = pi - asin(r/P)), so per cycle (theta = wt)
 *   V_fwd = 1/(w (R_open + R)) int_{theta_1}^{theta_2} (P sin theta - r) dtheta
 *         = [P (cos theta_1 - cos theta_2) - r (theta_2 - theta_1)] / (w (R_open + R)),
 *   cos theta_1 = sqrt(1 - (c/P)^2), cos theta_2 = -sqrt(1 - (r/P)^2).
 * (With crack = reseat this is the integral of max(0, (P sin wt - r)/(R_open + R)).)
 * Reverse, crack_r > P: never opens, and with leak 0 the backflow is exactly 0. With crack_r
 * c' < P and reseat_r r': opens at theta_3 = pi + asin(c'/P), reseals at theta_4 = 2 pi -
 * asin(r'/P), both inside the same period, and
 *   V_back = [P (cos theta_4 - cos theta_3) - r' (theta_4 - theta_3)] / (w (R_open + R)),
 *   cos theta_4 = sqrt(1 - (r'/P)^2), cos theta_3 = -sqrt(1 - (c'/P)^2);
 * per cycle the engine's cyc_v_net = V_fwd - V_back and cyc_v_back = V_back. */
static double arc_volume(double P, double c, double r, double w, double Rt)
{
  double th1 = asin(c / P), th2 = PI - asin(r / P);
  return (P * (sqrt(1 - (c / P) * (c / P)) + sqrt(1 - (r / P) * (r / P))) - r * (th2 - th1)) / (w * Rt);
}

#define RECT_FMT                                                                              \
  "{\"format\":\"ferrocirc-network/1\",\"elements\":["                                         \
  "{\"id\":\"src\",\"type\":\"reservoir\",\"node\":\"src\",\"pressure\":{\"shape\":\"sine\","  \
  "\"amplitude\":\"1000 Pa\",\"frequency\":\"1 Hz\"}},"                                         \
  "{\"id\":\"valve\",\"type\":\"check_valve\",\"from\":\"src\",\"to\":\"m\","                   \
  "\"crack_forward\":\"200 Pa\",\"reseat_forward\":\"50 Pa\",\"crack_reverse\":\"%g Pa\","     \
  "\"reseat_reverse\":\"%g Pa\",\"open_resistance\":1e11,\"leak_conductance\":0},"             \
  "{\"id\":\"R\",\"type\":\"resistor\",\"from\":\"m\",\"to\":\"out\",\"resistance\":4e11},"     \
  "{\"id\":\"out\",\"type\":\"reservoir\",\"node\":\"out\"}],"                                 \
  "\"simulation\":{\"cycles\":5,\"sample_interval\":\"10 ms\"%s}}"

/* Run the rectifier with reverse crack/reseat cr, rr and extra simulation keys; worst per-cycle
 * errors: of the net volume relative to V_fwd (closed form), of the backflow relative to V_back
 * (or, with no reverse opening, in m^3), and the number of switching events. */
typedef struct rect_err {
  double net, back, back_abs;
  int nev, ncyc;
} rect_err;

static rect_err rectifier_case(double cr, double rr, const char *extra)
{
  char json[2048];
  rect_err e = {0, 0, 0, 0, 0};
  snprintf(json, sizeof json, RECT_FMT, cr, rr, extra);
  vrun *V = vrun_json(json);
  assert_int_equal(V->rc_load, FC_OK);
  assert_int_equal(V->rc_sim, FC_OK);
  const double P = 1000, w = 2 * PI, Rt = 1e11 + 4e11;
  double vf = arc_volume(P, 200, 50, w, Rt); /* closed form above */
  double vb = cr < P ? arc_volume(P, cr, rr, w, Rt) : 0.0;
  int iv = elem_of(V, "valve");
  e.ncyc = V->res->nCycle;
  e.nev = V->nev;
  for (int c = 0; c < V->res->nCycle; c++) {
    size_t k = fc_sim_cycle_at(V->res, c, iv);
    double vnet = V->res->cyc_v_net[k], vbk = V->res->cyc_v_back[k];
    e.net = fmax(e.net, fabs(vnet - (vf - vb)) / vf);
    e.back = fmax(e.back, vb > 0 ? relerr(vbk, vb) : 0);
    e.back_abs = fmax(e.back_abs, fabs(vbk - vb));
  }
  print_message("rectifier crack_r %g Pa%s: %d events in %d cycles, net volume err %.2e of V_fwd "
                "%.6e m^3, backflow err %.2e rel / %.2e m^3 (V_back %.6e m^3)\n", cr, extra,
                e.nev, e.ncyc, e.net, vf, e.back, e.back_abs, vb);
  vrun_free(V);
  return e;
}

/* Tolerances. Volumes come from CVODE quadratures, whose tolerance (rel_tol 1e-6, abs_tol_volume
 * 1e-15 m^3 per step) applies to the volume accumulated since t = 0, so one cycle's share may
 * carry (steps per cycle) x rel_tol: the per-cycle net volume and backflow are held to 1e-4 of
 * V_fwd (100 x rel_tol). Where the closed-form backflow is 0: with max_step 1 ms it is held to
 * abs_tol_volume (1e-15 m^3) per cycle; with unlimited steps to 1e-4 of V_fwd, since the
 * integrand max(-q, 0) is sampled just past the reseal instant in the last step before it.
 * The number of switching events is exact: two per cycle (crack, reseat), four with reverse
 * opening; a missing one is a root CVODE stepped over. */
static void check_rect(rect_err e, int per_cycle, int has_back, double zero_abs)
{
  assert_int_equal(e.ncyc, 5);
  assert_int_equal(e.nev, per_cycle * e.ncyc);
  assert_true(e.net <= 1e-4);
  if (has_back) assert_true(e.back <= 1e-4);
  else assert_true(e.back_abs <= zero_abs);
}

static void rectifier_forward_volume_and_perfect_reverse_seal(void **state)
{
  (void)state;
  /* analytic closed form above; crack_r 5000 Pa > P and leak 0: backflow exactly 0 */
  const double vf = arc_volume(1000, 200, 50, 2 * PI, 5e11);
  rect_err a = rectifier_case(5000, 1000, ",\"max_step\":\"1 ms\"");
  rect_err b = rectifier_case(5000, 1000, "");
  check_rect(a, 2, 0, 1e-15);
  check_rect(b, 2, 0, 1e-4 * vf);
}

static void rectifier_finite_reverse_crack_backflow(void **state)
{
  (void)state;
  /* analytic closed forms above with c' = 600 Pa, r' = 150 Pa */
  rect_err a = rectifier_case(600, 150, ",\"max_step\":\"1 ms\"");
  rect_err b = rectifier_case(600, 150, "");
  check_rect(a, 4, 1, 0);
  check_rect(b, 4, 1, 0);
}

/* ---------------------------------------------------------------- 3. conservation */

/* The diaphragm pump of networks/diaphragm-two-valves.json (pneumatic beat on the membrane,
 * inlet and outlet ferrofluid valves, culture chamber, return to a reservoir), ending in the
 * middle of the tenth systole so that the stored volumes are far from zero. */
static const char pump_json[] =
  "{\"format\":\"ferrocirc-network/1\",\"elements\":["
  "{\"id\":\"supply\",\"type\":\"reservoir\",\"node\":\"supply\"},"
  "{\"id\":\"inlet_line\",\"type\":\"channel\",\"from\":\"supply\",\"to\":\"a\",\"length\":\"10 mm\","
  "\"width\":\"500 um\",\"height\":\"200 um\"},"
  "{\"id\":\"v_in\",\"type\":\"ferrofluid_valve\",\"from\":\"a\",\"to\":\"pump\",\"crack_forward\":\"4 mmHg\","
  "\"crack_reverse\":\"70 mmHg\",\"reseat_forward\":\"1.5 mmHg\",\"reseat_reverse\":\"25 mmHg\","
  "\"blowout\":\"150 mmHg\",\"open_resistance\":\"2e11 Pa.s/m3\"},"
  "{\"id\":\"diaphragm\",\"type\":\"chamber\",\"node\":\"pump\",\"compliance\":\"5e-13 m3/Pa\","
  "\"backing_pressure\":{\"shape\":\"beat\",\"peak\":\"60 mbar\",\"period\":\"1 s\"}},"
  "{\"id\":\"v_out\",\"type\":\"ferrofluid_valve\",\"from\":\"pump\",\"to\":\"b\",\"crack_forward\":\"4 mmHg\","
  "\"crack_reverse\":\"70 mmHg\",\"reseat_forward\":\"1.5 mmHg\",\"reseat_reverse\":\"25 mmHg\","
  "\"blowout\":\"150 mmHg\",\"open_resistance\":\"2e11 Pa.s/m3\"},"
  "{\"id\":\"feed\",\"type\":\"channel\",\"from\":\"b\",\"to\":\"cin\",\"length\":\"15 mm\","
  "\"width\":\"300 um\",\"height\":\"100 um\"},"
  "{\"id\":\"wall\",\"type\":\"chamber\",\"node\":\"cin\",\"compliance\":\"3e-14 m3/Pa\"},"
  "{\"id\":\"culture\",\"type\":\"channel\",\"from\":\"cin\",\"to\":\"cout\",\"length\":\"8 mm\","
  "\"width\":\"1.5 mm\",\"height\":\"120 um\"},"
  "{\"id\":\"return\",\"type\":\"channel\",\"from\":\"cout\",\"to\":\"waste\",\"length\":\"100 mm\","
  "\"diameter\":\"500 um\"},"
  "{\"id\":\"waste\",\"type\":\"reservoir\",\"node\":\"waste\"}],"
  "\"simulation\":{\"duration\":\"9.15 s\",\"sample_interval\":\"10 ms\",\"rel_tol\":%g,"
  "\"abs_tol\":\"%g Pa\"}}";

static void pump_conserves_volume_across_switching(void **state)
{
  (void)state;
  /* Continuity (physics reference §2: C dp/dt = sum of inflows): at every compliant node the
   * stored-volume change V(p_end) - V(p_0) equals the integrated net inflow, and over the whole
   * network the volume that entered through the boundary elements (inlet_line from the supply,
   * return into the waste) equals the sum of the stored changes. Each switching event restarts
   * the integrator; a volume lost or created at a restart would show here. */
  /* (rel_tol, abs_tol [Pa]) from the defaults to the tightest; abs_tol must shrink with
   * rel_tol, since the default 1e-3 Pa alone allows C x 1e-3 Pa = 5e-16 m^3 per step. */
  const double rtol[] = {1e-6, 1e-8, 1e-10, 1e-12}, atol[] = {1e-3, 1e-5, 1e-9, 1e-11};
  double worst_node[4], worst_bnd[4];
  for (int k = 0; k < 4; k++) {
    char json[4096];
    snprintf(json, sizeof json, pump_json, rtol[k], atol[k]);
    vrun *V = vrun_json(json);
    assert_int_equal(V->rc_load, FC_OK);
    assert_int_equal(V->rc_sim, FC_OK);
    /* both valves open and reseal every beat: >= 4 events per cycle over 9 cycles */
    assert_true(V->nev >= 36);
    const fc_sim_result *r = V->res;
    double wn = 0, sum = 0;
    const char *store[] = {"pump", "cin"};
    for (int j = 0; j < 2; j++) {
      int n = fc_net_node_find(V->net, store[j]);
      double d = fabs(r->v_stored[n] - r->v_inflow[n]);
      double sc = fmax(fabs(r->v_stored[n]), fabs(r->v_inflow[n]));
      assert_true(sc > 1e-12); /* a stored volume of at least 1 nL: the test is not vacuous */
      wn = fmax(wn, d / sc);
      sum += r->v_stored[n];
    }
    double vin = r->v_net[elem_of(V, "inlet_line")] - r->v_net[elem_of(V, "return")];
    worst_node[k] = wn;
    worst_bnd[k] = fabs(sum - vin) / fmax(fabs(sum), fabs(vin));
    print_message("pump rel_tol %.0e abs_tol %.0e Pa: %d events; node |dV - int q|/|dV| %.2e; "
                  "boundary %.2e (stored %.4e m^3)\n", rtol[k], atol[k], V->nev, worst_node[k],
                  worst_bnd[k], sum);
    vrun_free(V);
  }
  /* issue 2/4 requirement: 1e-9 relative at tight tolerance (rel_tol 1e-12, abs_tol 1e-11 Pa).
   * The boundary balance also contains the algebraic nodes' conservation (solved exactly). */
  assert_true(worst_node[3] <= 1e-9);
  assert_true(worst_bnd[3] <= 1e-9);
}

/* ---------------------------------------------------------------- 4. chatter */

/* A tiny stiff compliance (1e-16 m^3/Pa, tau = R_open C = 0.1 ms) upstream of a check valve with
 * 5 Pa of hysteresis, fed by a flow source with a 1 kHz ripple larger than its mean (a stepper
 * pump's ripple, physics reference §8): the valve cracks and reseals twice per ripple period.
 * A constant flow alone would not chatter: the open state q = Q, dp = reseat + Q R_open > reseat
 * is a stable equilibrium of the valve law. With chatter {max_switches 10, window 10 ms}, the
 * 11th switch (two per millisecond) comes at about 5 ms. */
static const char chatter_json[] =
  "{\"format\":\"ferrocirc-network/1\",\"elements\":["
  "{\"id\":\"supply\",\"type\":\"reservoir\",\"node\":\"s\"},"
  "{\"id\":\"pump\",\"type\":\"flow_source\",\"from\":\"s\",\"to\":\"m\",\"flow\":{\"shape\":\"sine\","
  "\"mean\":\"1 uL/min\",\"amplitude\":\"2 uL/min\",\"frequency\":\"1 kHz\"}},"
  "{\"id\":\"trap\",\"type\":\"chamber\",\"node\":\"m\",\"compliance\":1e-16},"
  "{\"id\":\"valve\",\"type\":\"check_valve\",\"from\":\"m\",\"to\":\"out\",\"crack_forward\":\"100 Pa\","
  "\"reseat_forward\":\"95 Pa\",\"crack_reverse\":\"1e5 Pa\",\"open_resistance\":1e12},"
  "{\"id\":\"out\",\"type\":\"reservoir\",\"node\":\"out\"}],"
  "\"simulation\":{\"duration\":\"0.2 s\",\"sample_interval\":\"1 ms\",\"cycle_period\":\"10 ms\","
  "\"chatter\":{\"max_switches\":10,\"window\":\"10 ms\",\"action\":\"%s\"}}}";

static void chattering_valve_stops_with_report(void **state)
{
  (void)state;
  char json[2048];
  snprintf(json, sizeof json, chatter_json, "stop");
  vrun *V = vrun_json(json);
  assert_int_equal(V->rc_load, FC_OK);
  assert_int_equal(V->rc_sim, FC_ECHATTER);
  assert_null(V->res);
  /* the report names the valve and the count (src/sim_cycles.c message) */
  assert_non_null(strstr(V->err.msg, "\"valve\" chattered: 11 switches"));
  assert_non_null(strstr(V->err.path, "elements[3]"));
  /* the 10 reported switches alternate crack/reseat, all inside the first window */
  assert_int_equal(V->nev, 10);
  for (int k = 0; k < V->nev; k++) assert_int_equal(V->ev[k].b, k % 2 == 0 ? 1 : 0);
  assert_true(V->ev[V->nev - 1].t < 0.01);
  print_message("chatter stop: %d events, last at %.4g s: %s\n", V->nev, V->ev[V->nev - 1].t,
                V->err.msg);
  vrun_free(V);
}

static void chattering_valve_continues_with_holds(void **state)
{
  (void)state;
  char json[2048];
  snprintf(json, sizeof json, chatter_json, "continue");
  vrun *V = vrun_json(json);
  assert_int_equal(V->rc_load, FC_OK);
  assert_int_equal(V->rc_sim, FC_OK);
  const fc_sim_result *r = V->res;
  CHECK_CLOSE(r->t_end, 0.2, 1e-12, 1.0, "chatter continue t_end [s]");
  assert_true(r->chatter_holds > 0);
  assert_int_equal(r->chatter_elem, elem_of(V, "valve"));
  assert_true(r->chatter_time > 0 && r->chatter_time < 0.01);
  /* bounded: at most max_switches + 1 switches per window plus the release, 20 windows */
  assert_true(V->nev <= 20 * 13);
  print_message("chatter continue: %d holds, first at %.4g s, %d events, %.3g s wall\n",
                r->chatter_holds, r->chatter_time, V->nev, r->stats.wall_seconds);
  vrun_free(V);
}

/* ---------------------------------------------------------------- 5. blowout */

/* Ramp 0 -> 2000 Pa (1 s) -> -2000 Pa (3 s) -> 0 (4 s) on a check valve (crack 300, reseat 100,
 * forward blowout 1500 Pa, no reverse opening below 5 kPa), R_open 1e11, series R 1e10. */
static const char blow_json[] =
  "{\"format\":\"ferrocirc-network/1\",\"elements\":["
  "{\"id\":\"src\",\"type\":\"reservoir\",\"node\":\"src\",\"pressure\":{\"shape\":\"table\","
  "\"points\":[[\"0 s\",\"0 Pa\"],[\"1 s\",\"2000 Pa\"],[\"3 s\",\"-2000 Pa\"],[\"4 s\",\"0 Pa\"]]}},"
  "{\"id\":\"valve\",\"type\":\"check_valve\",\"from\":\"src\",\"to\":\"m\",\"crack_forward\":\"300 Pa\","
  "\"reseat_forward\":\"100 Pa\",\"crack_reverse\":\"5000 Pa\",\"blowout_forward\":\"1500 Pa\","
  "\"open_resistance\":1e11,\"leak_conductance\":0},"
  "{\"id\":\"Rs\",\"type\":\"resistor\",\"from\":\"m\",\"to\":\"out\",\"resistance\":1e10},"
  "{\"id\":\"out\",\"type\":\"reservoir\",\"node\":\"out\"}],"
  "\"simulation\":{\"duration\":\"4 s\",\"sample_interval\":\"10 ms\"}}";

static void blown_valve_conducts_both_ways(void **state)
{
  (void)state;
  vrun *V = vrun_json(blow_json);
  assert_int_equal(V->rc_load, FC_OK);
  assert_int_equal(V->rc_sim, FC_OK);
  int iv = elem_of(V, "valve");
  const double Rv = 1e11, R = 1e10;
  /* analytic: open forward, valve and R in series carry q = (p_s - r)/(Rv + R), so the valve's
   * dp = p_s - q R = (p_s Rv + r R)/(Rv + R) reaches 1500 Pa at p_s = (1500 (Rv + R) - r R)/Rv
   * = 1640 Pa, i.e. t = 1640/2000 = 0.82 s; cracking at p_s = 300 Pa, t = 0.15 s. */
  assert_int_equal(V->nev, 2);
  CHECK_CLOSE(V->ev[0].t, 0.15, 1e-6, 1.0, "crack time [s]");
  assert_int_equal(V->ev[1].b, 2);
  CHECK_CLOSE(V->ev[1].t, 0.82, 1e-6, 1.0, "blowout time [s]"); /* 1e-3 Pa / 2000 Pa/s as in 1 */
  CHECK_CLOSE(V->ev[1].dp, 1500, 1e-6, 1500, "blowout dp [Pa]");
  assert_int_equal(V->res->blown_elem[iv], 1);
  CHECK_CLOSE(V->res->blown_time[iv], 0.82, 1e-6, 1.0, "blown_time [s]");
  /* blown: q = dp/R_open both ways, so q = p_s/(Rv + R); reverse flow at p_s < 0 */
  int nrev = 0;
  for (size_t k = 0; k < V->r.n; k++) {
    double t = V->r.t[k];
    if (t <= 0.83) continue;
    double ps = t < 1 ? 2000 * t : t < 3 ? 2000 - 2000 * (t - 1) : -2000 + 2000 * (t - 3);
    assert_int_equal(V->mode[k * (size_t)V->r.nE + (size_t)iv], 2);
    CHECK_CLOSE(rec_q(&V->r, V->net, k, "valve"), ps / (Rv + R), 1e-9, 2000 / (Rv + R), "blown q");
    nrev += ps < -100;
  }
  assert_true(nrev > 100);
  /* the volume that went back: int of max(-q, 0) = area of the negative triangle
   * p_s < 0 for t in (2, 4), peak -2000 Pa at 3 s: 2000 Pa s / (Rv + R) */
  CHECK_CLOSE(V->res->v_back[iv], 2000 / (Rv + R), 1e-6, 2000 / (Rv + R), "blown backflow [m^3]");
  vrun_free(V);
}

/* ---------------------------------------------------------------- 6. until_periodic */

/* Half-wave rectifier into an RC load (C 2e-12 m^3/Pa, R 4e11: tau = 0.8 s, load pressure
 * builds up over several 1 s cycles). until_periodic 1e-6: the run stops after the first cycle c
 * whose per-element net volumes differ from the previous cycle's by < 1e-6 of the largest
 * (issue 4: "stops when the last cycle's net volumes change by less than that tolerance"). */
static const char periodic_json[] =
  "{\"format\":\"ferrocirc-network/1\",\"elements\":["
  "{\"id\":\"src\",\"type\":\"reservoir\",\"node\":\"src\",\"pressure\":{\"shape\":\"sine\","
  "\"amplitude\":\"1000 Pa\",\"frequency\":\"1 Hz\"}},"
  "{\"id\":\"valve\",\"type\":\"check_valve\",\"from\":\"src\",\"to\":\"m\",\"crack_forward\":\"200 Pa\","
  "\"reseat_forward\":\"50 Pa\",\"crack_reverse\":\"5000 Pa\",\"open_resistance\":1e11},"
  "{\"id\":\"C\",\"type\":\"chamber\",\"node\":\"m\",\"compliance\":2e-12},"
  "{\"id\":\"R\",\"type\":\"resistor\",\"from\":\"m\",\"to\":\"out\",\"resistance\":4e11},"
  "{\"id\":\"out\",\"type\":\"reservoir\",\"node\":\"out\"}],"
  "\"simulation\":{\"until_periodic\":1e-6,\"max_cycles\":200,\"rel_tol\":1e-9}}";

static double cycle_change(const fc_sim_result *r, int c)
{
  double d = 0, v = 0;
  for (int i = 0; i < r->nElem; i++) {
    double a = r->cyc_v_net[fc_sim_cycle_at(r, c, i)], b = r->cyc_v_net[fc_sim_cycle_at(r, c - 1, i)];
    if (isnan(a)) continue;
    d = fmax(d, fabs(a - b));
    v = fmax(v, fabs(a));
  }
  return d / v;
}

static void until_periodic_stops_early(void **state)
{
  (void)state;
  vrun *V = vrun_json(periodic_json);
  assert_int_equal(V->rc_load, FC_OK);
  assert_int_equal(V->rc_sim, FC_OK);
  const fc_sim_result *r = V->res;
  int pc = r->periodic_cycle;
  print_message("until_periodic: periodic after %d cycles (t_end %.6g s), change %.2e, before %.2e\n",
                pc, r->t_end, pc >= 2 ? cycle_change(r, pc - 1) : NAN,
                pc >= 3 ? cycle_change(r, pc - 2) : NAN);
  assert_true(pc >= 3 && pc < 200);
  assert_int_equal(r->nCycle, pc);
  CHECK_CLOSE(r->t_end, pc * 1.0, 1e-9, 1.0, "t_end = periodic_cycle x T [s]");
  /* definition: the last change is below the tolerance and the one before is not */
  assert_true(cycle_change(r, pc - 1) < 1e-6);
  assert_true(cycle_change(r, pc - 2) >= 1e-6);
  /* a transient decaying like exp(-t/tau) over tau ~ 0.8 s cannot settle to 1e-6 in 3 cycles */
  assert_true(pc > 5);
  vrun_free(V);
}

/* ---------------------------------------------------------------- 7. imposed-flow backflow */

/* A peristaltic-like flow source Q = Q0 (1 + 2 sin wt) (Q0 = 50 uL/min, 4 Hz: 8 rollers at
 * 30 rpm, physics reference §8 Q4) into a 100 uL bubble trap, an outlet check valve and a
 * culture channel. The source's flow is imposed, so its per-cycle volumes are known exactly
 * whatever the rest of the network does: V_back = (sqrt(3)/pi - 1/3) Q0 T = 0.2179956 Q0 T,
 * V_net = Q0 T (physics reference §11 Q1). */
static const char peri_json[] =
  "{\"format\":\"ferrocirc-network/1\",\"fluid\":{\"viscosity\":\"0.75 mPa.s\"},\"elements\":["
  "{\"id\":\"supply\",\"type\":\"reservoir\",\"node\":\"supply\"},"
  "{\"id\":\"pump\",\"type\":\"flow_source\",\"from\":\"supply\",\"to\":\"po\",\"flow\":{\"shape\":"
  "\"sine\",\"mean\":\"50 uL/min\",\"amplitude\":\"100 uL/min\",\"frequency\":\"4 Hz\"}},"
  "{\"id\":\"tubing\",\"type\":\"channel\",\"from\":\"po\",\"to\":\"trap\",\"length\":\"300 mm\","
  "\"diameter\":\"500 um\"},"
  "{\"id\":\"bubble_trap\",\"type\":\"chamber\",\"node\":\"trap\",\"gas_volume\":\"100 uL\"},"
  "{\"id\":\"valve\",\"type\":\"check_valve\",\"from\":\"trap\",\"to\":\"ci\",\"crack_forward\":"
  "\"3 mbar\",\"reseat_forward\":\"1 mbar\",\"crack_reverse\":\"200 mbar\",\"open_resistance\":5e10},"
  "{\"id\":\"culture\",\"type\":\"channel\",\"from\":\"ci\",\"to\":\"co\",\"length\":\"10 mm\","
  "\"width\":\"1 mm\",\"height\":\"100 um\"},"
  "{\"id\":\"return\",\"type\":\"channel\",\"from\":\"co\",\"to\":\"waste\",\"length\":\"200 mm\","
  "\"diameter\":\"500 um\"},"
  "{\"id\":\"waste\",\"type\":\"reservoir\",\"node\":\"waste\"}],"
  "\"simulation\":{\"cycles\":20,\"sample_interval\":\"2.5 ms\"}}";

static void imposed_flow_volumes_per_cycle(void **state)
{
  (void)state;
  vrun *V = vrun_json(peri_json);
  assert_int_equal(V->rc_load, FC_OK);
  assert_int_equal(V->rc_sim, FC_OK);
  const double Q0 = 50e-9 / 60, T = 0.25;
  const double vback = 0.2179956 * Q0 * T, vnet = Q0 * T; /* §11 Q1 */
  int ip = elem_of(V, "pump");
  double eb = 0, en = 0;
  for (int c = 0; c < V->res->nCycle; c++) {
    size_t k = fc_sim_cycle_at(V->res, c, ip);
    eb = fmax(eb, relerr(V->res->cyc_v_back[k], vback));
    en = fmax(en, relerr(V->res->cyc_v_net[k], vnet));
  }
  print_message("imposed sine flow over %d cycles: V_net rel err %.2e, V_back rel err %.2e "
                "(want %.6e m^3)\n", V->res->nCycle, en, eb, vback);
  /* 1e-4: 100 x rel_tol, as for the rectifier (quadrature tolerance on the running total) */
  assert_true(en <= 1e-4);
  assert_true(eb <= 1e-4);
  vrun_free(V);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(ramp_opens_at_crack_and_reseals_at_reseat),
    cmocka_unit_test(rectifier_forward_volume_and_perfect_reverse_seal),
    cmocka_unit_test(rectifier_finite_reverse_crack_backflow),
    cmocka_unit_test(pump_conserves_volume_across_switching),
    cmocka_unit_test(chattering_valve_stops_with_report),
    cmocka_unit_test(chattering_valve_continues_with_holds),
    cmocka_unit_test(blown_valve_conducts_both_ways),
    cmocka_unit_test(until_periodic_stops_early),
    cmocka_unit_test(imposed_flow_volumes_per_cycle),
  };
  return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
