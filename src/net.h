/* ferrocirc — internal layout of a loaded network (shared by load, assemble, sim, summary). */
#ifndef FERROCIRC_NET_H
#define FERROCIRC_NET_H

#include "elem.h"
#include "ferrocirc/network.h"

enum { FC_INIT_REST = 0, FC_INIT_STEADY = 1 };

/* Newton solves (simulation.linear_solver); the order of the option's names. */
enum { FCI_LS_AUTO = 0, FCI_LS_DIRECT, FCI_LS_ITERATIVE };

typedef struct fci_sim_opts {
  double duration;         /* end time [s] (resolved from cycles if given) */
  double cycles;           /* number of cycles requested, 0 if duration given */
  double cycle_period;     /* period of one cycle [s], 0 if no periodic source */
  double sample_interval;  /* output spacing [s] */
  double rel_tol;          /* CVODE relative tolerance */
  double abs_tol_p;        /* absolute tolerance for pressures [Pa] */
  double abs_tol_q;        /* absolute tolerance for flow states [m^3/s] */
  double abs_tol_v;        /* absolute tolerance for volume quadratures [m^3] */
  double max_step;         /* 0 = no limit [s] */
  int    initial;          /* FC_INIT_REST or FC_INIT_STEADY */
  double until_periodic;   /* stop when cycle net volumes change by less than this (relative);
                              0 = run the full duration */
  int    chatter_max;      /* switches of one element within chatter_window that count as chatter */
  double chatter_window;   /* [s] */
  int    chatter_continue; /* 1: hold the valve open for one window and go on; 0: stop (exit 3) */
  int    linear_solver;    /* FCI_LS_*: Newton solves direct, iterative or chosen */
} fci_sim_opts;

typedef struct fci_report_opts {
  int    *track;           /* element indices given in report.elements (nTrack) */
  int     nTrack;
  int     tracked_only;    /* report.statistics "tracked": flow statistics and mean pressures only
                              for tracked elements, report.nodes and their terminals */
  int    *nodes;           /* node indices given in report.nodes (nNodes) */
  int     nNodes;
  double  shear_lo, shear_hi;   /* report.shear_range [Pa]; 0, INFINITY if not given */
  double  pressure_limit;       /* report.pressure_limit [Pa]; INFINITY if not given */
} fci_report_opts;

struct fc_net {
  char        *title;          /* "" if none */
  char        *file;           /* file name for messages */
  fci_fluid    fluid;          /* SI */
  int          nNode;
  char       **nodeName;       /* owned */
  int          nElem;
  fc_elem     *elem;           /* owned, each with owned id/path/param */
  fci_sim_opts sim;
  fci_report_opts report;
  char         pressure_unit[32]; /* report units */
  char         flow_unit[32];
  const fc_units *units;       /* borrowed */
};

/* Parse the "fluid", "simulation" and "report" sections (src/net_opts.c). */
int fci_net_parse_fluid(fc_net *net, const struct cJSON *j, const fci_parse_ctx *ctx, fc_error *err);
int fci_net_parse_sim(fc_net *net, const struct cJSON *j, const fci_parse_ctx *ctx, fc_error *err);
int fci_net_parse_report(fc_net *net, const struct cJSON *j, const fci_parse_ctx *ctx, fc_error *err);
/* Parse the "elements" array (src/net_elems.c). */
int fci_net_parse_elements(fc_net *net, const struct cJSON *j, const fci_parse_ctx *ctx, fc_error *err);
/* Parse a JSON buffer with line/column on syntax errors (src/json_util.c). */
int fci_json_parse(const char *buf, size_t len, const char *name, struct cJSON **out, fc_error *err);
/* Read a whole file with a size limit (src/json_util.c). Caller frees *buf with fc_free. */
int fci_read_file(const char *file, size_t max_bytes, char **buf, size_t *len, fc_error *err);
/* Line and column (1-based) of byte offset `off` in buf. */
void fci_line_col(const char *buf, size_t off, int *line, int *col);

#endif
