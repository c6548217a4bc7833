/* ferrocirc — bookkeeping of one run, independent of SUNDIALS: samples, extremes, volumes,
 * cycles and events (src/sim_run.c). sim.c drives it. */
#ifndef FERROCIRC_SIM_RUN_H
#define FERROCIRC_SIM_RUN_H

#include "ferrocirc/sim.h"
#include "sys.h"

/* Integrals over internal steps from the dense output (src/sim_steps.c): everything the report
 * integrates except what stays a CVODES quadrature (see fci_run.qoff, qpn). */
#define FCI_STEPS_MAX 2      /* most interior points of one step */
typedef struct fci_steps {
  double *pl, *ql, *il;      /* at the step's left end: per node p, per element q, per store qin */
  double *pm, *qm, *im;      /* the same at the interior points, FCI_STEPS_MAX blocks each */
  double *cp, *cq, *cb, *ci; /* integrals over the current cycle: p, q, max(-q, 0), qin */
  double *tp, *tq, *tb, *ti; /* the same over the closed cycles */
} fci_steps;

typedef struct fci_run {
  fc_net *net;
  fci_sys *sys;
  const fc_sim_sink *sink;   /* may be NULL */
  fc_sim_result *res;
  double *x0;                /* initial state (nx) */
  int nq;                    /* CVODES quadratures: 2 per tracked element, 1 per imposed node */
  int *qoff;                 /* per element: offset of its 2 quadratures (q, max(-q, 0)), -1 if
                                it is one-terminal or integrated from the dense output */
  int *quad_el, nquad;       /* the elements with quadratures, so the per-step pass visits only them */
  int *qpn;                  /* per node: offset of its pressure quadrature, -1 if the node is
                                not imposed (then from the dense output) */
  int *qp_node, nqp;         /* the imposed nodes, in the order of their quadratures (qpn), so
                                the quadratures' pass does not visit every node */
  double *qmag;              /* per quadrature: largest |integrand| seen (tolerance scale) */
  double *qtmp;              /* per quadrature: integrands, work */
  fci_steps steps;
  int *rootsfound;           /* nroot */
  int *corner_el;            /* elements with an xCorner slot */
  int ncorner;
  double *qbuf;              /* nElem: flows handed to the sink (NaN for one-terminal) */
  int *modes;                /* nElem */
  double *vq_cycle;          /* quadrature values at the start of the current cycle (nq) */
  double *v0;                /* per store index: stored volume at t = 0 */
  double dt;                 /* sample interval */
  long next_sample;          /* index k of the next sample time k dt */
  int final_done;            /* the extra sample at the duration has been written */
  double next_cycle;         /* time of the next cycle boundary, +inf if none */
  char cv_msg[512];          /* last message from CVODE's error handler */
  /* current cycle accumulators (src/sim_cycles.c) */
  double *c_open, *c_dpmax, *c_dpmin, *c_qmax, *c_qmin; /* per element */
  double *c_pmin, *c_pmax;   /* per node */
  double t_prev;             /* end of the previous internal step */
  double *ph1, *ph2;         /* per node: pressure at the last and the second-last step end */
  double th1, th2;           /* their times */
  int nhist;                 /* step ends in the history (0, 1, 2) */
  int step_stopped;          /* the step now ending ended on a root or a stop time (set by the
                                driver): a possible kink, where the extremes' history restarts */
  int *mode_el;              /* elements with modes (nRoot > 0) */
  int nmode;
  double *win_start;         /* chatter window start per element */
  int *win_count;            /* switches in the window */
  int done;                  /* until_periodic reached: stop */
  int *sign_el;              /* elements whose flow sign is a root function (nsign) */
  signed char *sign_side;    /* per sign root: sign of its last nonzero flow at a step end (+-1) */
  int nsign;
  int nroot_all;             /* element roots + flow-sign roots */
  double *atol, *wscale;     /* the integrator's per-state absolute tolerances and error-weight
                              * factors (owned by src/sim.c) */
  /* What the report covers (report.statistics; every element and node unless "tracked"). The
   * per-step passes walk these lists; node pressure extremes are always taken everywhere. */
  int stats_all;             /* 1: every element and node has statistics */
  unsigned char *rep_el;     /* per element: has flow statistics */
  unsigned char *rep_node;   /* per node: has a mean pressure and an inflow integral */
  int *st_el, nst_el;        /* reported two-terminal elements integrated from the dense output */
  int *ext_el, next_el;      /* reported two-terminal elements: flow and dp extremes */
  int *st_node, nst_node;    /* reported nodes integrated from the dense output (not imposed) */
  int *pt_el, npt_el;        /* "tracked": the FLOW elements an interior point evaluates (the
                                reported ones and every one at a reported store), */
  int *pt_nd, npt_nd;        /* the nodes whose inflow it needs; npt_el = -1: evaluate all */
  unsigned char *qkeep;      /* "tracked", no samples: the elements whose flow is ever read
                                (sys.h qkeep points here), else NULL */
  int *st_store, nst_store;  /* store indices of reported nodes */
} fci_run;

