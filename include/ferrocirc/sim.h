/* ferrocirc — time integration of a network (SUNDIALS CVODE, BDF, Newton with an exact sparse
 * preconditioner; see src/sys.h for the formulation and docs/numerics.md).
 *
 * The run calls the sink at every sample time t = 0, dt, 2 dt, ..., duration (and at the
 * duration itself if it is not a multiple of dt), and at every mode switch. Results accumulate
 * volumes with CVODE quadratures (integrated alongside the state by the same BDF formula, so
 * stored volume and integrated inflow agree to the Newton tolerance) and extremes at every
 * internal step, so a peak between samples is not missed. */
#ifndef FERROCIRC_SIM_H
#define FERROCIRC_SIM_H

#include <stddef.h>

#include "ferrocirc/error.h"
#include "ferrocirc/network.h"

typedef struct fc_sim_sink {
  void *ctx;
  /* p[nNode] gauge pressures [Pa]; q[nElem] flows from -> to [m^3/s] (NaN for one-terminal
   * elements); mode[nElem] discrete states (0 for elements without modes). Nonzero = stop. */
  int (*xSample)(void *ctx, double t, const double *p, const double *q, const int *mode);
  /* Optional: element `elem` switched from mode a to b at t; dp = p(from) - p(to) [Pa]. */
  int (*xEvent)(void *ctx, double t, int elem, int a, int b, double dp);
  /* Optional: called after every internal step with the time reached (progress display). */
  void (*xProgress)(void *ctx, double t);
  /* Optional, internal (the CSV writer, src/csv_sink.c): called instead of xSample with the
   * state at the sample time, x in the engine's order (src/sys.h; NULL if there is none), and
   * mode[nElem]; the sink evaluates the network at (t, x) itself, with an evaluation of its
   * own, so that the run need not. */
  int (*xState)(void *ctx, double t, const double *x, const int *mode);
} fc_sim_sink;

typedef struct fc_sim_stats {
  long steps, rhs_evals, lin_iters, prec_setups, prec_solves, nonlin_iters;
  long err_test_fails, conv_fails, root_evals, events, restarts, factorizations;
  long lin_fallbacks;     /* iterative Newton solves redone directly */
  long fixed_pivot;       /* of the factorisations, those done with pivots fixed in advance
                           * (diagonally dominant matrices); KLU did the others */
  int iterative;          /* 1 if the Newton solves were iterative (GMRES), 0 direct */
  double wall_seconds;
} fc_sim_stats;

typedef struct fc_sim_result {
  int nNode, nElem;
  double t_end;           /* time reached [s] */
  double *p_min, *p_max, *p_mean;   /* per node [Pa]; mean = time average */
  double *q_min, *q_max, *q_mean;   /* per element [m^3/s]; NaN for one-terminal elements */
  double *v_net, *v_back;           /* per element: integral of q, of max(-q, 0) [m^3] */
  double *v_stored;                 /* per node: change of stored volume over the run [m^3] */
  double *v_inflow;                 /* per node: integral of the net inflow [m^3] */
  int nCycle;                       /* complete cycles recorded */
  double cycle_period;              /* [s], 0 if none */
  int nCycleMax;                    /* whole cycles in the duration: the record's room */
  /* Per complete cycle c and element i, at [fc_sim_cycle_at(r, c, i)] (NaN for one-terminal
   * elements). Every cycle is kept for the tracked elements (valves, sources, culture chambers,
   * report.track: cyc_row[i] >= 0); of the others only the last FC_SIM_CYCLE_RING cycles, so the
   * record does not grow with cycles x elements (7 doubles each: 0.5 GB for 20 cycles of a
   * 458 754-element network). */
  double *cyc_v_net, *cyc_v_back;   /* integral of q and of max(-q, 0) [m^3] */
  double *cyc_open;                 /* time spent in a nonzero mode (valve open or blown) [s] */
  double *cyc_dp_max, *cyc_dp_min;  /* extremes of p(from) - p(to) [Pa] */
  double *cyc_q_max, *cyc_q_min;    /* extremes of q [m^3/s] */
  int *cyc_row;                     /* per element: its row of the kept cycles, or -1 */
  int nKeep;                        /* elements whose every cycle is kept */
  /* Per complete cycle c and node n, at [c * nNode + n]: */
  double *cyc_p_min, *cyc_p_max, *cyc_p_mean; /* [Pa] */
  int periodic_cycle;               /* until_periodic: the cycle after which net volumes
                                       changed by less than the tolerance; 0 = not reached */
  int chatter_holds;                /* chatter regularisations applied ("continue") */
  double chatter_time;              /* time of the first chatter report [s], NaN if none */
  int chatter_elem;                 /* element of the first chatter report, -1 if none */
  int *blown_elem;                  /* per element: 1 if it blew out during the run */
  double *blown_time;               /* per element: when [s] (NaN if not) */
  fc_sim_stats stats;
} fc_sim_result;

/* Integrate `net` over its simulation window. The sink may be NULL. On success *out holds the
 * results (caller frees with fc_sim_result_free). Errors: FC_ESOLVE (message names time, the
 * element nearest the failing state and CVODE's flag), FC_ETOPO (steady start undetermined),
 * FC_EINTR (fc_sim_request_stop was called; *out then holds the results up to t_end). */
int fc_sim_run(fc_net *net, const fc_sim_sink *sink, fc_sim_result **out, fc_error *err);
void fc_sim_result_free(fc_sim_result *r);

/* Async-signal-safe: ask a running fc_sim_run to stop at its next step. */
void fc_sim_request_stop(void);

/* Cycles of every element held however many cycles run (the last ones). */
#define FC_SIM_CYCLE_RING 3

/* Index of cycle c of element i in the per-cycle element arrays of r: every c < nCycle for a
 * tracked element, the last FC_SIM_CYCLE_RING cycles for the others. */
static inline size_t fc_sim_cycle_at(const fc_sim_result *r, int c, int i)
{
  int k = r->cyc_row[i];
  return k >= 0 ? (size_t)FC_SIM_CYCLE_RING * r->nElem + (size_t)c * r->nKeep + k
                : (size_t)(c % FC_SIM_CYCLE_RING) * r->nElem + i;
}

#endif
