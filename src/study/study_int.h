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
