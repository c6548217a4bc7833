/* ferrocirc — design studies (internal): paths into network files, sweep points, metrics,
 * parallel and sharded execution, merging, Monte Carlo statistics. */
#ifndef FERROCIRC_STUDY_INT_H
#define FERROCIRC_STUDY_INT_H

#include <stdint.h>
#include <stdio.h>

#include "ferrocirc/error.h"
#include "ferrocirc/network.h"
#include "ferrocirc/sim.h"
#include "ferrocirc/units.h"

struct cJSON;

/* ---- Paths (jpath.c) ----
 * "elements[v_in].design.magnets[0].gap" or "$.simulation.cycles": object keys after '.', array
 * indices in brackets; under "elements" a bracketed non-number is an element id. A "design"
 * given as {"file": ...} is replaced by the file's contents on the way (basedir resolves it), so
 * values inside linked valve designs can be varied too. */
/* The item at path (created as null if the last key is missing and create is set). */
int fci_jpath_find(struct cJSON *root, const char *path, const char *basedir, int create,
                   struct cJSON **item, fc_error *err);
/* Replace the item at path by `value` (ownership taken, also on error). */
int fci_jpath_set(struct cJSON *root, const char *path, struct cJSON *value, const char *basedir,
                  fc_error *err);
/* Replace every {"file": ...} design of every element by the file's contents. */
int fci_jpath_inline_designs(struct cJSON *root, const char *basedir, fc_error *err);

/* ---- A quantity as written: "1.5 mm" -> 1.5 and "mm"; a plain number has unit "". ---- */
int fci_split_quantity(const char *text, double *num, char *unit, size_t n);

/* ---- Random numbers (mc_sample.c): splitmix64-seeded xoshiro256**, one stream per point ---- */
typedef struct fci_rng { uint64_t s[4]; } fci_rng;
void fci_rng_seed(fci_rng *r, uint64_t seed, uint64_t stream);
double fci_rng_uniform(fci_rng *r);   /* [0, 1) */
double fci_rng_normal(fci_rng *r);    /* standard normal (Box-Muller) */
uint64_t fci_rng_mix(uint64_t x);     /* splitmix64's finaliser: a 64-bit hash of x */

/* ---- Calibrated designs in Monte Carlo (mc_cov.c, mc_joint.c) ----
 * The fitted parameters of a design's "calibration" block are drawn jointly from N(theta, C),
 * one draw per calibration and point shared by every element that carries it (mc_joint.c says
 * why). */
#define FCI_MC_MAX_JOINT 16
/* A factor l (m x m, row-major) with l l^T = c for a covariance c (m x m, any units): Cholesky
 * when c is positive definite, else a clipped eigen-decomposition (c semi-definite); *rank is
 * the number of directions drawn. -1 with a reason in why if c is not a covariance. */
int fci_mc_cov_factor(int m, const double *c, double *l, int *rank, char *why, size_t nwhy);
struct fci_study;
typedef struct fci_mc_joint fci_mc_joint;
/* Calibrations among the element designs of S->base, mapped to the toleranced values S->p they
 * fit; *out = NULL when there are none. FC_EPARAM (JSON path set) for a malformed block or one
 * that no longer matches its design (value, tolerance or path changed by hand). */
int fci_mc_joint_new(const struct fci_study *S, fci_mc_joint **out, fc_error *err);
/* Overwrite the fitted values in v (point k's values, in the units of S->p) by the joint draw of
 * point k; depends only on seed, k and the calibrations. J may be NULL (nothing to do). */
void fci_mc_joint_apply(const fci_mc_joint *J, uint64_t seed, long k, double *v);
/* Number of calibrations; *nfitted their parameters, *ndeficient those with a semi-definite
 * covariance (a direction not drawn). Either pointer may be NULL. */
int fci_mc_joint_groups(const fci_mc_joint *J, int *nfitted, int *ndeficient);
void fci_mc_joint_free(fci_mc_joint *J);

/* ---- Metrics of one run (metrics.c) ---- */
typedef struct fci_metrics {
  int n;
  char **name;     /* column headers with units, e.g. "rf:v_out", "vnet:v_out [uL]" */
  double *value;
} fci_metrics;
/* Columns for this network (same for every point of a study). */
int fci_metrics_columns(const fc_net *net, const fc_units *u, fci_metrics *m, fc_error *err);
/* Values of a completed run (NaN where undefined). */
void fci_metrics_values(const fc_net *net, const fc_sim_result *r, fci_metrics *m);
void fci_metrics_free(fci_metrics *m);
/* Index of the column named `name` (before any " ["), or an alias regurgitant_fraction ->
 * rf_max, blowout_margin -> margin_max; -1 if none. */
int fci_metrics_find(const fci_metrics *m, const char *name);

/* ---- Writing CSV fields ---- */
void fci_csv_field(FILE *f, const char *s);   /* quoted when needed */

/* ---- Result files (merge.c, mc_stats.c) ---- */
/* Join shard CSVs into out in point order; *npoints receives the count. */
int fci_study_merge(int nfile, char *const *files, FILE *out, long *npoints, fc_error *err);
/* Statistics of the metric columns of a study CSV, with limit-violation probabilities. */
int fci_study_stats(FILE *in, int nlimit, char *const *lname, const double *lval, FILE *out,
                    fc_error *err);

#endif
