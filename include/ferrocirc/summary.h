/* ferrocirc — the run summary: printed (report units) and JSON (SI). */
#ifndef FERROCIRC_SUMMARY_H
#define FERROCIRC_SUMMARY_H

#include <stdio.h>

#include "ferrocirc/network.h"
#include "ferrocirc/sim.h"

typedef struct fc_report_units {
  const char *p_unit, *q_unit; /* names */
  double pf, qf;               /* SI -> unit factors */
} fc_report_units;

/* Human-readable summary, ending with the usual cautions. */
void fc_summary_print(FILE *f, const fc_net *net, const fc_sim_result *r, const fc_report_units *u);

/* Writes the summary in SI as JSON ("format": "ferrocirc-summary/1") to f as it is produced:
 * no document tree is built, so memory does not grow with the network. Numbers read back to
 * the same double; non-finite ones are null. 0 on success, -1 if the stream reported an error. */
int fc_summary_json_write(FILE *f, const fc_net *net, const fc_sim_result *r);

/* The cautions printed at the end of every report. */
extern const char *const fc_cautions_text;

#endif
