#define _POSIX_C_SOURCE 200809L
/* ferrocirc — CVODE driver: with nvec_fast.c, the only file that includes SUNDIALS headers.
 *
 * Method: variable-order BDF with Newton iterations; linear systems solved directly with the
 * augmented sparse matrix of sys.h (KLU), so the cost per step is linear in network size. Right-hand side returns 0, >0 to ask
 * for a smaller step, <0 on fatal errors (SUNDIALS convention). Discontinuities: root functions
 * locate mode switches; at each switch, waveform corner and cycle boundary the integrator stops
 * (CVodeSetStopTime), so no step straddles one, and restarts (CVodeReInit) where the
 * right-hand side or its slope jumps (a switch, a table corner). At a cycle boundary only the
 * quadratures are re-based (CVodeQuadReInit); a flow-sign root (the kink of a reverse-volume
 * integrand) and a pulse's smooth corners only end a step. */
#include <cvodes/cvodes.h> /* CVODE with quadratures: same integrator, same API */
#include <math.h>
#include <nvector/nvector_serial.h>
#include <sunnonlinsol/sunnonlinsol_newton.h>
#include <signal.h>
#include <stdio.h>
#include <string.h>
#include <time.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/sim.h"
#include "nvec_fast.h"
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
  fci_run_sign_roots(R, g + R->sys->nroot);
  return 0;
}

/* The linear solver: CVODE's Newton systems (I - gamma J) dx = r are solved with the
 * augmented sparse matrix of sys.h, as a SUNDIALS "matrix-embedded" solver: CVODE asks for a
 * set-up when its heuristics say the matrix is stale.
 * Direct (KLU): the solve refactors at the current iterate whenever gamma has changed since,
 * so every solve is exact for the current gamma (no difference-quotient Jacobian products).
 * Iterative (src/sys_krylov.c, for meshes whose LU fills in): GMRES with ILU(0) of the
 * Jacobian of the last set-up, the products and ILU(0) at the current gamma, to CVODE's
 * tolerance in its error weights (setscalingvectors hands them over). A solve GMRES cannot
 * reduce falls back to a direct one, so the iterative path never loses a step the direct one
 * would take. */
typedef struct ls_ctx {
  fci_run *R;
  void *mem;
  double gamma;    /* gamma of the factorisation in use, 0 = none */
  long setups;     /* factorisations done */
  N_Vector w;      /* CVODE's error weights (iterative path), borrowed */
  int iters;       /* Krylov iterations of the last solve */
  long fallbacks;  /* iterative solves redone directly */
  long nst_jac, ncf_jac; /* steps and convergence failures at the last Jacobian (iterative) */
} ls_ctx;

/* CVODE does not call a matrix-embedded solver's set-up, so the iterative path renews the
 * Jacobian by CVODE's own rule for matrix-based solvers (SUNDIALS User Guide, CVODE
 * "Linear solver interface": every msbp = 20 steps, and after a convergence failure). */
#define JAC_EVERY 20

static SUNLinearSolver_Type ls_type(SUNLinearSolver S)
{
  (void)S;
  return SUNLINEARSOLVER_MATRIX_EMBEDDED;
}

static int ls_factor(ls_ctx *L, int direct)
{
  sunrealtype t, g;
  N_Vector y;
  if (CVodeGetCurrentTime(L->mem, &t) || CVodeGetCurrentGamma(L->mem, &g) ||
      CVodeGetCurrentState(L->mem, &y))
    return -1;
  L->setups++;
  fci_sys *s = L->R->sys;
  if (s->kr && !direct) {
    if (CVodeGetNumSteps(L->mem, &L->nst_jac) || CVodeGetNumNonlinSolvConvFails(L->mem, &L->ncf_jac))
      return -1;
    if (fci_sys_ksetup(s, t, NV_DATA_S(y), g)) return 1;
  } else if (fci_sys_psetup(s, t, NV_DATA_S(y), g)) return 1;
  L->gamma = g;
  return 0;
}

static int ls_setup(SUNLinearSolver S, SUNMatrix A)
{
  (void)A;
  return ls_factor(S->content, 0);
}

