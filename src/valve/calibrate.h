/* ferrocirc — calibrating valve designs to bench measurements (src/valve/calibrate*.c).
 *
 * Data: a measurement CSV (calibrate_csv.c; format in docs/valve-model.md, "Calibration"): one
 * row per measured valve or configuration, naming a design file, parameter overrides, the
 * direction and the measured cracking, reseat and blowout pressures, with an optional standard
 * uncertainty sigma per row.
 *
 * Model (calibrate_model.c): the prediction of a row is the valve model's pressure
 * (fc_valve_design_solve) of its design with the row's overrides and the fitted parameters set
 * by design path (fc_valve_design_set). Rows with the same design and overrides share one solve.
 *
 * Fit (calibrate_fit.c): weighted least squares, r_k = (model_k - measured_k) / sigma_k,
 * minimised by MINPACK's Levenberg-Marquardt with a forward-difference Jacobian (lmdif; Moré
 * 1978, Lect. Notes Math. 630:105; cminpack). Bounds by the sine transform
 * (James & Roos 1975, Comput. Phys. Commun. 10:343): theta = lo + (hi - lo)(1 + sin u)/2.
 * Covariance from a central-difference Jacobian J in the physical parameters at the optimum:
 * C = (J^T J)^-1 when sigmas are given, C = s^2 (J^T J)^-1 with s^2 = chi^2/(n - p) when not
 * (Bates & Watts 1988, Nonlinear Regression Analysis, ch. 2 [from memory]).
 * Identifiability (calibrate_linalg.c): eigenvalues of the correlation-scaled normal matrix. */
#ifndef FERROCIRC_VALVE_CALIBRATE_H
#define FERROCIRC_VALVE_CALIBRATE_H

#include <stdio.h>

#include "ferrocirc/error.h"
#include "ferrocirc/units.h"
#include "ferrocirc/valve.h"

struct cJSON;

enum { FCI_CAL_CRACK = 0, FCI_CAL_RESEAT, FCI_CAL_BLOWOUT, FCI_CAL_NQ };

/* ---- Measurements (calibrate_csv.c) ---- */
typedef struct fci_cal_row {
  int    line;               /* line of the row in the CSV (1-based) */
  char  *design;             /* design file as written (relative to the CSV's folder) */
  char  *override;           /* "PATH=VALUE;PATH=VALUE" or "" */
  int    reverse;            /* 0 forward (+x), 1 reverse */
  double meas[FCI_CAL_NQ];   /* measured crack, reseat, blowout [Pa]; NaN = not measured */
  double sigma;              /* standard uncertainty of each value of the row [Pa]; NaN = none */
  int    config;             /* index of the (design, override) configuration */
} fci_cal_row;

typedef struct fci_cal_data {
  char  *file;               /* the CSV as named by the caller */
  char  *dir;                /* its folder ("" = cwd) */
  int    nRow;
  fci_cal_row *row;          /* owned */
  int    nValue;             /* measured cells: the number of residuals */
  int   *vrow, *vq;          /* [nValue] row and quantity of each value, row-major */
  int    has_sigma;          /* 1: every row has sigma (weighted); 0: none has */
  char   unit[32];           /* pressure unit of the crack column, for reports */
  double k;                  /* Pa -> unit factor */
} fci_cal_data;

/* Read a measurement CSV. Errors (FC_EPARAM, FC_EIO) name the file, line and column. */
int  fci_cal_data_load(const char *file, const fc_units *u, fci_cal_data **out, fc_error *err);
void fci_cal_data_free(fci_cal_data *d);
/* "crack", "reseat", "blowout". */
const char *fci_cal_qname(int q);

/* ---- Design paths (calibrate_path.c) ---- */
/* The path without a leading "$." or "$". */
const char *fci_cal_path_norm(const char *path);
/* 1 if the concrete path matches pattern ("[*]" matches any index). */
int  fci_cal_path_match(const char *pattern, const char *path);
/* Concrete paths (at most max) of pattern that exist in tree; 0, -1 too many or too long,
 * -2 malformed. */
