/* ferrocirc — design targets for a valve (internal, src/valve/): find the value of one design
 * parameter at which a valve pressure (or the differential or the ratio) meets a target.
 *
 * Method: scan the allowed range on a grid, bracket each sign change of q(x) - target, refine
 * each bracket by Brent's method (valve_target.c). Where no value in the range meets the target
 * the nearest achievable value is reported instead. */
#ifndef FERROCIRC_VALVE_TARGET_H
#define FERROCIRC_VALVE_TARGET_H

#include "valve_int.h"

/* ---- Brent's method (Brent 1973, Algorithms for Minimization without Derivatives, ch. 4) ----
 * f(x, ctx, &fx) returns FC_OK or an error status (which stops the search and is returned).
 * [a, b] must bracket a root: fa = f(a), fb = f(b) of opposite signs (or one of them 0), else
 * FC_EPARAM. On FC_OK *root is within 6 eps |root| + 2 xtol of a point where f changes sign,
 * *froot = f(*root) and *iters the number of evaluations made here (at most maxit; FC_ESOLVE if
 * that was not enough, with *root the best point so far). A discontinuity where f changes sign
 * is found like a root: check |*froot|. */
typedef int (*fci_root_fn)(double x, void *ctx, double *fx);
int fci_brent(fci_root_fn f, void *ctx, double a, double b, double fa, double fb, double xtol,
              int maxit, double *root, double *froot, int *iters);

/* ---- Quantities a target may name ---- */
enum {
  FCI_TQ_CRACK_FORWARD, FCI_TQ_CRACK_REVERSE, FCI_TQ_RESEAT_FORWARD, FCI_TQ_RESEAT_REVERSE,
  FCI_TQ_BLOWOUT, FCI_TQ_DIFFERENTIAL, FCI_TQ_RATIO, FCI_TQ_COUNT
};
/* Index of a quantity name ("crack_reverse"), -1 if unknown. */
int fci_target_quantity(const char *name);
const char *fci_target_quantity_name(int q);
/* Comma-separated list of the names, for messages. */
const char *fci_target_quantity_names(void);
/* 1 for the pressures (in Pa), 0 for the dimensionless ratio. */
int fci_target_is_pressure(int q);
/* Value of quantity q for pressures p [Pa, or 1]; NaN where undefined (ratio with no forward
 * crack). */
double fci_target_value(const fc_valve_pressures *p, int q);

/* ---- The search ---- */
#define FCI_TARGET_MAX_ROOTS 8

typedef struct fci_target_spec {
  int    quantity;    /* FCI_TQ_* */
  double value;       /* target [Pa] or ratio */
  const char *key;    /* design path, e.g. "magnets[0].gap" (borrowed) */
  char   unit[32];    /* unit of lo, hi and the results ("" = SI number) */
  double lo, hi;      /* allowed range, lo < hi, in unit */
  int    steps;       /* scan points (>= 2) */
} fci_target_spec;

typedef struct fci_target_point {
  double x;               /* parameter value [unit] */
  double q;               /* the quantity there [Pa or 1] */
  int    iters;           /* Brent evaluations (0 for a scan point) */
  fc_valve_pressures p;   /* all pressures there */
} fci_target_point;

typedef struct fci_target_result {
  int    nroot;                               /* values that meet the target, ascending x */
  fci_target_point root[FCI_TARGET_MAX_ROOTS];
  int    nmore;                               /* further brackets not refined */
  int    njump;                               /* sign changes that were jumps, not roots */
  double jump_x;                              /* the first of them [unit] */
  fci_target_point closest;                   /* nearest achievable value (nroot == 0) */
  int    nvalid;                              /* scan points with a solution */
  int    nfail;                               /* scan points whose statics had no solution */
  int    nunsealed;                           /* scan points where the plug does not seal */
  double qmin, qmax;                          /* quantity range over the valid scan points */
  char   fail_msg[300];                       /* message of the first failed point */
} fci_target_result;

/* Search the range of spec for values of spec->key where the quantity equals spec->value.
 * d is not modified. Errors: FC_EPARAM for a key or value the design rejects (naming its path),
 * FC_ESOLVE when no scan point has a solution; finding no value is not an error (nroot = 0). */
int fci_valve_target_solve(const fc_valve_design *d, const fc_units *u,
                           const fci_target_spec *spec, fci_target_result *r, fc_error *err);

/* The current value of key in the design as written: *v in *unit ("" = SI number). FC_EPARAM if
 * the key is absent or not a number or quantity. */
int fci_valve_design_value(const fc_valve_design *d, const char *key, double *v, char *unit,
                           size_t nunit, fc_error *err);

/* `ferrocirc valve DESIGN.json --target Q=VALUE --adjust KEY [--range A..B] [--steps N]
 * [--unit U] [--json]` (valve_target_cli.c); argv[0] is "valve". Exit status: 0 the target is
 * met, 1 no value in the range meets it (or another failure), 2 bad input or usage. */
int fci_valve_target_cli(int argc, char **argv);

#endif