static int ls_solve_direct(ls_ctx *L, N_Vector x, N_Vector b, sunrealtype g)
{
  if (g != L->gamma || L->R->sys->kr) {
    int rc = ls_factor(L, 1);
    if (rc) return rc;
    if (L->R->sys->kr) L->gamma = 0; /* the Krylov set-up is stale now */
  }
  N_VScale(1.0, b, x);
  return fci_sys_psolve(L->R->sys, NV_DATA_S(x)) ? 1 : 0;
}

static int ls_solve(SUNLinearSolver S, SUNMatrix A, N_Vector x, N_Vector b, sunrealtype tol)
{
  (void)A;
  ls_ctx *L = S->content;
  fci_sys *s = L->R->sys;
  sunrealtype g;
  L->iters = 0;
  if (CVodeGetCurrentGamma(L->mem, &g)) return -1;
  if (!s->kr || !L->w) return ls_solve_direct(L, x, b, g);
  long nst, ncf;
  if (CVodeGetNumSteps(L->mem, &nst) || CVodeGetNumNonlinSolvConvFails(L->mem, &ncf)) return -1;
  int stale = L->gamma == 0 || ncf != L->ncf_jac || nst < L->nst_jac || nst >= L->nst_jac + JAC_EVERY;
  int rc = stale ? ls_factor(L, 0) : fci_krylov_gamma(s, g);
  if (rc < 0) return rc;
  if (!rc) {
    N_VScale(1.0, b, x);
    rc = fci_krylov_solve(s, NV_DATA_S(x), NV_DATA_S(L->w), tol, &L->iters);
    if (rc == 0) return SUNLS_SUCCESS;
    if (rc == 1) return SUNLS_RES_REDUCED;
  }
  L->fallbacks++;
  return ls_solve_direct(L, x, b, g);
}

static int ls_scaling(SUNLinearSolver S, N_Vector s1, N_Vector s2)
{
  (void)s2;
  ((ls_ctx *)S->content)->w = s1;
  return 0;
}

static int ls_iters(SUNLinearSolver S)
{
  return ((ls_ctx *)S->content)->iters;
}

static int ls_free(SUNLinearSolver S)
{
  if (!S) return 0;
  S->content = NULL;
  SUNLinSolFreeEmpty(S);
  return 0;
}

static SUNLinearSolver ls_new(ls_ctx *L, SUNContext ctx)
{
  SUNLinearSolver S = SUNLinSolNewEmpty(ctx);
  if (!S) return NULL;
  S->ops->gettype = ls_type;
  S->ops->setup = ls_setup;
  S->ops->solve = ls_solve;
  S->ops->free = ls_free;
  if (L->R->sys->kr) {
    S->ops->setscalingvectors = ls_scaling;
    S->ops->numiters = ls_iters;
  }
  S->content = L;
  return S;
}

/* The Newton iteration. Where the network is linear in its state (sys.h: aff_able: every
 * element affine in pressure in its mode, constant compliances, no own states) the corrector
 * equation of a BDF step, y - gamma f(t, y) = a, is linear too, and the direct solve is exact
 * for the current gamma (ls_solve_direct refactors when gamma changes). One Newton step then
 * solves it to rounding, and CVODE's test would only spend a second right-hand side and solve
 * to confirm a correction of rounding size (SUNDIALS User Guide, CVODE "Nonlinear solver": the
 * test needs a second iterate for its rate estimate). So the test passes after the first
 * iterate there; everywhere else (nonlinear elements, iterative solves) CVODE's own test runs.
 * CVODE then measures the correction itself for its error test (acnrm). */
typedef struct nls_ctx {
  SUNNonlinSolConvTestFn ctest; /* CVODE's own convergence test and its data */
  void *ctest_data;
  const fci_sys *sys;
} nls_ctx;

static int conv_test(SUNNonlinearSolver S, N_Vector ycor, N_Vector del, sunrealtype tol,
                     N_Vector ewt, void *data)
{
  const nls_ctx *C = data;
  if (C->sys->aff_able && !C->sys->ldirty && !C->sys->kr) return SUN_NLS_SUCCESS;
  return C->ctest(S, ycor, del, tol, ewt, C->ctest_data);
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
  double *qacc, *qtot;  /* quadratures folded in at restarts, and the running totals */
  N_Vector qat;         /* quadrature absolute tolerances */
  SUNLinearSolver ls;
  ls_ctx lsc;
  SUNNonlinearSolver nls;
  nls_ctx nlc;
} cv;

