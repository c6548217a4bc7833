/* ferrocirc — the metrics of one run that a design study tabulates (one CSV row per point).
 *
 * Per tracked element (valves, and ids listed in report.elements), over the last complete
 * cycle: net and backflow volume, regurgitant fraction, fraction open; over all cycles: peak
 * |dp| and blowout margin (peak |dp| / blowout pressure), and whether it blew out. Per culture
 * channel: time-averaged and peak wall shear stress, flow pulsatility. Network-wide: the worst
 * regurgitant fraction and blowout margin (the usual design limits), the highest node pressure
 * and pressure pulsatility, cycles to periodic steady state, solver counts (not wall time, so
 * that rows are the same bytes on every machine and for any number of jobs). Definitions as in
 * src/summary_cycles.c. */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "net.h"
#include "study_int.h"
#include "summary_int.h"

enum { PER_TRACK = 7, PER_CULTURE = 3, GLOBAL = 8 };

static int tracked_count(const fc_net *net, int *nc)
{
  int nt = 0;
  *nc = 0;
  for (int i = 0; i < net->nElem; i++) {
    if (fci_summary_tracked(net, i)) nt++;
    if (net->elem[i].culture && net->elem[i].nTerm == 2) (*nc)++;
  }
  return nt;
}

static int add(fci_metrics *m, const char *fmt, const char *id, const char *unit)
{
  char buf[320];
  int k = snprintf(buf, sizeof buf, fmt, id);
  if (unit) snprintf(buf + k, sizeof buf - (size_t)k, " [%s]", unit);
  if (!(m->name[m->n] = fc_strdup(buf))) return FC_ENOMEM;
  m->n++;
  return FC_OK;
}

int fci_metrics_columns(const fc_net *net, const fc_units *u, fci_metrics *m, fc_error *err)
{
  int nc, nt = tracked_count(net, &nc), cap = PER_TRACK * nt + PER_CULTURE * nc + GLOBAL, rc = 0;
  const char *pu = net->pressure_unit;
  (void)u;
  memset(m, 0, sizeof *m);
  m->name = fc_calloc((size_t)cap, sizeof *m->name);
  m->value = fc_calloc((size_t)cap, sizeof *m->value);
  if (!m->name || !m->value) goto oom;
  for (int i = 0; i < net->nElem && !rc; i++) {
    const char *id = net->elem[i].id;
    if (fci_summary_tracked(net, i))
      rc = add(m, "vnet:%s", id, "uL") || add(m, "vback:%s", id, "uL") || add(m, "rf:%s", id, NULL) ||
           add(m, "open:%s", id, NULL) || add(m, "peak_dp:%s", id, pu) ||
           add(m, "margin:%s", id, NULL) || add(m, "blown:%s", id, NULL);
    if (!rc && net->elem[i].culture && net->elem[i].nTerm == 2)
      rc = add(m, "tawss:%s", id, "Pa") || add(m, "wss_peak:%s", id, "Pa") || add(m, "pi_q:%s", id, NULL);
  }
  if (!rc)
    rc = add(m, "rf_max", "", NULL) || add(m, "margin_max", "", NULL) ||
         add(m, "p_peak_max", "", pu) || add(m, "pi_p_max", "", NULL) ||
         add(m, "periodic_cycle", "", NULL) || add(m, "steps", "", NULL) ||
         add(m, "rhs_evals", "", NULL) || add(m, "events", "", NULL);
  if (!rc) return FC_OK;
oom:
  fci_metrics_free(m);
  return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
}

void fci_metrics_free(fci_metrics *m)
{
  for (int k = 0; m->name && k < m->n; k++) fc_free(m->name[k]);
  fc_free(m->name);
  fc_free(m->value);
  memset(m, 0, sizeof *m);
}

static double pmax(double a, double b) { return isnan(a) ? b : isnan(b) ? a : fmax(a, b); }

void fci_metrics_values(const fc_net *net, const fc_sim_result *r, fci_metrics *m)
{
  double pf, vf = 1e9, rfmax = NAN, mgmax = NAN, ppk = -INFINITY, pimax = NAN;
  int k = 0, last = r->nCycle - 1;
  fc_units_out_factor(net->units, net->pressure_unit, FC_DIM_PRESSURE, &pf, "", NULL);
  for (int i = 0; i < net->nElem; i++) {
    fci_cycle_row w = {0};
    int tr = fci_summary_tracked(net, i), cu = net->elem[i].culture && net->elem[i].nTerm == 2;
    if ((tr || cu) && last >= 0) fci_summary_cycle(net, r, last, i, &w);
    if (tr) {
      double peak = NAN, margin = NAN;
      for (int c = 0; c <= last; c++) {
        fci_cycle_row o;
        fci_summary_cycle(net, r, c, i, &o);
        peak = pmax(peak, fmax(o.dp_fwd, o.dp_rev));
        margin = pmax(margin, o.margin);
      }
      int ok = last >= 0;
      m->value[k++] = ok ? w.v_net * vf : NAN;
      m->value[k++] = ok ? w.v_back * vf : NAN;
      m->value[k++] = ok ? w.rf : NAN;
      m->value[k++] = ok ? w.open_frac : NAN;
      m->value[k++] = peak * pf;
      m->value[k++] = margin;
      m->value[k++] = r->blown_elem[i];
      if (net->elem[i].nRoot > 0) { rfmax = pmax(rfmax, ok ? w.rf : NAN); mgmax = pmax(mgmax, margin); }
    }
    if (cu) {
      m->value[k++] = last >= 0 ? w.tawss : NAN;
      m->value[k++] = last >= 0 ? w.tau_peak : NAN;
      m->value[k++] = last >= 0 ? w.pi_q : NAN;
    }
  }
  for (int n = 0; n < net->nNode; n++) {
    if (r->p_max[n] > ppk) ppk = r->p_max[n];
    if (last < 0) continue;
    size_t c = (size_t)last * r->nNode + n;
    double mean = r->cyc_p_mean[c];
    /* A node whose mean is ~0 against its swing (an AC-driven node) has no meaningful PI. */
    if (fabs(mean) > 1e-3 * (r->cyc_p_max[c] - r->cyc_p_min[c]) && mean != 0)
      pimax = pmax(pimax, (r->cyc_p_max[c] - r->cyc_p_min[c]) / fabs(mean));
  }
  m->value[k++] = rfmax;
  m->value[k++] = mgmax;
  m->value[k++] = ppk * pf;
  m->value[k++] = pimax;
  m->value[k++] = r->periodic_cycle;
  m->value[k++] = (double)r->stats.steps;
  m->value[k++] = (double)r->stats.rhs_evals;
  m->value[k++] = (double)r->stats.events;
}

int fci_metrics_find(const fci_metrics *m, const char *name)
{
  if (!strcmp(name, "regurgitant_fraction")) name = "rf_max";
  else if (!strcmp(name, "blowout_margin")) name = "margin_max";
  else if (!strcmp(name, "peak_pressure")) name = "p_peak_max";
  size_t n = strlen(name);
  for (int k = 0; k < m->n; k++)
    if (!strncmp(m->name[k], name, n) && (m->name[k][n] == '\0' || m->name[k][n] == ' ')) return k;
  return -1;
}
