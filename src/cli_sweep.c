/* ferrocirc — `sweep` (grids and Monte Carlo over a network) and `merge` (join shards).
 *
 *   ferrocirc sweep NET.json --vary PATH=FROM..TO [--steps N] [--vary ...] -o sweep.csv
 *   ferrocirc sweep NET.json --monte-carlo K [--seed S] -o mc.csv
 *       [--jobs N] [--shard I/N] [--quiet]
 *   ferrocirc merge shard-*.csv -o sweep.csv [--stats NET.json]
 * Inside a SLURM array job (SLURM_ARRAY_TASK_ID, SLURM_ARRAY_TASK_COUNT, SLURM_ARRAY_TASK_MIN)
 * the shard is taken from the environment unless --shard is given. */
#define _POSIX_C_SOURCE 200809L
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "ferrocirc/output.h"
#include "study/sweep.h"

typedef struct sweep_args {
  const char *network, *out;
  const char *vary[16];
  int steps[16], nvary, jobs, shard, nshard, quiet;
  long mc;
  unsigned long long seed;
} sweep_args;

static int env_shard(sweep_args *a)
{
  const char *id = getenv("SLURM_ARRAY_TASK_ID"), *cnt = getenv("SLURM_ARRAY_TASK_COUNT");
  const char *mn = getenv("SLURM_ARRAY_TASK_MIN");
  if (!id || !cnt) return 0;
  a->shard = atoi(id) - (mn ? atoi(mn) : 0);
  a->nshard = atoi(cnt);
  return 1;
}

static int parse(int argc, char **argv, sweep_args *a, fc_error *err)
{
  memset(a, 0, sizeof *a);
  a->jobs = (int)sysconf(_SC_NPROCESSORS_ONLN);
  a->nshard = 1;
  a->seed = 1;
  int shard_given = 0, last_steps = 11;
  for (int i = 1; i < argc; i++) {
    const char *s = argv[i], *v = i + 1 < argc ? argv[i + 1] : NULL;
    int takes = !strcmp(s, "-o") || !strcmp(s, "--vary") || !strcmp(s, "--steps") ||
                !strcmp(s, "--jobs") || !strcmp(s, "--shard") || !strcmp(s, "--monte-carlo") ||
                !strcmp(s, "--seed");
    if (takes && !v) return fc_fail(err, FC_EUSAGE, NULL, "%s needs a value", s);
    if (!strcmp(s, "-o")) a->out = v;
    else if (!strcmp(s, "--vary")) {
      if (a->nvary == 16) return fc_fail(err, FC_EUSAGE, NULL, "at most 16 --vary");
      a->steps[a->nvary] = -1;
      a->vary[a->nvary++] = v;
    } else if (!strcmp(s, "--steps")) {
      long n;
      if (fci_cli_long(s, v, 1, 1000000, &n, err)) return FC_EUSAGE;
      last_steps = (int)n;
      for (int k = 0; k < a->nvary; k++) if (a->steps[k] < 0) a->steps[k] = last_steps;
    } else if (!strcmp(s, "--jobs")) {
      long n;
      if (fci_cli_long(s, v, 1, 4096, &n, err)) return FC_EUSAGE;
      a->jobs = (int)n;
    } else if (!strcmp(s, "--monte-carlo")) {
      if (fci_cli_long(s, v, 1, 100000000, &a->mc, err)) return FC_EUSAGE;
    } else if (!strcmp(s, "--seed")) {
      char *end;
      errno = 0;
      a->seed = strtoull(v, &end, 10);
      if (end == v || *end || errno || v[0] == '-')
        return fc_fail(err, FC_EUSAGE, NULL, "--seed expects a non-negative integer, got \"%s\"", v);
    }
    else if (!strcmp(s, "--shard")) {
      if (sscanf(v, "%d/%d", &a->shard, &a->nshard) != 2 || a->nshard < 1 || a->shard < 0 ||
          a->shard >= a->nshard)
        return fc_fail(err, FC_EUSAGE, NULL, "--shard I/N with 0 <= I < N, got \"%s\"", v);
      shard_given = 1;
    } else if (!strcmp(s, "--quiet")) { a->quiet = 1; continue; }
    else if (s[0] == '-') return fc_fail(err, FC_EUSAGE, NULL, "unknown option %s", s);
    else if (!a->network) { a->network = s; continue; }
    else return fc_fail(err, FC_EUSAGE, NULL, "unexpected argument %s", s);
    i++;
  }
  for (int k = 0; k < a->nvary; k++) if (a->steps[k] < 0) a->steps[k] = last_steps;
  if (!shard_given && env_shard(a) && (a->shard < 0 || a->shard >= a->nshard))
    return fc_fail(err, FC_EUSAGE, NULL, "SLURM array task %d of %d is out of range", a->shard, a->nshard);
  if (!a->network || !a->out || (!a->nvary && !a->mc))
    return fc_fail(err, FC_EUSAGE, NULL, "usage: ferrocirc sweep NET.json (--vary PATH=FROM..TO "
                   "[--steps N] ... | --monte-carlo K [--seed S]) -o OUT.csv [--jobs N] [--shard I/N]");
  if (a->jobs < 1) a->jobs = 1;
  return FC_OK;
}