static void cv_free(cv *c, fci_run *R)
{
  fc_free(R->atol);
  fc_free(R->wscale);
  R->atol = R->wscale = NULL;
  if (c->mem) CVodeFree(&c->mem);
  if (c->ls) SUNLinSolFree(c->ls);
  if (c->nls) SUNNonlinSolFree(c->nls);
  N_Vector v[] = {c->y, c->yq, c->ytmp, c->ewt, c->ele, c->qat};
  for (size_t i = 0; i < sizeof v / sizeof v[0]; i++) if (v[i]) N_VDestroy(v[i]);
  fc_free(c->qacc);
  fc_free(c->qtot);
  if (c->ctx) SUNContext_Free(&c->ctx);
}

/* Absolute tolerances of the quadratures. Floors: volumes abs_tol_volume; the pressure
 * integrals of imposed nodes (Pa s, for time means) abs_tol times the cycle (or the run), so
 * that a mean pressure is good to about abs_tol. Above the floor, rel_tol times a thousandth of
 * the integral of the largest |integrand| seen so far over one cycle (about one step's share of
 * a cycle, so that the errors of a cycle's steps add up to about rel_tol of its volume): the
 * quadratures restart from zero at every restart (see restart), and rel_tol against that
 * partial integral alone holds the first steps after a valve opens or a ramp begins to rel_tol
 * of a nearly empty integral (an order-1 crawl: 1551 instead of 597 steps on a 57 000-element
 * tree, docs/performance.md). The scale follows the run: it is re-read at every restart. */
static int set_qatol(cv *c, const fci_run *R)
{
  const fci_sim_opts *o = &R->net->sim;
  double T = o->cycle_period > 0 ? o->cycle_period : o->duration;
  if (!c->qat && !(c->qat = N_VNew_Serial(R->nq, c->ctx))) return -1;
  double *a = NV_DATA_S(c->qat);
  for (int k = 0; k < R->nq; k++) a[k] = o->abs_tol_v;
  for (int n = 0; n < R->net->nNode; n++)
    if (R->qpn[n] >= 0) a[R->qpn[n]] = o->abs_tol_p * T;
  for (int k = 0; k < R->nq; k++) {
    double s = 1e-3 * o->rel_tol * T * R->qmag[k];
    if (s > a[k]) a[k] = s;
  }
  return CVodeQuadSVtolerances(c->mem, o->rel_tol, c->qat);
}

/* Newton stops when its estimated error is below NLS_COEF times the error-test tolerance, both
 * in CVODE's weighted RMS norm (SUNDIALS User Guide, CVODE "Nonlinear solver"; default 0.1).
 * The RMS over n states dilutes an error that sits in a few of them by sqrt(n): on a valve-fed
 * tree the unconverged Newton error stays in the two stiff nodes behind the valve, reaches the
 * error estimate there and holds the integrator at order 1 with 7 us steps for tens of ms
 * after the valve opens, more so the larger the tree (first 0.1 s of a pulsed tree: 454
 * steps at 16 384 chambers, 583 at 32 768; with 0.01: 213 and 218; docs/performance.md). */
#define NLS_COEF 0.01

/* Error weights (CVodeWFtolerances): CVODE's default 1/(rel_tol |y| + abs_tol), times a
 * factor for the states that decide a valve's switching (the pressures at the terminals of
 * every element with modes, and its own states). Why: CVODE's error test takes the weighted
 * RMS over all n states, so an error in m of them is diluted by sqrt(m/n). On a valve-fed tree
 * of 16 384 chambers (49 000 states) the two nodes beside the valve then carried errors of tens
 * of Pa at rel_tol 1e-4 right after the valve opened, enough to cross its reseat threshold:
 * spurious reseat-crack cycles until the chatter check stopped the run (docs/performance.md).
 * With the factor sqrt(n/m) those m states are held to the tolerance as if each were the only
 * one, the error test's max-norm meaning; the other states keep the RMS one. */
static int ewt_fn(N_Vector y, N_Vector ewt, void *ud)
{
  const fci_run *R = ud;
  return fci_nvec_ewt(NV_LENGTH_S(y), NV_DATA_S(y), R->atol, R->wscale, R->net->sim.rel_tol,
                      NV_DATA_S(ewt));
}

