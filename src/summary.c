/* ferrocirc — run summary (see summary.h). */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>

#include "ferrocirc/summary.h"
#include "net.h"
#include "summary_int.h"

const char *const fc_cautions_text =
  "Cautions: ferrocirc is a design aid built on idealised lumped models; confirm flows, cracking\n"
  "and blowout pressures on the bench before use with cells. Keep peak (not mean) pressures\n"
  "below the bonding and connector limits of your chip. Strong NdFeB magnets pinch and shatter\n"
  "and disturb implanted medical devices (keep them outside the 0.5 mT contour) and electronics;\n"
  "ferrofluids may be cytotoxic: test the exact fluid with your cells. Follow your institution's\n"
  "biosafety, chemical-safety and local rules. Not for clinical use.\n";

void fc_summary_print(FILE *f, const fc_net *net, const fc_sim_result *r, const fc_report_units *u)
{
  const double vf = 1e9; /* m^3 -> uL */
  fci_summary_print_alerts(f, net, r, u);
  fprintf(f, "%s%s%s simulated %.6g s", net->title[0] ? "\"" : "", net->title,
          net->title[0] ? "\"" : "network", r->t_end);
  if (r->cycle_period > 0) fprintf(f, " (%d cycles of %.6g s)", r->nCycle, r->cycle_period);
  fprintf(f, "\n\nElements             mean [%s]  min [%s]  max [%s]  net [uL]  backflow [uL]\n",
          u->q_unit, u->q_unit, u->q_unit);
  for (int i = 0; i < net->nElem; i++) {
    if (isnan(r->q_mean[i])) continue;
    fprintf(f, "  %-18s %12.5g %10.5g %10.5g %10.5g %12.5g\n", net->elem[i].id,
            r->q_mean[i] * u->qf, r->q_min[i] * u->qf, r->q_max[i] * u->qf, r->v_net[i] * vf,
            r->v_back[i] * vf);
  }
  fprintf(f, "\nNodes                min [%s]  mean [%s]  max [%s]\n", u->p_unit, u->p_unit, u->p_unit);
  for (int n = 0; n < net->nNode; n++)
    fprintf(f, "  %-18s %10.5g %11.5g %10.5g\n", net->nodeName[n], r->p_min[n] * u->pf,
            r->p_mean[n] * u->pf, r->p_max[n] * u->pf);
  fci_summary_print_cycles(f, net, r, u);
  const fc_sim_stats *s = &r->stats;
  fprintf(f, "\nSolver: %ld steps, %ld right-hand sides, %ld Newton-matrix factorisations, %ld linear "
          "iterations, %ld events, %.3g s wall\n\n", s->steps, s->rhs_evals, s->prec_setups,
          s->lin_iters, s->events, s->wall_seconds);
  fputs(fc_cautions_text, f);
}

static cJSON *num(cJSON *o, const char *k, double v)
{
  return isfinite(v) ? cJSON_AddNumberToObject(o, k, v) : cJSON_AddNullToObject(o, k);
}

char *fc_summary_json(const fc_net *net, const fc_sim_result *r)
{
  cJSON *root = cJSON_CreateObject(), *els, *nodes, *st;
  if (!root) return NULL;
  cJSON_AddStringToObject(root, "format", "ferrocirc-summary/1");
  cJSON_AddStringToObject(root, "title", net->title);
  num(root, "t_end_s", r->t_end);
  num(root, "cycle_period_s", r->cycle_period);
  cJSON_AddNumberToObject(root, "cycles", r->nCycle);
  cJSON_AddItemToObject(root, "elements", els = cJSON_CreateArray());
  for (int i = 0; els && i < net->nElem; i++) {
    cJSON *e = cJSON_CreateObject();
    if (!e) break;
    cJSON_AddItemToArray(els, e);
    cJSON_AddStringToObject(e, "id", net->elem[i].id);
    cJSON_AddStringToObject(e, "type", net->elem[i].type->name);
    if (isnan(r->q_mean[i])) continue;
    num(e, "q_mean_m3s", r->q_mean[i]);
    num(e, "q_min_m3s", r->q_min[i]);
    num(e, "q_max_m3s", r->q_max[i]);
    num(e, "volume_net_m3", r->v_net[i]);
    num(e, "volume_back_m3", r->v_back[i]);
  }
  cJSON_AddItemToObject(root, "nodes", nodes = cJSON_CreateArray());
  for (int n = 0; nodes && n < net->nNode; n++) {
    cJSON *o = cJSON_CreateObject();
    if (!o) break;
    cJSON_AddItemToArray(nodes, o);
    cJSON_AddStringToObject(o, "name", net->nodeName[n]);
    num(o, "p_min_Pa", r->p_min[n]);
    num(o, "p_mean_Pa", r->p_mean[n]);
    num(o, "p_max_Pa", r->p_max[n]);
    num(o, "volume_stored_m3", r->v_stored[n]);
    num(o, "volume_inflow_m3", r->v_inflow[n]);
  }
  cJSON_AddItemToObject(root, "solver", st = cJSON_CreateObject());
  if (st) {
    const fc_sim_stats *s = &r->stats;
    cJSON_AddNumberToObject(st, "steps", (double)s->steps);
    cJSON_AddNumberToObject(st, "rhs_evals", (double)s->rhs_evals);
    cJSON_AddNumberToObject(st, "prec_setups", (double)s->prec_setups);
    cJSON_AddNumberToObject(st, "lin_iters", (double)s->lin_iters);
    cJSON_AddNumberToObject(st, "events", (double)s->events);
    cJSON_AddNumberToObject(st, "restarts", (double)s->restarts);
    cJSON_AddNumberToObject(st, "nonlin_iters", (double)s->nonlin_iters);
    cJSON_AddNumberToObject(st, "err_test_fails", (double)s->err_test_fails);
    cJSON_AddNumberToObject(st, "conv_fails", (double)s->conv_fails);
    cJSON_AddNumberToObject(st, "root_evals", (double)s->root_evals);
    cJSON_AddNumberToObject(st, "factorizations", (double)s->factorizations);
    cJSON_AddNumberToObject(st, "wall_seconds", s->wall_seconds);
  }
  fci_summary_json_cycles(root, net, r);
  char *txt = cJSON_Print(root);
  cJSON_Delete(root);
  return txt;
}