static int run(const sweep_args *a, const fc_units *u, fc_error *err)
{
  fci_study S;
  fc_outfile *o = NULL;
  int rc = fci_study_open(&S, a->network, u, err);
  for (int k = 0; !rc && k < a->nvary; k++) rc = fci_study_add_axis(&S, a->vary[k], a->steps[k], err);
  if (!rc && a->mc) rc = fci_study_monte_carlo(&S, a->mc, a->seed, err);
  if (!rc) rc = fc_outfile_open(a->out, &o, err);
  if (!rc) {
    FILE *f = fc_outfile_stream(o);
    fci_study_header(&S, f);
    rc = fci_study_run(&S, a->shard, a->nshard, a->jobs, !a->quiet && isatty(2), f, err);
  }
  if (!rc) rc = fc_outfile_commit(o, err);
  else fc_outfile_abort(o);
  if (!rc && a->mc && a->nshard == 1 && !a->quiet) {
    FILE *in = fopen(a->out, "r");
    if (in) {
      int nfit = 0, ndef = 0, ncal = fci_mc_joint_groups(S.joint, &nfit, &ndef);
      printf("Monte Carlo, %ld samples, seed %llu, %d toleranced values", S.npoints, a->seed, S.np);
      if (ncal) printf(" (%d fitted values of %d calibration%s drawn jointly from the covariance)",
                       nfit, ncal, ncal > 1 ? "s" : "");
      printf("\n");
      if (ndef)
        printf("note: %d calibration%s ha%s a semi-definite covariance: a direction the bench data "
               "did not determine is not varied\n", ndef, ndef > 1 ? "s" : "", ndef > 1 ? "ve" : "s");
      rc = fci_study_stats(in, S.nlimit, S.limit_name, S.limit_value, stdout, err);
      fclose(in);
    }
  }
  fci_study_free(&S);
  return rc;
}

int fci_cli_sweep(int argc, char **argv)
{
  sweep_args a;
  fc_error err = {0};
  fc_units *u = NULL;
  int rc = parse(argc, argv, &a, &err);
  if (!rc) rc = fc_units_open(&u, &err);
  if (!rc) rc = run(&a, u, &err);
  fc_units_free(u);
  return rc ? fci_cli_report(&err) : 0;
}

int fci_cli_merge(int argc, char **argv)
{
  fc_error err = {0};
  const char *out = NULL, *stats = NULL;
  char *files[4096];
  int n = 0, rc = FC_OK;
  for (int i = 1; i < argc && !rc; i++) {
    if (!strcmp(argv[i], "-o") && i + 1 < argc) out = argv[++i];
    else if (!strcmp(argv[i], "--stats") && i + 1 < argc) stats = argv[++i];
    else if (argv[i][0] == '-') rc = fc_fail(&err, FC_EUSAGE, NULL, "unknown option %s", argv[i]);
    else if (n < 4096) files[n++] = argv[i];
  }
  if (!rc && (!out || !n)) rc = fc_fail(&err, FC_EUSAGE, NULL, "usage: ferrocirc merge SHARD.csv... -o OUT.csv [--stats NET.json]");
  fc_outfile *o = NULL;
  long np = 0;
  if (!rc) rc = fc_outfile_open(out, &o, &err);
  if (!rc) rc = fci_study_merge(n, files, fc_outfile_stream(o), &np, &err);
  if (!rc) rc = fc_outfile_commit(o, &err);
  else fc_outfile_abort(o);
  if (!rc && stats) {
    fc_units *u = NULL;
    fci_study S;
    rc = fc_units_open(&u, &err);
    if (!rc) rc = fci_study_open(&S, stats, u, &err);
    FILE *in = rc ? NULL : fopen(out, "r");
    if (in) {
      rc = fci_study_stats(in, S.nlimit, S.limit_name, S.limit_value, stdout, &err);
      fclose(in);
    }
    if (!rc || in) fci_study_free(&S);
    fc_units_free(u);
  }
  return rc ? fci_cli_report(&err) : 0;
}