static int set_weights(fci_run *R, int n)
{
  const fci_sys *s = R->sys;
  const fci_sim_opts *o = &R->net->sim;
  if (!(R->atol = fc_calloc((size_t)n, sizeof *R->atol)) ||
      !(R->wscale = fc_calloc((size_t)n, sizeof *R->wscale)))
    return -1;
  /* Store states are volumes: their absolute tolerance is the pressure tolerance times the
   * compliance at the start, so abs_tol keeps its meaning as a pressure. */
  for (int k = 0; k < n; k++) R->atol[k] = k < s->ns ? o->abs_tol_p * s->Csum[k] : o->abs_tol_q;
  int m = 0;
  for (int j = 0; j < R->nmode; j++) {
    const fc_elem *e = &R->net->elem[R->mode_el[j]];
    for (int t = 0; t < e->nTerm; t++)
      if (s->kind[e->node[t]] == FCI_NODE_STORE && R->wscale[s->idx[e->node[t]]] == 0) {
        R->wscale[s->idx[e->node[t]]] = -1;
        m++;
      }
    for (int k = 0; k < e->nState; k++)
      if (R->wscale[e->iState + k] == 0) { R->wscale[e->iState + k] = -1; m++; }
  }
  double f = m > 0 && n > m ? sqrt((double)n / m) : 1.0;
  for (int k = 0; k < n; k++) R->wscale[k] = R->wscale[k] < 0 ? f : 1.0;
  return 0;
}

/* CVODE's Newton solver with the convergence test of nls_ctx wrapped around CVODE's own (which
 * CVodeSetNonlinearSolver installs, and nothing re-installs later). */
static int set_newton(cv *c, fci_run *R)
{
  if (!(c->nls = SUNNonlinSol_Newton(c->y, c->ctx)) || CVodeSetNonlinearSolver(c->mem, c->nls))
    return -1;
  SUNNonlinearSolverContent_Newton nc = c->nls->content;
  c->nlc = (nls_ctx){.ctest = nc->CTest, .ctest_data = nc->ctest_data, .sys = R->sys};
  return c->nlc.ctest ? SUNNonlinSolSetConvTestFn(c->nls, conv_test, &c->nlc) : -1;
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
  c->qacc = fc_calloc((size_t)R->nq + 1, sizeof *c->qacc);
  c->qtot = fc_calloc((size_t)R->nq + 1, sizeof *c->qtot);
  if (!c->y || !c->ytmp || !c->yq || !c->ewt || !c->ele || !c->mem || !c->qacc || !c->qtot)
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory creating the integrator");
  N_Vector fast[] = {c->y, c->ytmp, c->ewt, c->ele, c->yq};
  for (size_t k = 0; k < sizeof fast / sizeof fast[0]; k++) fci_nvec_fast(fast[k]);
  N_VConst(0, c->y);
  if (s->nx) memcpy(NV_DATA_S(c->y), R->x0, (size_t)s->nx * sizeof(double));
  N_VConst(0, c->yq);
  if (s->nx && fci_sys_eval(s, 0.0, R->x0)) return fc_fail(err, FC_ESOLVE, NULL, "initial state not solvable");
  if (set_weights(R, n)) return fc_fail(err, FC_ENOMEM, NULL, "out of memory creating the integrator");
  c->lsc.R = R;
  c->lsc.mem = c->mem;
  R->res->stats.iterative = fci_sys_linear_choice(s, o->linear_solver) == FCI_LS_ITERATIVE;
  c->ls = ls_new(&c->lsc, c->ctx);
  if (!c->ls || CVodeInit(c->mem, f_rhs, 0.0, c->y) || CVodeSetUserData(c->mem, R) ||
      CVodeWFtolerances(c->mem, ewt_fn) || CVodeSetErrHandlerFn(c->mem, on_cvode_error, R) ||
      CVodeSetLinearSolver(c->mem, c->ls, NULL) ||
      CVodeSetMaxNumSteps(c->mem, 1000000) ||
      CVodeSetNonlinConvCoef(c->mem, NLS_COEF) || set_newton(c, R) ||
      (o->max_step > 0 && CVodeSetMaxStep(c->mem, o->max_step)) ||
      (R->nq && (CVodeQuadInit(c->mem, f_quad, c->yq) ||
                 set_qatol(c, R) || CVodeSetQuadErrCon(c->mem, SUNTRUE))) ||
      (R->nroot_all && CVodeRootInit(c->mem, R->nroot_all, f_root)))
    return fc_fail(err, FC_ESOLVE, NULL, "integrator set-up failed: %s", R->cv_msg);
  return FC_OK;
}

