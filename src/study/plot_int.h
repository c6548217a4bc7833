/* ferrocirc — internals of `plot`: a streaming CSV reader and the figure model the SVG writer
 * draws (src/study/plot_*.c). A figure is a stack of panels sharing one x axis. */
#ifndef FERROCIRC_PLOT_INT_H
#define FERROCIRC_PLOT_INT_H

#include <stddef.h>
#include <stdio.h>

#include "ferrocirc/error.h"
#include "ferrocirc/plot.h"

/* ---- CSV reader (plot_csv.c) ---- */
typedef struct fci_csv {
  FILE   *f;
  char   *file;       /* for messages (owned) */
  long    line;       /* 1-based number of the line last read */
  int     nCol;
  char  **name;       /* column name without the unit, e.g. "p:chamber" (owned) */
  char  **unit;       /* unit inside [...], "" if none (owned) */
  int     iErr;       /* index of the "error" column, -1 if none */
  double *val;        /* values of the current row; NaN for empty, "nan" or the error column */
  char   *errText;    /* text of the error column of the current row, "" if empty (in buf) */
  char   *buf;        /* current line (owned) */
  size_t  cap;
  long    dataStart;  /* file offset of the first data row, for rewinding */
  long    dataLine;   /* line number of the header */
} fci_csv;

/* Open a CSV and parse its header ("name [unit]" fields, optionally double-quoted). FC_EIO if
 * it cannot be read, FC_EPARAM (with file and line) for an empty or malformed header. */
int fci_csv_open(const char *file, fci_csv **out, fc_error *err);
/* Read the next data row into c->val. Returns 1 for a row, 0 at the end, <0 on error (err names
 * file, line and column; a row of the wrong width or a non-number is FC_EPARAM). */
int fci_csv_next(fci_csv *c, fc_error *err);
/* Go back to the first data row. */
int fci_csv_rewind(fci_csv *c, fc_error *err);
/* Index of the column named `name` (the unit may be given too: "q:feed [uL/min]"), or -1. */
int fci_csv_find(const fci_csv *c, const char *name);
/* "t, p:a, q:b, ..." (names without units) into buf, cut with "..." when longer; returns buf. */
const char *fci_csv_columns(const fci_csv *c, char *buf, size_t n);
void fci_csv_free(fci_csv *c);

/* ---- Figure model (drawn by plot_svg.c) ---- */
#define FCI_NPALETTE 7  /* line colours */
#define FCI_NSHADE 4    /* valve-open tones */

typedef struct fci_span {
  double x0, x1;      /* an interval of x where something was true (a valve open) */
} fci_span;

typedef struct fci_shade {
  char      label[96];  /* legend text, e.g. "v_in open" */
  int       colour;     /* palette index */
  fci_span *span;       /* owned */
  size_t    n, cap;
} fci_shade;

enum { FCI_LINE = 0, FCI_MARKERS = 1, FCI_BAND = 2 };

typedef struct fci_series {
  char    label[96];
  int     colour;       /* palette index (shade tone index when tone) */
  int     tone;         /* 1: drawn in the valve-open tone, for state lines */
  int     dash;         /* 0 solid, 1 dashed, 2 dotted */
  int     style;        /* FCI_LINE, FCI_MARKERS (line through circles), FCI_BAND (y..y2 filled) */
  double *x, *y, *y2;   /* owned; y2 only for FCI_BAND */
  size_t  n;
  int     breakAt;      /* 1: a decrease of x starts a new polyline (grid sweeps) */
} fci_series;

typedef struct fci_panel {
  char        ylabel[128];  /* e.g. "pressure [mbar]" */
  fci_series *s;            /* owned */
  int         ns;
  int         shaded;       /* 1: draw the figure's shades behind the data */
  int         states;       /* 1: valve state axis (-1 reverse, 0 sealed, 1 forward, 2 blown) */
  int         zero;         /* 1: the y axis includes 0 */
  double     *fail;         /* x of failed points, marked at the bottom (owned) */
  size_t      nFail;
} fci_panel;

typedef struct fci_figure {
  char       title[200];
  char       subtitle[240];
  char       xlabel[96];
  double     x0, x1;        /* x range of the data */
  fci_panel *p;             /* owned */
  int        np;
  fci_shade *shade;         /* owned */
  int        nShade;
} fci_figure;

/* Append an empty panel / series; NULL when out of memory. Pointers stay valid until the next
 * append to the same array. */
fci_panel *fci_fig_panel(fci_figure *fig, const char *ylabel);
fci_series *fci_panel_series(fci_panel *p, const char *label, size_t n);
int fci_shade_add(fci_shade *s, double x0, double x1, double merge_gap);
void fci_fig_free(fci_figure *fig);

/* Write the figure as SVG. Returns FC_OK or FC_EIO. */
int fci_svg_write(FILE *f, const fci_figure *fig, fc_error *err);
/* Escape &, <, >, " for XML text into buf. */
const char *fci_xml_escape(const char *s, char *buf, size_t n);
/* A unit for display: a "u" prefix becomes the micro sign ("uL/min" -> "\xc2\xb5L/min"). */
const char *fci_unit_pretty(const char *u, char *buf, size_t n);

/* ---- Figure builders ---- */
typedef struct fci_plot_args {
  const char *csv, *out, *columns, *cycles, *xcol, *ycols, *title;
  double from, to, period;    /* NaN when not given */
} fci_plot_args;

int fci_plot_trace(fci_csv *c, const fci_plot_args *a, fci_figure *fig, fc_error *err);
int fci_plot_sweep(fci_csv *c, const fci_plot_args *a, fci_figure *fig, fc_error *err);
int fci_plot_profile(fci_csv *c, const fci_plot_args *a, fci_figure *fig, fc_error *err);

/* ---- Schematic layout (schematic_layout.c) ---- */
/* Vertices are the network nodes (0 .. nNode-1) and then the elements (nNode + i). Columns come
 * from the breadth-first distance along the circuit from its first reservoir; a chain longer
 * than max_cols is folded back and forth into rows (boustrophedon), so that a long circuit
 * fits a slide instead of a banner. A one-terminal element takes its node's place. */
typedef struct fci_layout {
  int  nV;
  int *col, *row;   /* per vertex (owned) */
  int  nCol, nRow;
} fci_layout;

struct fc_net;
int fci_layout_make(const struct fc_net *net, int max_cols, fci_layout *out, fc_error *err);
void fci_layout_free(fci_layout *l);

#endif
