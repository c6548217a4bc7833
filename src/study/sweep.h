/* ferrocirc — grid sweeps and Monte Carlo studies over a network file (src/study/sweep*.c). */
#ifndef FERROCIRC_SWEEP_H
#define FERROCIRC_SWEEP_H

#include <stdint.h>

#include "study_int.h"

typedef struct fci_param {
  char  *path;        /* JSON path of the value */
  char   unit[32];    /* unit text written with each value ("" = SI number) */
  double lo, hi;      /* grid range in that unit */
  int    steps;       /* grid points (>= 1) */
  double nominal;     /* Monte Carlo: nominal value in that unit */
  double half;        /* Monte Carlo: tolerance half-width (normal: 2 sigma) in that unit */
  int    uniform;     /* Monte Carlo distribution */
} fci_param;

typedef struct fci_study {
  struct cJSON *base;     /* network tree with linked designs inlined (owned) */
  const char *file;       /* network file name */
  char   basedir[1024];
  const fc_units *units;
  int    np;
  fci_param *p;           /* owned */
  long   npoints;
  int    mc;              /* 1: Monte Carlo, 0: grid */
  uint64_t seed;
  fci_metrics cols;       /* metric column names (values unused) */
  int    nlimit;
  char **limit_name;      /* report.limits: metric names and upper bounds */
  double *limit_value;
  fci_mc_joint *joint;    /* Monte Carlo: calibrations drawn jointly, NULL if none (owned) */
} fci_study;

/* Load the base network and check that it runs to its columns. */
int fci_study_open(fci_study *S, const char *file, const fc_units *u, fc_error *err);
void fci_study_free(fci_study *S);
/* Add a grid axis "PATH=FROM..TO" with `steps` points. */
int fci_study_add_axis(fci_study *S, const char *spec, int steps, fc_error *err);
/* Switch to Monte Carlo over every toleranced value of the network. */
int fci_study_monte_carlo(fci_study *S, long samples, uint64_t seed, fc_error *err);
/* Values of point k in the units of S->p (grid, or Monte Carlo draws). */
void fci_study_point(const fci_study *S, long k, double *v);
/* Header and one row (point k) as CSV text; the row carries the error of a failed point. */
void fci_study_header(const fci_study *S, FILE *f);
int fci_study_row(const fci_study *S, long k, FILE *f);
/* Points of shard i of n (0-based, i < n): k = i, i + n, i + 2n, ... */
/* Run points of one shard with `jobs` processes into f, in point order. */
int fci_study_run(const fci_study *S, int shard, int nshard, int jobs, int progress, FILE *f,
                  fc_error *err);

#endif