static void collect_stats(cv *c, fc_sim_stats *st);

/* The quadratures restart from zero, their values folded into qacc: their relative tolerance
 * then applies to the volume since the last restart (at most one cycle), not to a running
 * total that grows with the number of cycles. CVodeQuadReInit only overwrites the value row of
 * the quadratures' Nordsieck history (CVODES source, cvodes.c; the other rows hold scaled
 * derivatives, which a constant shift leaves as they are), so on its own, without
 * CVodeReInit, it shifts the quadratures by a constant and the integrator steps on at the
 * order and step it had. */
static int rebase(cv *c, fci_run *R)
{
  if (!R->nq) return FC_OK;
  memcpy(c->qacc, c->qtot, (size_t)R->nq * sizeof *c->qacc);
  N_VConst(0, c->yq);
  return CVodeQuadReInit(c->mem, c->yq) || set_qatol(c, R) ? FC_ESOLVE : FC_OK;
}

/* A restart follows a jump of the right-hand side or of its slope (a mode switch, a kink of
 * the forcing): CVODE starts again at order 1 from a first step of its own estimate, which
 * after a valve switch is often 1e-9 s or less: the new transient needs it. CVodeReInit zeroes
 * CVODE's counters, so they are added up before every restart. */
static int restart(cv *c, fci_run *R, double t)
{
  R->res->stats.restarts++;
  collect_stats(c, &R->res->stats);
  if (CVodeReInit(c->mem, t, c->y)) return FC_ESOLVE;
  c->lsc.gamma = 0; /* the Jacobian may have changed with the mode: refactor */
  return rebase(c, R);
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
  if (!CVodeGetNumNonlinSolvIters(c->mem, &v)) st->nonlin_iters += v;
  if (!CVodeGetNumErrTestFails(c->mem, &v)) st->err_test_fails += v;
  if (!CVodeGetNumNonlinSolvConvFails(c->mem, &v)) st->conv_fails += v;
  if (!CVodeGetNumGEvals(c->mem, &v)) st->root_evals += v;
}

/* The interior points of the step just ended on [t0, t] (dense output), for the step
 * integrals; *m receives their number and s their positions in (0, 1). */
static int step_points(cv *c, fci_run *R, double t0, double t, int *m, double *s, fc_error *err)
{
  int order = 1;
  if (CVodeGetLastOrder(c->mem, &order)) order = 5;
  *m = fci_steps_points(order, s);
  if (!(t > t0)) return FC_OK;
  /* The root functions have just evaluated the network at the step end; the interior points
   * go to the second set of buffers so that fci_run_step_end finds that evaluation cached. */
  int swapped = fci_sys_swap(R->sys), rc = FC_OK;
  for (int j = 0; j < *m && !rc; j++) {
    double ts = t0 + s[j] * (t - t0);
    if (CVodeGetDky(c->mem, ts, 0, c->ytmp))
      rc = fc_fail(err, FC_ESOLVE, NULL, "interpolation at t = %.9g s failed", ts);
    else
      rc = fci_run_step_point(R, j, ts, NV_DATA_S(c->ytmp), err);
  }
  if (swapped) fci_sys_swap(R->sys);
  return rc;
}

