/* ferrocirc — command-line dispatch and `check`. */
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "ferrocirc/plot.h"
#include "ferrocirc/units.h"
#include "ferrocirc/valve.h"
#include "net.h"
#include "sys.h"


static const char usage[] =
  "usage: ferrocirc COMMAND [ARGS]\n"
  "  run NETWORK.json [-o OUT.csv] [--summary OUT.json] [--events OUT.csv]\n"
  "      [--pressure-unit U] [--flow-unit U] [--keep-partial] [--quiet]\n"
  "                       simulate a network, write the time series and a summary\n"
  "  check NETWORK.json   validate; list nodes, elements, resistances, time constants\n"
  "  demo [-o demo.csv]   run the built-in organ-on-chip demo network (--print shows it)\n"
  "  sweep NETWORK.json --vary PATH=FROM..TO [--steps N] [--vary ...] -o OUT.csv\n"
  "  sweep NETWORK.json --monte-carlo K [--seed S] -o OUT.csv   [--jobs N] [--shard I/N]\n"
  "                       design studies: one row of metrics per point (docs/design-studies.md)\n"
  "  merge SHARD.csv... -o OUT.csv [--stats NETWORK.json]\n"
  "                       join the shards of a study into the bytes of an unsharded run\n"
  "  valve DESIGN.json [--json] [--unit U] [--profile OUT.csv]\n"
  "        [--vary PATH=FROM..TO --steps N -o OUT.csv]\n"
  "                       cracking, reseat and blowout pressures of a ferrofluid valve design\n"
  "  valve DESIGN.json --target Q=VALUE --adjust KEY [--range A..B]\n"
  "                       the value of KEY that meets a target pressure (Brent's method)\n"
  "  valve calibrate MEAS.csv --fit PATH[,PATH...] [--cross-validate] [-o OUT.json]\n"
  "                       fit design values to bench measurements (Levenberg-Marquardt)\n"
  "  plot RUN.csv -o OUT.svg [--columns p:NODE,q:ID] [--cycles last:N --period T]\n"
  "       [--from T0 --to T1] [--title TEXT]\n"
  "  plot SWEEP.csv --x COLUMN --y COLUMN[,COLUMN] -o OUT.svg   (or a valve --profile CSV)\n"
  "                       SVG pictures of results\n"
  "  schematic NETWORK.json -o OUT.dot\n"
  "                       the circuit as a Graphviz graph (render: dot -Tsvg OUT.dot)\n"
  "Exit status: 0 ok, 1 other failure (I/O), 2 bad input or usage, 3 integrator failure,\n"
  "130/143 stopped by SIGINT/SIGTERM (outputs removed, or kept as .partial with --keep-partial).\n";

int fci_cli_long(const char *opt, const char *text, long lo, long hi, long *out, fc_error *err)
{
  char *end;
  errno = 0;
  long v = strtol(text, &end, 10);
  if (end == text || *end || errno || v < lo || v > hi)
    return fc_fail(err, FC_EUSAGE, NULL, "%s expects an integer from %ld to %ld, got \"%s\"", opt,
                   lo, hi, text);
  *out = v;
  return FC_OK;
}

int fci_cli_with_units(int (*body)(const void *args, const fc_units *u), const void *args)
{
  fc_units *u = NULL;
  fc_error e;
  fc_error_clear(&e);
  if (fc_units_open(&u, &e)) return fci_cli_report(&e);
  int st = body(args, u);
  fc_units_free(u);
  return st;
}

int fci_cli_report(const fc_error *err)
{
  char buf[1400];
  fprintf(stderr, "ferrocirc: %s\n", fc_error_format(err, buf, sizeof buf));
  return fc_error_exit_status(err->code);
}

