/* ferrocirc — `ferrocirc plot FILE.csv -o OUT.svg [options]`: tell the CSV kind from its header,
 * build the figure, write the SVG through fc_outfile (never half-written). */
#define _POSIX_C_SOURCE 200809L
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/output.h"
#include "plot_int.h"

static const char plot_usage[] =
  "usage: ferrocirc plot RUN.csv -o OUT.svg [--columns p:NODE,q:ID,...]\n"
  "                      [--cycles last:N --period T | --from T0 --to T1] [--title TEXT]\n"
  "       ferrocirc plot SWEEP.csv --x COLUMN --y COLUMN[,COLUMN...] -o OUT.svg [--title TEXT]\n"
  "       ferrocirc plot PROFILE.csv -o OUT.svg      (from `ferrocirc valve --profile`)\n"
  "Times in seconds. The kind of CSV is told from its header.\n";

enum { KIND_TRACE, KIND_SWEEP, KIND_PROFILE };

static int report(const fc_error *err, int usage)
{
  char buf[1400];
  fprintf(stderr, "ferrocirc plot: %s\n", fc_error_format(err, buf, sizeof buf));
  if (usage) fputs(plot_usage, stderr);
  return fc_error_exit_status(err->code);
}

static int seconds(const char *opt, const char *s, double *out, fc_error *err)
{
  char *end;
  *out = strtod(s, &end);
  if (end == s || *end || !isfinite(*out))
    return fc_fail(err, FC_EUSAGE, NULL, "%s: expected a time in seconds, got \"%s\"", opt, s);
  return FC_OK;
}

static int parse_args(int argc, char **argv, fci_plot_args *a, fc_error *err)
{
  memset(a, 0, sizeof *a);
  a->from = a->to = a->period = NAN;
  for (int i = 1; i < argc; i++) {
    const char *s = argv[i];
    const char **slot = !strcmp(s, "-o") ? &a->out : !strcmp(s, "--columns") ? &a->columns
                      : !strcmp(s, "--cycles") ? &a->cycles : !strcmp(s, "--x") ? &a->xcol
                      : !strcmp(s, "--y") ? &a->ycols : !strcmp(s, "--title") ? &a->title : NULL;
    double *num = !strcmp(s, "--from") ? &a->from : !strcmp(s, "--to") ? &a->to
                : !strcmp(s, "--period") ? &a->period : NULL;
    if ((slot || num) && i + 1 >= argc) return fc_fail(err, FC_EUSAGE, NULL, "%s needs a value", s);
    if (slot) *slot = argv[++i];
    else if (num) {
      int rc = seconds(s, argv[++i], num, err);
      if (rc) return rc;
    } else if (s[0] == '-' && s[1]) return fc_fail(err, FC_EUSAGE, NULL, "unknown option %s", s);
    else if (!a->csv) a->csv = s;
    else return fc_fail(err, FC_EUSAGE, NULL, "unexpected argument %s", s);
  }
  if (!a->csv || !a->out) return fc_fail(err, FC_EUSAGE, NULL, "need an input CSV and -o OUT.svg");
  if (!isnan(a->period) && !(a->period > 0))
    return fc_fail(err, FC_EUSAGE, NULL, "--period must be > 0 s, got %g", a->period);
  if (a->cycles && (!isnan(a->from) || !isnan(a->to)))
    return fc_fail(err, FC_EUSAGE, NULL, "give either --cycles or --from/--to, not both");
  return FC_OK;
}

static int kind_of(const fci_csv *c)
{
  if (!strcmp(c->name[0], "t") && !strcmp(c->unit[0], "s")) return KIND_TRACE;
  if (!strcmp(c->name[0], "x_m") && fci_csv_find(c, "pmag_mean_Pa") >= 0) return KIND_PROFILE;
  return KIND_SWEEP;
}

static int check_options(const fci_csv *c, int kind, const fci_plot_args *a, fc_error *err)
{
  static const char *const what[] = {"a time series", "a sweep table", "a valve profile"};
  if (kind != KIND_TRACE && (a->columns || a->cycles || !isnan(a->from) || !isnan(a->to)))
    return fc_fail(err, FC_EUSAGE, NULL, "%s is %s: --columns, --cycles, --from and --to apply "
                   "to time series (first column \"t [s]\")", c->file, what[kind]);
  if (kind != KIND_SWEEP && (a->xcol || a->ycols))
    return fc_fail(err, FC_EUSAGE, NULL, "%s is %s: --x and --y apply to sweep tables", c->file,
                   what[kind]);
  return FC_OK;
}

static int write_svg(const char *path, const fci_figure *fig, fc_error *err)
{
  fc_outfile *o;
  int rc = fc_outfile_open(path, &o, err);
  if (rc) return rc;
  if ((rc = fci_svg_write(fc_outfile_stream(o), fig, err))) {
    fc_outfile_abort(o);
    return rc;
  }
  return fc_outfile_commit(o, err);
}

int fc_plot_cli(int argc, char **argv)
{
  fc_error err;
  fci_plot_args a;
  fci_csv *c = NULL;
  fci_figure fig;
  memset(&fig, 0, sizeof fig);
  fc_error_clear(&err);
  int rc = parse_args(argc, argv, &a, &err), bad_args = rc != 0;
  if (!rc) rc = fci_csv_open(a.csv, &c, &err);
  int kind = c ? kind_of(c) : KIND_SWEEP;
  if (!rc) rc = check_options(c, kind, &a, &err);
  if (!rc) {
    if (kind == KIND_TRACE) rc = fci_plot_trace(c, &a, &fig, &err);
    else if (kind == KIND_PROFILE) rc = fci_plot_profile(c, &a, &fig, &err);
    else rc = fci_plot_sweep(c, &a, &fig, &err);
  }
  if (!rc) rc = write_svg(a.out, &fig, &err);
  if (rc && !err.file[0] && a.csv && rc != FC_EUSAGE && rc != FC_EIO) fc_error_set_file(&err, a.csv, 0, 0);
  fci_fig_free(&fig);
  fci_csv_free(c);
  return rc ? report(&err, bad_args) : 0;
}