int  fci_cal_path_expand(const struct cJSON *tree, const char *pattern, char (*out)[256], int max,
                         int *n);
/* The item at a concrete path, NULL if absent. */
const struct cJSON *fci_cal_path_get(const struct cJSON *tree, const char *path);

/* ---- Model (calibrate_model.c) ---- */
typedef struct fci_cal_param {
  char   path[256];          /* design path; "[*]" stands for every element of an array */
  double start;              /* starting value from the first design [SI] */
  double lo, hi;             /* bounds [SI] if bounded */
  int    bounded;
  char   unit[32];           /* unit of the value in the design file ("" = SI number) */
  double k;                  /* SI -> unit factor (1 for SI) */
} fci_cal_param;

#define FCI_CAL_MAX_PARAM 16
#define FCI_CAL_MAX_EXPAND 64

/* Private to calibrate_model.c and calibrate_eval.c: use the functions below. */
typedef struct fci_cal_config {
  int    design;              /* index into m->design */
  const char *override;       /* borrowed from the first row that uses it */
  int    line;                /* that row's line */
  fc_valve_design *d;         /* design with the overrides applied (owned) */
  int    nPath;               /* concrete fit paths in this design */
  char (*path)[256];          /* [nPath] */
  int   *param;               /* [nPath] parameter of each concrete path */
  fc_valve_pressures p;       /* last solution */
} fci_cal_config;

struct fci_cal_model {
  const fci_cal_data *data;   /* borrowed */
  const fc_units *u;          /* borrowed */
  int    nDesign;
  fc_valve_design **design;   /* [nDesign] base designs (owned) */
  const char **name;          /* [nDesign] names as in the CSV (borrowed from rows) */
  int    nConfig;
  fci_cal_config *cfg;                /* [nConfig] */
  int   *rowcfg;              /* [nRow] configuration of each row */
  unsigned char *need;        /* [nConfig] scratch: configurations an evaluation needs */
  int    nParam;
  fci_cal_param param[FCI_CAL_MAX_PARAM];
  int    dim[FCI_CAL_MAX_PARAM];      /* dimension of each parameter's value, -1 for a bare SI number */
  long   nEval;
};

typedef struct fci_cal_model fci_cal_model;
int  fci_cal_row_error(fc_error *err, const fci_cal_data *d, int line, const char *path,
                       const char *what);
int  fci_cal_find_design(const fci_cal_model *m, const char *name);

/* Load the designs of d, check every override, resolve the fit paths (comma-separated; each
 * must hold a value in every design) and their starting values. d and u are borrowed and must
 * outlive the model. */
int  fci_cal_model_new(const fci_cal_data *d, const fc_units *u, const char *fit_paths,
                       fci_cal_model **out, fc_error *err);
void fci_cal_model_free(fci_cal_model *m);
/* Set bounds from "PATH=LO..HI" (LO and HI numbers with one optional unit). */
int  fci_cal_model_bounds(fci_cal_model *m, const char *spec, fc_error *err);
int  fci_cal_model_nparam(const fci_cal_model *m);
const fci_cal_param *fci_cal_model_param(const fci_cal_model *m, int i);
const fci_cal_data *fci_cal_model_data(const fci_cal_model *m);
/* Predicted values [Pa] for theta [SI] of every value whose row has use[row] != 0 (use NULL:
 * all rows); pred[k] of other values is NaN. Solver failures (FC_ESOLVE) name the row. */
int  fci_cal_predict(fci_cal_model *m, const double *theta, const unsigned char *use,
                     double *pred, fc_error *err);
/* Base design named `design` (as in the CSV; NULL = the first row's) with theta set at the fit
 * paths; *out owned by the caller. */
