/* ferrocirc — command line (src/cli.c dispatch and check, src/cli_run.c run and demo). */
#ifndef FERROCIRC_CLI_H
#define FERROCIRC_CLI_H

#include "ferrocirc/error.h"
#include "ferrocirc/network.h"
#include "ferrocirc/units.h"

int fci_cli_main(int argc, char **argv);
int fci_cli_run(int argc, char **argv);   /* "run" */
int fci_cli_demo(int argc, char **argv);  /* "demo" */
int fci_cli_check(int argc, char **argv); /* "check" */
int fci_cli_sweep(int argc, char **argv); /* "sweep" (src/cli_sweep.c) */
int fci_cli_merge(int argc, char **argv); /* "merge" */
/* Parse the value of option opt as a whole decimal integer in [lo, hi]; FC_EUSAGE otherwise. */
int fci_cli_long(const char *opt, const char *text, long lo, long hi, long *out, fc_error *err);
/* Open the unit system, run body (which returns an exit status), close it; a failure to open
 * is reported here. */
int fci_cli_with_units(int (*body)(const void *args, const fc_units *u), const void *args);
/* Print err to stderr as "ferrocirc: FILE:LINE:COL: PATH: MESSAGE"; returns its exit status. */
int fci_cli_report(const fc_error *err);
/* The embedded demo network (src/demo.c). */
extern const char fci_demo_network[];

#endif