/* Flow-sign roots, after the elements' own: g[k] = q of sign_el[k]; where that flow is exactly
 * zero, the side it was last seen on times DBL_MIN (see fci_run_sign_roots). */
void fci_run_sign_roots(const fci_run *R, double *g);

/* Cycle accounting (src/sim_cycles.c). */
int fci_cycles_init(fci_run *R);
void fci_cycles_free(fci_run *R);
/* After each step (pressures and flows evaluated at t): accumulate; at a boundary close the
 * cycle with the quadratures yq. */
void fci_cycles_step(fci_run *R, double t, const double *yq);
/* Extremes of the current cycle at an interior point of a step. */
void fci_cycles_extremes(fci_run *R);
/* Fold the current cycle's extremes into the run's (before a reset, and at the end). */
void fci_cycles_fold_extremes(fci_run *R);
/* Chatter check for element i switching at t: FC_ECHATTER (stop) or a hold (continue). */
int fci_cycles_chatter(fci_run *R, int i, double t, fc_error *err);
/* Earliest hold release after t among held elements, +inf if none. */
double fci_cycles_next_release(const fci_run *R, double t);
/* Holds ending at t: re-check those elements' modes; *changed = 1 if one switched. */
int fci_run_release(fci_run *R, double t, const double *x, int *changed, fc_error *err);

int fci_run_init(fci_run *R, fc_net *net, const fc_sim_sink *sink, fc_error *err);
void fci_run_free(fci_run *R);
/* At t = 0: first sample and extremes; yq holds the zeroed quadratures. */
int fci_run_begin(fci_run *R, const double *yq, fc_error *err);
/* What a stop is, from the mildest: */
enum {
  FCI_STOP_SMOOTH, /* a waveform corner where the forcing's first derivative is continuous
                    * (fc_waveform_corners_smooth): the integrator steps on, no restart */
  FCI_STOP_REBASE, /* a cycle boundary: the solution is smooth; the quadratures are re-based
                    * (shifted to zero), the integrator steps on without a restart */
  FCI_STOP_KINK    /* a derivative jump (a kink in every flow of a resistive path and in the
                    * quadratures' integrands), a hold release, the end: a full restart */
};
/* The next time the integrator must stop at, after t; *kind (FCI_STOP_*) is that of the most
 * severe stop falling on it. */
double fci_run_next_stop(const fci_run *R, double t, int *kind);
/* If a sample is due at or before t, set *ts and return 1 (the sample is then consumed by
 * fci_run_sample). */
int fci_run_pending_sample(fci_run *R, double t, double *ts);
int fci_run_sample(fci_run *R, double ts, const double *x, fc_error *err);
/* After each internal step [t - h, t] with m interior points at s (already evaluated by
 * fci_run_step_point): step integrals, extremes, cycle boundaries. */
int fci_run_step_end(fci_run *R, double t, const double *x, const double *yq, double h, int m,
                     const double *s, fc_error *err);
/* At a root return: switch the modes of the elements whose roots were found (*changed = 1 if
 * one switched). A flow-sign root needs nothing: it only ends the step on an integrand's kink. */
int fci_run_events(fci_run *R, double t, const double *x, const int *found, int *changed,
                   fc_error *err);
/* Final sample and means. */
int fci_run_finish(fci_run *R, double t, const double *x, const double *yq, fc_error *err);
/* Step integrals (src/sim_steps.c). fci_steps_points: interior points in (0, 1) for a step
 * of the given BDF order, returns their number m. After evaluating the system at the step's
 * left end (after any mode switch), fci_steps_left; at interior point j, fci_steps_point; at
 * the right end, fci_steps_integrate with the step length h. */
int fci_steps_points(int order, double *s);
int fci_steps_init(fci_steps *S, int nN, int nE, int ns);
void fci_steps_free(fci_steps *S);
void fci_steps_left(fci_run *R);
void fci_steps_point(fci_run *R, int j);
void fci_steps_integrate(fci_run *R, double h, int m, const double *s);
void fci_steps_close_cycle(fci_steps *S, int nN, int nE, int ns);
/* Evaluate at interior point j (time t, interpolated state x) of the current step; its values
 * also count for the extremes. */
int fci_run_step_point(fci_run *R, int j, double t, const double *x, fc_error *err);
/* After a mode switch at t: the next step starts from the evaluation in the new modes. */
int fci_run_step_restart(fci_run *R, double t, const double *x, fc_error *err);
/* Quadrature integrands after fci_sys_eval. */
void fci_run_quad_rhs(const fci_run *R, double *dq);
/* Id of the element owning state component k (a store node's first compliance). */
const char *fci_run_state_owner(const fci_run *R, int k);

#endif
