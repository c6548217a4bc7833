#define _POSIX_C_SOURCE 200809L
/* ferrocirc — CVODE driver: the only file that includes SUNDIALS headers.
 *
 * Method: variable-order BDF with Newton iterations; linear systems by GMRES (SPGMR) with the
 * exact sparse preconditioner of sys.h (KLU on the augmented matrix), so GMRES needs one or two
 * iterations and cost per step is linear in network size. Right-hand side returns 0, >0 to ask
 * for a smaller step, <0 on fatal errors (SUNDIALS convention). Discontinuities: root functions
 * locate mode switches; at each switch, waveform corner and cycle boundary the integrator stops
 * (CVodeSetStopTime) and restarts (CVodeReInit, CVodeQuadReInit), so no step straddles one. */
#include <cvodes/cvodes.h> /* CVODE with quadratures: same integrator, same API */
#include <math.h>
#include <nvector/nvector_serial.h>
#include <signal.h>
#include <string.h>
#include <sunlinsol/sunlinsol_spgmr.h>
#include <time.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/sim.h"
#include "sim_run.h"

static volatile sig_atomic_t stop_requested = 0;

void fc_sim_request_stop(void) { stop_requested = 1; }

static int f_rhs(sunrealtype t, N_Vector y, N_Vector ydot, void *ud)
{
  fci_run *R = ud;
  fci_sys *s = R->sys;
  if (s->nx == 0) { NV_Ith_S(ydot, 0) = 0; return 0; }
  if (fci_sys_eval(s, t, NV_DATA_S(y))) return 1;
  return fci_sys_rhs_from_eval(s, t, NV_DATA_S(y), NV_DATA_S(ydot));
}

static int f_quad(sunrealtype t, N_Vector y, N_Vector yq, void *ud)
{
  fci_run *R = ud;
  if (fci_sys_eval(R->sys, t, R->sys->nx ? NV_DATA_S(y) : NULL)) return 1;
  fci_run_quad_rhs(R, NV_DATA_S(yq));
  return 0;
}

static int f_root(sunrealtype t, N_Vector y, sunrealtype *g, void *ud)
{
  fci_run *R = ud;
  const double *x = R->sys->nx ? NV_DATA_S(y) : NULL;
  if (fci_sys_eval(R->sys, t, x)) return -1;
  fci_sys_roots(R->sys, t, x, g);
  return 0;
}

static int p_setup(sunrealtype t, N_Vector y, N_Vector fy, sunbooleantype jok,
                   sunbooleantype *jcur, sunrealtype gamma, void *ud)
{
  (void)fy; (void)jok;
  fci_run *R = ud;
  *jcur = SUNTRUE;
  return fci_sys_psetup(R->sys, t, NV_DATA_S(y), gamma) ? 1 : 0;
}

static int p_solve(sunrealtype t, N_Vector y, N_Vector fy, N_Vector r, N_Vector z,
                   sunrealtype gamma, sunrealtype delta, int lr, void *ud)
{
  (void)t; (void)y; (void)fy; (void)gamma; (void)delta; (void)lr;
  fci_run *R = ud;
  N_VScale(1.0, r, z);
  return fci_sys_psolve(R->sys, NV_DATA_S(z)) ? 1 : 0;
}

static void on_cvode_error(int code, const char *module, const char *fn, char *msg, void *ud)
{
  fci_run *R = ud;
  (void)code;
  snprintf(R->cv_msg, sizeof R->cv_msg, "%s/%s: %s", module, fn, msg);
}

typedef struct cv {
  void *mem;
  SUNContext ctx;
  N_Vector y, yq, ytmp, ewt, ele;
  SUNLinearSolver ls;
} cv;

static void cv_free(cv *c)
{
  if (c->mem) CVodeFree(&c->mem);
  if (c->ls) SUNLinSolFree(c->ls);
  N_Vector v[] = {c->y, c->yq, c->ytmp, c->ewt, c->ele};
  for (size_t i = 0; i < sizeof v / sizeof v[0]; i++) if (v[i]) N_VDestroy(v[i]);
  if (c->ctx) SUNContext_Free(&c->ctx);
}