int  fci_cal_model_design(fci_cal_model *m, const char *design, const double *theta,
                          fc_valve_design **out, fc_error *err);
/* The design object (JSON) of `design` as loaded, borrowed; NULL if not in the data. */
const struct cJSON *fci_cal_model_tree(const fci_cal_model *m, const char *design);
/* Parse tree as a design in the folder of `design` (NULL: the first row's), to check it. */
int  fci_cal_model_check(const fci_cal_model *m, const char *design, const struct cJSON *tree,
                         fc_error *err);
/* Number of model evaluations so far (for reports). */
long fci_cal_model_evals(const fci_cal_model *m);

/* ---- Fit (calibrate_fit.c, calibrate_linalg.c) ---- */
enum { FCI_CAL_OK = 0, FCI_CAL_WEAK = 1, FCI_CAL_NOT_IDENTIFIABLE = 2 };

typedef struct fci_cal_fit {
  int     p, n, dof;         /* parameters, values used, n - p */
  double *theta;             /* [p] fitted values [SI] */
  double *se;                /* [p] standard errors [SI]; +inf if undetermined */
  double *cov;               /* [p*p] covariance [SI] */
  double *corr;              /* [p*p] correlation */
  double *pred;              /* [nValue] model at theta [Pa] (NaN for unused rows) */
  double  chi2, redchi2;     /* sum of squared weighted residuals; chi2 / dof */
  double  cond;              /* condition number of the correlation-scaled normal matrix */
  double *weak;              /* [p] eigenvector of its smallest eigenvalue */
  int    *ident;             /* [p] FCI_CAL_OK, _WEAK or _NOT_IDENTIFIABLE */
  int    *at_bound;          /* [p] 1 if the value sits at a bound */
  int     identifiable;      /* 0 if any parameter is not identifiable */
  int     info, nfev;        /* lmdif's info and function evaluations */
} fci_cal_fit;

/* Fit the parameters to the values of the rows with use[row] (NULL: all). Starting point: the
 * designs' values (theta0 NULL) or theta0. FC_EPARAM if there are not more values than
 * parameters; FC_ESOLVE if the model fails at a trial point. *out owned by the caller. */
int  fci_cal_fit_run(fci_cal_model *m, const unsigned char *use, const double *theta0,
                     fci_cal_fit **out, fc_error *err);
void fci_cal_fit_free(fci_cal_fit *f);

/* Leave-one-out: for each row, refit without it and predict it; loo[k] = prediction - measured
 * [Pa] for every value k (NaN when the row could not be left out). */
int  fci_cal_cross_validate(fci_cal_model *m, const fci_cal_fit *full, double *loo,
                            fc_error *err);

/* Symmetric eigen-decomposition of the n x n matrix a (destroyed) by cyclic Jacobi rotations
 * (Golub & Van Loan 2013, Matrix Computations, sec. 8.5): eigenvalues w[n] ascending, vectors in
 * the columns of v[n*n]. For the small normal matrices of a fit. */
void fci_cal_eigen(int n, double *a, double *w, double *v);
/* Covariance and identifiability from the weighted Jacobian j[n*p] (row-major), scale s2
 * (1 or the reduced chi-square). Fills f->cov, se, corr, cond, weak, ident, identifiable. */
void fci_cal_covariance(int n, int p, const double *j, double s2, fci_cal_fit *f);

/* ---- Output (calibrate_report.c, calibrate_write.c) ---- */
void fci_cal_report(FILE *out, const fci_cal_model *m, const fci_cal_fit *f, const double *loo);
/* Write the calibrated design of `design` (NULL: the first row's) to file via fc_outfile. */
int  fci_cal_write(const char *file, fci_cal_model *m, const char *design, const fci_cal_fit *f,
                   const double *loo, fc_error *err);
/* `ferrocirc valve calibrate ...`; argv[0] is "calibrate". Returns the exit status. */
int  fci_cal_cli(int argc, char **argv);

#endif
