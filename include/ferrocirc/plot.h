/* ferrocirc — pictures: SVG plots of result CSVs and Graphviz schematics of networks.
 *
 * `ferrocirc plot FILE.csv -o OUT.svg` draws one of three CSV kinds, told apart by the header:
 *   time series  first column "t [s]", then "p:NODE [unit]", "q:ID [unit]", "state:ID" (output.h)
 *   sweep        columns "name [unit]" (an optional "error" column marks a failed point)
 *   profile      the valve field profile ("x_m,width_m,...,pmag_max_Pa", `valve --profile`)
 * The SVG is written by us, self-contained (no scripts, no external fonts or images).
 * `ferrocirc schematic NETWORK.json -o OUT.dot` writes the circuit as a Graphviz graph.
 * Both write through fc_outfile (a temporary renamed on success). */
#ifndef FERROCIRC_PLOT_H
#define FERROCIRC_PLOT_H

#include <stddef.h>
#include <stdio.h>

#include "ferrocirc/error.h"
#include "ferrocirc/network.h"

/* ---- Axis ticks ---- */
#define FC_PLOT_MAX_TICKS 16

/* Ticks at "nice" multiples (1, 2, 5 x 10^k) enclosing [lo, hi], about `target` of them. */
typedef struct fc_plot_ticks {
  double lo, hi;        /* axis range: the first and last tick */
  double step;          /* spacing of the ticks */
  int    n;             /* ticks lo, lo + step, ..., hi (2 <= n <= FC_PLOT_MAX_TICKS) */
  int    decimals;      /* digits after the point that show every tick exactly */
} fc_plot_ticks;

/* Heckbert's loose labelling (Graphics Gems I, 1990, "Nice numbers for graph labels"). lo == hi
 * is widened around the value; lo > hi are swapped; both must be finite (asserted). */
void fc_plot_ticks_make(double lo, double hi, int target, fc_plot_ticks *out);
/* The label of tick value v ("0.25", "-3", "1e-06" for very small or large steps); -0 prints
 * as 0. Writes at most n bytes into buf and returns buf. */
const char *fc_plot_tick_label(const fc_plot_ticks *t, double v, char *buf, size_t n);

/* ---- Decimation ---- */
#define FC_PLOT_MAX_POINTS 2000 /* points kept per series */

/* Min/max envelope binning over x in [x0, x1]: each of max_points/2 equal bins keeps its lowest
 * and its highest point (in x order), so every peak and trough of the full series is drawn
 * however long the series is. Points are added in increasing x, one at a time (a file is
 * streamed, never held); memory is O(max_points). */
typedef struct fc_plot_bins fc_plot_bins;
int fc_plot_bins_new(double x0, double x1, size_t max_points, fc_plot_bins **out, fc_error *err);
/* Points outside [x0, x1] and NaN y are ignored. */
void fc_plot_bins_add(fc_plot_bins *b, double x, double y);
/* Copy the kept points, in increasing x, into x[] and y[] (room for max_points each); returns
 * their number. */
size_t fc_plot_bins_points(const fc_plot_bins *b, double *x, double *y);
/* Running extremes of the accepted points (+INFINITY / -INFINITY when none). */
void fc_plot_bins_range(const fc_plot_bins *b, double *ymin, double *ymax);
void fc_plot_bins_free(fc_plot_bins *b);

/* ---- Schematic ---- */
/* Write net as a Graphviz digraph to f: junctions as small labelled pills, elements as shapes
 * by type (reservoir cylinder, pump arrow, channel rounded box, chamber box3d, valve double box), key values
 * in the labels in designer's units (R in mbar/(uL/min), C in uL/mbar or nL/mbar, valve
 * thresholds in mmHg, lengths in mm/um). FC_EIO if the stream fails. */
int fc_schematic_write(const fc_net *net, FILE *f, fc_error *err);

/* ---- Command line (argv[0] is the command name; return the process exit status) ---- */
int fc_plot_cli(int argc, char **argv);      /* "plot" */
int fc_schematic_cli(int argc, char **argv); /* "schematic" */

#endif