static int cv_init(cv *c, fci_run *R, fc_error *err)
{
  fci_sys *s = R->sys;
  const fci_sim_opts *o = &R->net->sim;
  int n = s->nx ? s->nx : 1; /* no compliance anywhere: a dummy constant state carries time */
  if (SUNContext_Create(NULL, &c->ctx)) return fc_fail(err, FC_ENOMEM, NULL, "SUNContext_Create failed");
  c->y = N_VNew_Serial(n, c->ctx);
  c->ytmp = N_VNew_Serial(n, c->ctx);
  c->ewt = N_VNew_Serial(n, c->ctx);
  c->ele = N_VNew_Serial(n, c->ctx);
  c->yq = N_VNew_Serial(R->nq ? R->nq : 1, c->ctx);
  c->mem = CVodeCreate(CV_BDF, c->ctx);
  if (!c->y || !c->ytmp || !c->yq || !c->ewt || !c->ele || !c->mem)
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory creating the integrator");
  N_VConst(0, c->y);
  if (s->nx) memcpy(NV_DATA_S(c->y), R->x0, (size_t)s->nx * sizeof(double));
  N_VConst(0, c->yq);
  N_Vector atol = c->ytmp;
  for (int k = 0; k < n; k++) NV_Ith_S(atol, k) = k < s->ns ? o->abs_tol_p : o->abs_tol_q;
  c->ls = SUNLinSol_SPGMR(c->y, SUN_PREC_RIGHT, 5, c->ctx);
  if (!c->ls || CVodeInit(c->mem, f_rhs, 0.0, c->y) || CVodeSVtolerances(c->mem, o->rel_tol, atol) ||
      CVodeSetUserData(c->mem, R) || CVodeSetErrHandlerFn(c->mem, on_cvode_error, R) ||
      CVodeSetLinearSolver(c->mem, c->ls, NULL) ||
      CVodeSetPreconditioner(c->mem, p_setup, p_solve) ||
      CVodeSetMaxNumSteps(c->mem, 1000000) ||
      (o->max_step > 0 && CVodeSetMaxStep(c->mem, o->max_step)) ||
      (R->nq && (CVodeQuadInit(c->mem, f_quad, c->yq) ||
                 CVodeQuadSStolerances(c->mem, o->rel_tol, o->abs_tol_v))) ||
      (s->nroot && CVodeRootInit(c->mem, s->nroot, f_root)))
    return fc_fail(err, FC_ESOLVE, NULL, "integrator set-up failed: %s", R->cv_msg);
  return FC_OK;
}

static void collect_stats(cv *c, fc_sim_stats *st);

/* CVodeReInit zeroes CVODE's counters, so they are added up before every restart. */
static int restart(cv *c, fci_run *R, double t)
{
  R->res->stats.restarts++;
  collect_stats(c, &R->res->stats);
  if (CVodeReInit(c->mem, t, c->y)) return FC_ESOLVE;
  if (R->nq && CVodeQuadReInit(c->mem, c->yq)) return FC_ESOLVE;
  return FC_OK;
}

/* The element whose state CVODE trusted least: largest weighted local error estimate. */
static const char *blame(cv *c, fci_run *R)
{
  if (!R->sys->nx || CVodeGetErrWeights(c->mem, c->ewt) || CVodeGetEstLocalErrors(c->mem, c->ele))
    return "(unknown)";
  int worst = 0;
  double w = -1;
  for (int k = 0; k < R->sys->nx; k++) {
    double v = fabs(NV_Ith_S(c->ele, k) * NV_Ith_S(c->ewt, k));
    if (v > w) { w = v; worst = k; }
  }
  return fci_run_state_owner(R, worst);
}

static void collect_stats(cv *c, fc_sim_stats *st)
{
  long v;
  if (!CVodeGetNumSteps(c->mem, &v)) st->steps += v;
  if (!CVodeGetNumRhsEvals(c->mem, &v)) st->rhs_evals += v;
  if (!CVodeGetNumLinIters(c->mem, &v)) st->lin_iters += v;
  if (!CVodeGetNumPrecEvals(c->mem, &v)) st->prec_setups += v;
  if (!CVodeGetNumPrecSolves(c->mem, &v)) st->prec_solves += v;
  if (!CVodeGetNumNonlinSolvIters(c->mem, &v)) st->nonlin_iters += v;
  if (!CVodeGetNumErrTestFails(c->mem, &v)) st->err_test_fails += v;
  if (!CVodeGetNumNonlinSolvConvFails(c->mem, &v)) st->conv_fails += v;
  if (!CVodeGetNumGEvals(c->mem, &v)) st->root_evals += v;
}

