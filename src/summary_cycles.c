/* ferrocirc — cycle analysis in the summary: valves and tracked elements cycle by cycle,
 * pulsatility, wall shear of culture regions, blowouts and pressure limits.
 *
 * Definitions (per cycle of period T, q > 0 from -> to):
 *   V_fwd = int max(q, 0) dt = V_net + V_back, V_back = int max(-q, 0) dt,
 *   regurgitant fraction RF = V_back / V_fwd;
 *   pulsatility index PI = (max - min) / mean (Gosling & King 1974, applied to pressure and flow);
 *   wall shear tau = k q with k from the channel's cross-section (parallel-plate / Poiseuille
 *   formulas, elements/channel.c); TAWSS = (1/T) int |tau| dt = k (V_net + 2 V_back) / T;
 *   OSI = (1/2)(1 - |int tau dt| / int |tau| dt) (Ku et al. 1985, Arteriosclerosis 5:293);
 *   blowout margin = peak |dp| / blowout pressure (>= 1: blown). */
#include <math.h>
#include <stdio.h>

#include "json_write.h"
#include "net.h"
#include "summary_int.h"

int fci_summary_tracked(const fc_net *net, int i)
{
  if (net->elem[i].nRoot > 0 && net->elem[i].nTerm == 2) return 1;
  for (int k = 0; k < net->report.nTrack; k++)
    if (net->report.track[k] == i) return 1;
  return 0;
}

void fci_summary_cycle(const fc_net *net, const fc_sim_result *r, int c, int i, fci_cycle_row *o)
{
  size_t k = fc_sim_cycle_at(r, c, i);
  fci_info info = {.no_text = 1};
  const fc_elem *e = &net->elem[i];
  if (e->type->xInfo) e->type->xInfo(e, &net->fluid, &info);
  o->v_net = r->cyc_v_net[k];
  o->v_back = r->cyc_v_back[k];
  o->v_fwd = o->v_net + o->v_back;
  o->rf = o->v_fwd > 0 ? o->v_back / o->v_fwd : NAN;
  o->open_frac = r->cyc_open[k] / r->cycle_period;
  o->dp_fwd = r->cyc_dp_max[k];
  o->dp_rev = -r->cyc_dp_min[k];
  double mf = info.blowout_forward > 0 ? o->dp_fwd / info.blowout_forward : 0;
  double mr = info.blowout_reverse > 0 ? o->dp_rev / info.blowout_reverse : 0;
  o->margin = (info.blowout_forward > 0 || info.blowout_reverse > 0) ? fmax(mf, mr) : NAN;
  double qmean = o->v_net / r->cycle_period;
  o->pi_q = fabs(qmean) > 0 ? (r->cyc_q_max[k] - r->cyc_q_min[k]) / fabs(qmean) : NAN;
  o->tawss = info.shear_per_flow * (o->v_net + 2 * o->v_back) / r->cycle_period;
  o->tau_peak = info.shear_per_flow * fmax(fabs(r->cyc_q_max[k]), fabs(r->cyc_q_min[k]));
  double absint = o->v_net + 2 * o->v_back;
  o->osi = absint > 0 ? 0.5 * (1 - fabs(o->v_net) / absint) : NAN;
}

void fci_summary_print_alerts(FILE *f, const fc_net *net, const fc_sim_result *r, const fc_report_units *u)
{
  for (int i = 0; i < net->nElem; i++)
    if (r->blown_elem && r->blown_elem[i])
      fprintf(f, "!!! BLOWOUT: valve \"%s\" was blown out at t = %.6g s; it no longer seals "
              "(flow passes both ways). Peak |dp| exceeded its blowout pressure.\n",
              net->elem[i].id, r->blown_time[i]);
  for (int n = 0; n < net->nNode; n++)
    if (r->p_max[n] > net->report.pressure_limit)
      fprintf(f, "!!! PRESSURE LIMIT: node \"%s\" peaks at %.5g %s, above the limit %.5g %s.\n",
              net->nodeName[n], r->p_max[n] * u->pf, u->p_unit, net->report.pressure_limit * u->pf,
              u->p_unit);
  if (r->chatter_holds)
    fprintf(f, "Note: valve \"%s\" chattered (first at t = %.6g s); %d hold(s) of one window "
            "were applied (simulation.chatter.action = continue).\n",
            net->elem[r->chatter_elem].id, r->chatter_time, r->chatter_holds);
}

