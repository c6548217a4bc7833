/* ferrocirc — run summary (see summary.h). */
#include <math.h>
#include <stdio.h>

#include "ferrocirc/summary.h"
#include "json_write.h"
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
  for (int n = 0; n < net->nNode; n++) {
    if (isnan(r->p_mean[n])) /* not in the report's scope (report.statistics): extremes only */
      fprintf(f, "  %-18s %10.5g %11s %10.5g\n", net->nodeName[n], r->p_min[n] * u->pf, "-",
              r->p_max[n] * u->pf);
    else
      fprintf(f, "  %-18s %10.5g %11.5g %10.5g\n", net->nodeName[n], r->p_min[n] * u->pf,
              r->p_mean[n] * u->pf, r->p_max[n] * u->pf);
  }
  fci_summary_print_cycles(f, net, r, u);
  const fc_sim_stats *s = &r->stats;
  fprintf(f, "\nSolver: %ld steps, %ld right-hand sides, %ld Newton-matrix set-ups (%s), %ld "
          "linear iterations, %ld events, %.3g s wall\n", s->steps, s->rhs_evals, s->prec_setups,
          s->iterative ? "iterative: GMRES with ILU(0)" : "direct", s->lin_iters, s->events,
          s->wall_seconds);
  fprintf(f, "Sparse factorisations: %ld, of them %ld with fixed pivots (diagonally dominant), "
          "%ld by KLU\n\n", s->factorizations, s->fixed_pivot, s->factorizations - s->fixed_pivot);
  fputs(fc_cautions_text, f);
}

int fc_summary_json_write(FILE *f, const fc_net *net, const fc_sim_result *r)
{
  fci_jw w;
  fci_jw_init(&w, f);
  fci_jw_object(&w, NULL);
  fci_jw_string(&w, "format", "ferrocirc-summary/1");
  fci_jw_string(&w, "title", net->title);
  fci_jw_number(&w, "t_end_s", r->t_end);
  fci_jw_number(&w, "cycle_period_s", r->cycle_period);
  fci_jw_number(&w, "cycles", r->nCycle);
  fci_jw_array(&w, "elements");
  for (int i = 0; i < net->nElem; i++) {
    fci_jw_object(&w, NULL);
    fci_jw_string(&w, "id", net->elem[i].id);
    fci_jw_string(&w, "type", net->elem[i].type->name);
    if (!isnan(r->q_mean[i])) {
      fci_jw_number(&w, "q_mean_m3s", r->q_mean[i]);
      fci_jw_number(&w, "q_min_m3s", r->q_min[i]);
      fci_jw_number(&w, "q_max_m3s", r->q_max[i]);
      fci_jw_number(&w, "volume_net_m3", r->v_net[i]);
      fci_jw_number(&w, "volume_back_m3", r->v_back[i]);
    }
    fci_jw_end(&w);
  }
  fci_jw_end(&w);
  fci_jw_array(&w, "nodes");
  for (int n = 0; n < net->nNode; n++) {
    fci_jw_object(&w, NULL);
    fci_jw_string(&w, "name", net->nodeName[n]);
    fci_jw_number(&w, "p_min_Pa", r->p_min[n]);
    if (!isnan(r->p_mean[n])) fci_jw_number(&w, "p_mean_Pa", r->p_mean[n]);
    fci_jw_number(&w, "p_max_Pa", r->p_max[n]);
    fci_jw_number(&w, "volume_stored_m3", r->v_stored[n]);
    if (!isnan(r->v_inflow[n])) fci_jw_number(&w, "volume_inflow_m3", r->v_inflow[n]);
    fci_jw_end(&w);
  }
  fci_jw_end(&w);
  const fc_sim_stats *s = &r->stats;
  fci_jw_object(&w, "solver");
  fci_jw_string(&w, "linear_solver", s->iterative ? "iterative" : "direct");
  fci_jw_number(&w, "steps", (double)s->steps);
  fci_jw_number(&w, "rhs_evals", (double)s->rhs_evals);
  fci_jw_number(&w, "prec_setups", (double)s->prec_setups);
  fci_jw_number(&w, "lin_iters", (double)s->lin_iters);
  fci_jw_number(&w, "events", (double)s->events);
  fci_jw_number(&w, "restarts", (double)s->restarts);
  fci_jw_number(&w, "nonlin_iters", (double)s->nonlin_iters);
  fci_jw_number(&w, "err_test_fails", (double)s->err_test_fails);
  fci_jw_number(&w, "conv_fails", (double)s->conv_fails);
  fci_jw_number(&w, "root_evals", (double)s->root_evals);
  fci_jw_number(&w, "factorizations", (double)s->factorizations);
  fci_jw_number(&w, "fixed_pivot_factorizations", (double)s->fixed_pivot);
  fci_jw_number(&w, "lin_fallbacks", (double)s->lin_fallbacks);
  fci_jw_number(&w, "wall_seconds", s->wall_seconds);
  fci_jw_end(&w);
  fci_summary_json_cycles(&w, net, r);
  fci_jw_end(&w);
  putc('\n', f);
  return fci_jw_finish(&w);
}