static int integrate(cv *c, fci_run *R, fc_error *err)
{
  const double tend = R->net->sim.duration;
  double t = 0;
  int rc = fci_run_begin(R, NV_DATA_S(c->yq), err);
  while (!rc && !R->done && t < tend * (1 - 1e-15)) {
    if (stop_requested) { rc = fc_fail(err, FC_EINTR, NULL, "interrupted at t = %.9g s", t); break; }
    double tstop = fci_run_next_stop(R, t);
    if (CVodeSetStopTime(c->mem, tstop)) { rc = fc_fail(err, FC_ESOLVE, NULL, "stop time"); break; }
    int flag = CVode(c->mem, tend, c->y, &t, CV_ONE_STEP);
    if (flag < 0) {
      rc = fc_fail(err, FC_ESOLVE, NULL, "the integrator failed at t = %.9g s near element \"%s\" "
                   "(CVODE flag %d, %s): %s. Hint: tighten or loosen rel_tol/abs_tol, or check for "
                   "a very stiff compliance (tiny RC time constant) or a valve hovering at a "
                   "threshold", t, blame(c, R), flag, CVodeGetReturnFlagName(flag), R->cv_msg);
      break;
    }
    if (R->nq && CVodeGetQuad(c->mem, &t, c->yq)) { rc = FC_ESOLVE; break; }
    double ts;
    while (!rc && fci_run_pending_sample(R, t, &ts)) {
      if (CVodeGetDky(c->mem, ts, 0, c->ytmp)) { rc = fc_fail(err, FC_ESOLVE, NULL, "interpolation at t = %.9g s failed", ts); break; }
      rc = fci_run_sample(R, ts, NV_DATA_S(c->ytmp), err);
    }
    if (rc) break;
    rc = fci_run_step_end(R, t, NV_DATA_S(c->y), NV_DATA_S(c->yq), err);
    if (rc) break;
    int changed = 0;
    if (flag == CV_ROOT_RETURN) {
      int *found = R->rootsfound;
      CVodeGetRootInfo(c->mem, found);
      rc = fci_run_events(R, t, NV_DATA_S(c->y), found, &changed, err);
      if (rc) break;
    }
    if (flag == CV_TSTOP_RETURN) {
      int released = 0;
      if ((rc = fci_run_release(R, t, NV_DATA_S(c->y), &released, err))) break;
      changed |= released;
    }
    if (changed || flag == CV_TSTOP_RETURN) {
      if (restart(c, R, t)) { rc = fc_fail(err, FC_ESOLVE, NULL, "restart failed: %s", R->cv_msg); break; }
    }
  }
  collect_stats(c, &R->res->stats);
  if (!rc || rc == FC_EINTR) {
    int rc2 = fci_run_finish(R, t, NV_DATA_S(c->y), NV_DATA_S(c->yq), err);
    if (!rc) rc = rc2;
  }
  return rc;
}

int fc_sim_run(fc_net *net, const fc_sim_sink *sink, fc_sim_result **out, fc_error *err)
{
  fci_run R;
  cv c = {0};
  struct timespec t0, t1;
  clock_gettime(CLOCK_MONOTONIC, &t0);
  stop_requested = 0;
  *out = NULL;
  int rc = fci_run_init(&R, net, sink, err);
  if (!rc) rc = cv_init(&c, &R, err);
  if (!rc) rc = integrate(&c, &R, err);
  cv_free(&c);
  clock_gettime(CLOCK_MONOTONIC, &t1);
  if (R.res) {
    R.res->stats.wall_seconds = (double)(t1.tv_sec - t0.tv_sec) + 1e-9 * (double)(t1.tv_nsec - t0.tv_nsec);
    R.res->stats.factorizations = R.sys ? R.sys->nGfact + R.sys->nAfact : 0;
  }
  if (!rc || rc == FC_EINTR) { *out = R.res; R.res = NULL; }
  fci_run_free(&R);
  return rc;
}