void fci_summary_print_cycles(FILE *f, const fc_net *net, const fc_sim_result *r,
                              const fc_report_units *u)
{
  const double vf = 1e9; /* m^3 -> uL */
  if (r->nCycle == 0) return;
  if (r->periodic_cycle)
    fprintf(f, "Periodic steady state after %d cycles (net volumes changed by < %g).\n",
            r->periodic_cycle, net->sim.until_periodic);
  else if (net->sim.until_periodic > 0)
    fprintf(f, "!!! Not periodic within %d cycles (tolerance %g).\n", r->nCycle, net->sim.until_periodic);
  int last = r->nCycle - 1;
  for (int i = 0; i < net->nElem; i++) {
    if (!fci_summary_tracked(net, i)) continue;
    fprintf(f, "\n%s \"%s\", per cycle: V_fwd, V_back, V_net [uL], RF, open, peak dp fwd/rev [%s], "
            "blowout margin\n", net->elem[i].type->name, net->elem[i].id, u->p_unit);
    int step = r->nCycle > 12 ? r->nCycle / 10 : 1;
    for (int c = 0; c <= last; c++) {
      if (c % step && c != last) continue;
      fci_cycle_row o;
      fci_summary_cycle(net, r, c, i, &o);
      fprintf(f, "  %s%4d %10.5g %10.5g %10.5g %8.4f %6.3f %9.4g %9.4g %7.3f\n",
              c == last ? "last" : "    ", c + 1, o.v_fwd * vf, o.v_back * vf, o.v_net * vf, o.rf,
              o.open_frac, o.dp_fwd * u->pf, o.dp_rev * u->pf, o.margin);
    }
  }
  fprintf(f, "\nLast complete cycle (%d): pulsatility index (max - min)/mean\n", last + 1);
  for (int n = 0; n < net->nNode; n++) {
    size_t k = (size_t)last * r->nNode + n;
    double m = r->cyc_p_mean[k];
    if (m != 0 && !isnan(m)) fprintf(f, "  p:%-16s PI %8.4g  (min %.5g, mean %.5g, max %.5g %s)\n",
                        net->nodeName[n], (r->cyc_p_max[k] - r->cyc_p_min[k]) / fabs(m),
                        r->cyc_p_min[k] * u->pf, m * u->pf, r->cyc_p_max[k] * u->pf, u->p_unit);
  }
  for (int i = 0; i < net->nElem; i++) {
    if (net->elem[i].nTerm != 2 || isnan(r->cyc_v_net[fc_sim_cycle_at(r, last, i)])) continue;
    fci_cycle_row o;
    fci_summary_cycle(net, r, last, i, &o);
    fprintf(f, "  q:%-16s PI %8.4g\n", net->elem[i].id, o.pi_q);
    if (!net->elem[i].culture) continue;
    fprintf(f, "    culture region: TAWSS %.4g Pa, peak %.4g Pa, OSI %.4f\n", o.tawss, o.tau_peak, o.osi);
    if (o.tawss < net->report.shear_lo || o.tau_peak > net->report.shear_hi)
      fprintf(f, "    !!! wall shear leaves the range %.4g..%.4g Pa set in report.shear_range\n",
              net->report.shear_lo, net->report.shear_hi);
  }
}

static void json_row(fci_jw *w, const fci_cycle_row *o)
{
  fci_jw_number(w, "volume_forward_m3", o->v_fwd);
  fci_jw_number(w, "volume_back_m3", o->v_back);
  fci_jw_number(w, "volume_net_m3", o->v_net);
  if (isfinite(o->rf)) fci_jw_number(w, "regurgitant_fraction", o->rf);
  fci_jw_number(w, "open_fraction", o->open_frac);
  fci_jw_number(w, "peak_dp_forward_Pa", o->dp_fwd);
  fci_jw_number(w, "peak_dp_reverse_Pa", o->dp_rev);
  if (isfinite(o->margin)) fci_jw_number(w, "blowout_margin", o->margin);
  if (isfinite(o->pi_q)) fci_jw_number(w, "pulsatility_flow", o->pi_q);
}

void fci_summary_json_cycles(fci_jw *w, const fc_net *net, const fc_sim_result *r)
{
  fci_jw_array(w, "tracked");
  for (int i = 0; i < net->nElem; i++) {
    if (!fci_summary_tracked(net, i)) continue;
    fci_jw_object(w, NULL);
    fci_jw_string(w, "id", net->elem[i].id);
    fci_jw_bool(w, "blown", r->blown_elem[i]);
    if (r->blown_elem[i]) fci_jw_number(w, "blown_at_s", r->blown_time[i]);
    fci_jw_array(w, "cycles");
    for (int c = 0; c < r->nCycle; c++) {
      fci_cycle_row o;
      fci_summary_cycle(net, r, c, i, &o);
      fci_jw_object(w, NULL);
      json_row(w, &o);
      fci_jw_end(w);
    }
    fci_jw_end(w);
    fci_jw_end(w);
  }
  fci_jw_end(w);
  fci_jw_number(w, "periodic_cycle", r->periodic_cycle);
  fci_jw_number(w, "chatter_holds", r->chatter_holds);
  if (r->nCycle == 0) return;
  int last = r->nCycle - 1;
  fci_jw_array(w, "last_cycle_nodes");
  for (int n = 0; n < net->nNode; n++) {
    size_t k = (size_t)last * r->nNode + n;
    fci_jw_object(w, NULL);
    fci_jw_string(w, "name", net->nodeName[n]);
    fci_jw_number(w, "p_min_Pa", r->cyc_p_min[k]);
    if (!isnan(r->cyc_p_mean[k])) fci_jw_number(w, "p_mean_Pa", r->cyc_p_mean[k]);
    fci_jw_number(w, "p_max_Pa", r->cyc_p_max[k]);
    if (r->cyc_p_mean[k] != 0 && !isnan(r->cyc_p_mean[k]))
      fci_jw_number(w, "pulsatility", (r->cyc_p_max[k] - r->cyc_p_min[k]) / fabs(r->cyc_p_mean[k]));
    fci_jw_end(w);
  }
  fci_jw_end(w);
  fci_jw_array(w, "last_cycle_elements");
  for (int i = 0; i < net->nElem; i++) {
    if (net->elem[i].nTerm != 2 || isnan(r->cyc_v_net[fc_sim_cycle_at(r, last, i)])) continue;
    fci_cycle_row o;
    fci_summary_cycle(net, r, last, i, &o);
    fci_jw_object(w, NULL);
    fci_jw_string(w, "id", net->elem[i].id);
    json_row(w, &o);
    if (net->elem[i].culture) {
      fci_jw_number(w, "tawss_Pa", o.tawss);
      fci_jw_number(w, "wss_peak_Pa", o.tau_peak);
      if (isfinite(o.osi)) fci_jw_number(w, "osi", o.osi);
    }
    fci_jw_end(w);
  }
  fci_jw_end(w);
}