static int integrate(cv *c, fci_run *R, fc_error *err)
{
  const double tend = R->net->sim.duration;
  double t = 0, t0 = 0, sp[FCI_STEPS_MAX];
  int m = 0;
  int rc = fci_run_begin(R, c->qtot, err);
  while (!rc && !R->done && t < tend * (1 - 1e-15)) {
    if (stop_requested) { rc = fc_fail(err, FC_EINTR, NULL, "interrupted at t = %.9g s", t); break; }
    int kind;
    double tstop = fci_run_next_stop(R, t, &kind);
    if (CVodeSetStopTime(c->mem, tstop)) { rc = fc_fail(err, FC_ESOLVE, NULL, "stop time"); break; }
    int flag = CVode(c->mem, tend, c->y, &t, CV_ONE_STEP);
    /* A step that ends on the stop time and holds a root is handed back twice: at the root
     * (CV_ROOT_RETURN), then as a plain step at tn = tstop within rounding (CV_SUCCESS); CVODES
     * would report the stop itself only on a third call, which the next CVodeSetStopTime
     * pre-empts. So that step end is the stop: else a kink there went without its restart and
     * a hold without its release (CVODES source, cvodes.c, CVode: the root check comes before
     * the stop-time check). */
    if (flag == CV_SUCCESS && fabs(t - tstop) <= 1e-12 * fabs(tstop)) {
      flag = CV_TSTOP_RETURN;
      t = tstop;
    }
    if (flag < 0) {
      rc = fc_fail(err, FC_ESOLVE, NULL, "the integrator failed at t = %.9g s near element \"%s\" "
                   "(CVODE flag %d, %s): %s. Hint: tighten or loosen rel_tol/abs_tol, or check for "
                   "a very stiff compliance (tiny RC time constant) or a valve hovering at a "
                   "threshold", t, blame(c, R), flag, CVodeGetReturnFlagName(flag), R->cv_msg);
      break;
    }
    double tq; /* CVodeGetQuad reports its own time, tn: keep t the stop time set above */
    if (R->nq && CVodeGetQuad(c->mem, &tq, c->yq)) { rc = FC_ESOLVE; break; }
    for (int k = 0; k < R->nq; k++) c->qtot[k] = c->qacc[k] + NV_Ith_S(c->yq, k);
    double ts;
    int want = R->sink && (R->sink->xSample || R->sink->xState); /* no sink: samples cost nothing */
    while (!rc && fci_run_pending_sample(R, t, &ts)) {
      if (!want) continue;
      if (CVodeGetDky(c->mem, ts, 0, c->ytmp)) { rc = fc_fail(err, FC_ESOLVE, NULL, "interpolation at t = %.9g s failed", ts); break; }
      rc = fci_run_sample(R, ts, NV_DATA_S(c->ytmp), err);
    }
    if (rc) break;
    if ((rc = step_points(c, R, t0, t, &m, sp, err))) break;
    R->step_stopped = flag != CV_SUCCESS;
    rc = fci_run_step_end(R, t, NV_DATA_S(c->y), c->qtot, t - t0, m, sp, err);
    if (rc) break;
    t0 = t;
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
    /* A smooth waveform corner (FCI_STOP_SMOOTH) only bends the forcing's second derivative:
     * the step ends on it, and BDF's error test sees the bend in the history and shortens the
     * next steps itself; a restart back to order 1 and a tiny first step would cost more
     * (docs/performance.md: 1/8 of the restarts and ~7 % of the steps of a pulsed tree). */
    int stop = flag == CV_TSTOP_RETURN ? kind : -1;
    if (changed || stop == FCI_STOP_KINK) {
      if (restart(c, R, t)) { rc = fc_fail(err, FC_ESOLVE, NULL, "restart failed: %s", R->cv_msg); break; }
    } else if (stop == FCI_STOP_REBASE && rebase(c, R)) {
      rc = fc_fail(err, FC_ESOLVE, NULL, "re-basing the quadratures failed: %s", R->cv_msg);
      break;
    }
    if (changed && (rc = fci_run_step_restart(R, t, NV_DATA_S(c->y), err))) break;
  }
  collect_stats(c, &R->res->stats);
  if (!rc || rc == FC_EINTR) {
    int rc2 = fci_run_finish(R, t, NV_DATA_S(c->y), c->qtot, err);
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
  cv_free(&c, &R);
  clock_gettime(CLOCK_MONOTONIC, &t1);
  if (R.res) {
    R.res->stats.wall_seconds = (double)(t1.tv_sec - t0.tv_sec) + 1e-9 * (double)(t1.tv_nsec - t0.tv_nsec);
    R.res->stats.factorizations = R.sys ? R.sys->nGfact + R.sys->nAfact : 0;
    R.res->stats.fixed_pivot = R.sys ? R.sys->nFixed : 0;
    R.res->stats.prec_setups = c.lsc.setups;
    R.res->stats.lin_fallbacks = c.lsc.fallbacks;
  }
  if (!rc || rc == FC_EINTR) { *out = R.res; R.res = NULL; }
  fci_run_free(&R);
  return rc;
}