static void check_print(const fc_net *net, const fci_sys *s)
{
  printf("%s: %d nodes (%d compliant, %d algebraic, %d imposed), %d elements, %d states\n",
         net->file, net->nNode, s->ns, s->nz, net->nNode - s->ns - s->nz, net->nElem, s->nx);
  printf("\nElements\n");
  for (int i = 0; i < net->nElem; i++) {
    const fc_elem *e = &net->elem[i];
    fci_info info = {0};
    if (e->type->xInfo) e->type->xInfo(e, &net->fluid, &info);
    printf("  %-18s %-16s %s%s%s  %s\n", e->id, e->type->name, net->nodeName[e->node[0]],
           e->nTerm == 2 ? " -> " : "", e->nTerm == 2 ? net->nodeName[e->node[1]] : "", info.text);
  }
  printf("\nCompliant nodes: C [m^3/Pa], local time constant tau = C / (sum of adjacent conductances)\n");
  double tmin = 0, tmax = 0, *G = calloc((size_t)net->nNode, sizeof *G);
  for (int i = 0; G && i < net->nElem; i++) {
    const fc_elem *e = &net->elem[i];
    fci_info info = {0};
    if (e->nTerm != 2 || !e->type->xInfo) continue;
    e->type->xInfo(e, &net->fluid, &info);
    if (info.resistance > 0) {
      G[e->node[0]] += 1 / info.resistance;
      G[e->node[1]] += 1 / info.resistance;
    }
  }
  for (int k = 0; G && k < s->ns; k++) {
    int n = s->xnode[k];
    double C = 0;
    for (int j = s->store_ptr[k]; j < s->store_ptr[k + 1]; j++) {
      fci_info info = {0};
      const fc_elem *e = &net->elem[s->store_el[j]];
      if (e->type->xInfo) e->type->xInfo(e, &net->fluid, &info);
      C += info.compliance;
    }
    double tau = G[n] > 0 ? C / G[n] : 0;
    printf("  %-18s C = %.4g  tau = %.4g s\n", net->nodeName[n], C, tau);
    if (tau > 0 && (tmin == 0 || tau < tmin)) tmin = tau;
    if (tau > tmax) tmax = tau;
  }
  free(G);
  if (tmin > 0) printf("  time constants span %.3g s .. %.3g s (ratio %.3g)\n", tmin, tmax, tmax / tmin);
  printf("\nAlgebraic nodes (no compliance; pressures solved exactly each step):\n ");
  for (int i = 0; i < s->nz; i++) printf(" %s", net->nodeName[s->znode[i]]);
  printf("%s\nOK\n", s->nz ? "" : " (none)");
}

int fci_cli_check(int argc, char **argv)
{
  if (argc != 2) { fputs(usage, stderr); return 2; }
  fc_error err = {0};
  fc_units *u = NULL;
  fc_net *net = NULL;
  fci_sys *s = NULL;
  int rc = fc_units_open(&u, &err);
  if (!rc) rc = fc_net_load(argv[1], u, &net, &err);
  if (!rc && (rc = fci_sys_build(net, &s, &err))) fc_error_set_file(&err, argv[1], 0, 0);
  if (!rc) check_print(net, s);
  int status = rc ? fci_cli_report(&err) : 0;
  fci_sys_free(s);
  fc_net_free(net);
  fc_units_free(u);
  return status;
}

int fci_cli_main(int argc, char **argv)
{
  if (argc < 2 || !strcmp(argv[1], "help") || !strcmp(argv[1], "--help") || !strcmp(argv[1], "-h")) {
    fputs(usage, argc < 2 ? stderr : stdout);
    return argc < 2 ? 2 : 0;
  }
  if (!strcmp(argv[1], "--version")) { printf("ferrocirc 0.1.0\n"); return 0; }
  if (!strcmp(argv[1], "run")) return fci_cli_run(argc - 1, argv + 1);
  if (!strcmp(argv[1], "demo")) return fci_cli_demo(argc - 1, argv + 1);
  if (!strcmp(argv[1], "check")) return fci_cli_check(argc - 1, argv + 1);
  if (!strcmp(argv[1], "sweep")) return fci_cli_sweep(argc - 1, argv + 1);
  if (!strcmp(argv[1], "merge")) return fci_cli_merge(argc - 1, argv + 1);
  if (!strcmp(argv[1], "valve")) return fc_valve_cli(argc - 1, argv + 1);
  if (!strcmp(argv[1], "plot")) return fc_plot_cli(argc - 1, argv + 1);
  if (!strcmp(argv[1], "schematic")) return fc_schematic_cli(argc - 1, argv + 1);
  fprintf(stderr, "ferrocirc: unknown command \"%s\"\n%s", argv[1], usage);
  return 2;
}
