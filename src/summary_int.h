/* ferrocirc — internals shared by src/summary.c and src/summary_cycles.c. */
#ifndef FERROCIRC_SUMMARY_INT_H
#define FERROCIRC_SUMMARY_INT_H

#include <stdio.h>

#include "ferrocirc/summary.h"

typedef struct fci_cycle_row {
  double v_fwd, v_back, v_net;   /* [m^3] */
  double rf;                     /* regurgitant fraction V_back / V_fwd */
  double open_frac;              /* fraction of the cycle in a nonzero mode */
  double dp_fwd, dp_rev;         /* peak p(from)-p(to) and p(to)-p(from) [Pa] */
  double margin;                 /* peak |dp| / blowout, NaN if no blowout pressure */
  double pi_q;                   /* flow pulsatility index */
  double tawss, tau_peak, osi;   /* wall shear of a culture region [Pa], 0 if unknown */
} fci_cycle_row;

/* 1 if element i gets a cycle table: a valve (has modes) or listed in report.elements. */
int fci_summary_tracked(const fc_net *net, int i);
/* Row of cycle c for element i (two-terminal). */
void fci_summary_cycle(const fc_net *net, const fc_sim_result *r, int c, int i, fci_cycle_row *o);
/* Blowouts, pressure-limit violations and chatter, printed first. */
void fci_summary_print_alerts(FILE *f, const fc_net *net, const fc_sim_result *r,
                              const fc_report_units *u);
void fci_summary_print_cycles(FILE *f, const fc_net *net, const fc_sim_result *r,
                              const fc_report_units *u);
/* Write the members "tracked", "periodic_cycle", "chatter_holds", "last_cycle_nodes" and
 * "last_cycle_elements" into the open summary object. */
struct fci_jw;
void fci_summary_json_cycles(struct fci_jw *w, const fc_net *net, const fc_sim_result *r);

#endif
