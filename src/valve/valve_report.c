/* ferrocirc — what `ferrocirc valve` writes: the printed report with its cautions, the JSON
 * form (SI), the field profile CSV and the parameter-study CSV. Files are written to a temporary
 * file in the target's folder and renamed when complete, so a reader never sees half a file. */
#define _POSIX_C_SOURCE 200809L /* mkstemp, fdopen */
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "ferrocirc/alloc.h"
#include "valve_int.h"

FILE *fci_atomic_open(const char *target, char *tmp, size_t ntmp, fc_error *err)
{
  snprintf(tmp, ntmp, "%s.tmp.XXXXXX", target);
  int fd = mkstemp(tmp);
  if (fd < 0) {
    fc_fail(err, FC_EIO, NULL, "cannot create a temporary file beside %s: %s", target,
            strerror(errno));
    return NULL;
  }
  FILE *f = fdopen(fd, "w");
  if (!f) {
    close(fd);
    remove(tmp);
    fc_fail(err, FC_EIO, NULL, "cannot open %s: %s", tmp, strerror(errno));
  }
  return f;
}

int fci_atomic_close(FILE *f, const char *tmp, const char *target, fc_error *err)
{
  int bad = ferror(f);
  bad |= fclose(f) != 0;
  if (!bad && rename(tmp, target) == 0) return FC_OK;
  int e = errno;
  remove(tmp);
  return fc_fail(err, FC_EIO, NULL, "cannot write %s: %s", target, strerror(e));
}

static const char *cautions[] = {
  "Design aid built on an idealised quasi-static model: confirm cracking, reseat and blowout "
  "pressures on the bench before use with cells; follow local rules.",
  "NdFeB magnets snap together and pinch or crush fingers; they are brittle and chip (wear eye "
  "protection); swallowed magnets are an emergency. Keep wearers of pacemakers and other "
  "implanted devices outside the 0.5 mT contour (ICNIRP 2009); keep magnets away from cards, "
  "instruments and electronics. Plain N grades lose magnetisation above 80 degC: no autoclave.",
  "Ferrofluid carriers and surfactants are usually not cell-compatible: test cytotoxicity and "
  "leaching of the exact fluid with your cells, keep the interface immiscible, follow the safety "
  "data sheet and local waste rules.",
  "Stay below the bonding and connector pressure limits of the chip.",
  NULL
};

static const char *leak_where(double y, double z)
{
  if (isnan(y)) return "whole plug expelled";
  int side = fabs(y) > 0.99, top = z > 0.99, bot = z < 0.01;
  if (side && top) return "along a roof corner";
  if (side && bot) return "along a floor corner";
  if (top) return "along the roof";
  if (bot) return "along the floor";
  return side ? "along a side wall" : "through the middle of the section";
}

/* Distance from a magnet's pole face, along its axis, to the 0.5 mT contour of that magnet alone
 * (ICNIRP 2009: implanted devices are generally unaffected below 0.5 mT); by bisection, since
 * the on-axis field falls monotonically. [m] */
static double contour_05mT(const fci_magnet *m)
{
  double half = m->shape == FCI_MAG_CYLINDER ? 0.5 * m->length
              : 0.5 * fabs(m->size[0] * m->n[0] + m->size[1] * m->n[1] + m->size[2] * m->n[2]);
  double lo = 0.0, hi = 10.0;
  for (int it = 0; it < 200 && hi - lo > 1e-6; it++) {
    double mid = 0.5 * (lo + hi), r[3], B[3] = {0.0, 0.0, 0.0};
    for (int i = 0; i < 3; i++) r[i] = m->c[i] + (half + mid) * m->n[i];
    fci_magnet_add_field(m, r, B);
    if (sqrt(B[0] * B[0] + B[1] * B[1] + B[2] * B[2]) > 0.5e-3) lo = mid;
    else hi = mid;
  }
  return lo;
}

void fci_report_text(FILE *out, const fc_valve_design *d, const char *file,
                     const fc_valve_pressures *p, const char *unit, double k)
{
  fprintf(out, "valve design %s%s%s%s\n", file, d->name[0] ? " (" : "", d->name,
          d->name[0] ? ")" : "");
  fprintf(out, "  forward  (towards +x): crack %10.3f %s   reseat %10.3f %s   leaks %s\n",
          p->crack_forward * k, unit, p->reseat_forward * k, unit,
          leak_where(p->leak_y_forward, p->leak_z_forward));
  fprintf(out, "  reverse  (towards -x): crack %10.3f %s   reseat %10.3f %s   leaks %s\n",
          p->crack_reverse * k, unit, p->reseat_reverse * k, unit,
          leak_where(p->leak_y_reverse, p->leak_z_reverse));
  fprintf(out, "  blowout: %.3f %s (forward %.3f, reverse %.3f)\n", p->blowout * k, unit,
          p->blowout_forward * k, p->blowout_reverse * k);
  fprintf(out, "  differential (reverse - forward crack): %.3f %s", 
          (p->crack_reverse - p->crack_forward) * k, unit);
  if (p->crack_forward > 0.0)
    fprintf(out, "   ratio reverse/forward: %.3f", p->crack_reverse / p->crack_forward);
  fprintf(out, "\n  plug centre at rest x = %.3f mm; at forward crack %.3f mm, at reverse crack "
          "%.3f mm\n", p->x_rest * 1e3, p->x_crack_forward * 1e3, p->x_crack_reverse * 1e3);
  if (!p->sealed)
    fprintf(out, "  WARNING: the plug does not fill the channel where the field is weakest: it "
            "leaks at zero pressure (more ferrofluid, a closer magnet or a lower channel)\n");
  if (p->end_fraction > 0.01)
    fprintf(out, "  note: the field at the channel ends is %.1f %% of its peak; blowout is bounded "
            "by the channel length given\n", 100.0 * p->end_fraction);
  for (int i = 0; i < d->nWarn; i++) fprintf(out, "  note: %s\n", d->warn[i]);
  double far = 0.0;
  for (int i = 0; i < d->nMag; i++) far = fmax(far, contour_05mT(&d->mag[i]));
  fprintf(out, "  0.5 mT contour: about %.0f mm from the pole faces on the magnet axis\n",
          far * 1e3);
  fprintf(out, "Cautions:\n");
  for (int i = 0; cautions[i]; i++) fprintf(out, "  - %s\n", cautions[i]);
}

static void jnum(FILE *out, const char *key, double v, int last)
{
  if (isfinite(v)) fprintf(out, "  \"%s\": %.10g%s\n", key, v, last ? "" : ",");
  else fprintf(out, "  \"%s\": null%s\n", key, last ? "" : ",");
}

void fci_report_json(FILE *out, const fc_valve_design *d, const fc_valve_pressures *p)
{
  fprintf(out, "{\n  \"format\": \"ferrocirc-valve-result/1\",\n");
  fprintf(out, "  \"sealed\": %s,\n", p->sealed ? "true" : "false");
  fprintf(out, "  \"expelled_forward\": %s,\n  \"expelled_reverse\": %s,\n",
          p->expelled_forward ? "true" : "false", p->expelled_reverse ? "true" : "false");
  fprintf(out, "  \"notes\": %d,\n", d->nWarn);
  jnum(out, "crack_forward_Pa", p->crack_forward, 0);
  jnum(out, "crack_reverse_Pa", p->crack_reverse, 0);
  jnum(out, "reseat_forward_Pa", p->reseat_forward, 0);
  jnum(out, "reseat_reverse_Pa", p->reseat_reverse, 0);
  jnum(out, "blowout_Pa", p->blowout, 0);
  jnum(out, "blowout_forward_Pa", p->blowout_forward, 0);
  jnum(out, "blowout_reverse_Pa", p->blowout_reverse, 0);
  jnum(out, "differential_Pa", p->crack_reverse - p->crack_forward, 0);
  jnum(out, "ratio", p->crack_forward > 0.0 ? p->crack_reverse / p->crack_forward : NAN, 0);
  jnum(out, "x_rest_m", p->x_rest, 0);
  jnum(out, "x_crack_forward_m", p->x_crack_forward, 0);
  jnum(out, "x_crack_reverse_m", p->x_crack_reverse, 0);
  jnum(out, "end_fraction", p->end_fraction, 1);
  fprintf(out, "}\n");
}

void fci_profile_csv(FILE *out, const fc_valve_profile_point *pt, size_t n)
{
  fprintf(out, "x_m,width_m,height_m,B_floor_T,B_centre_T,B_roof_T,B_min_T,B_mean_T,B_max_T,"
          "pmag_min_Pa,pmag_mean_Pa,pmag_max_Pa\n");
  for (size_t i = 0; i < n; i++)
    fprintf(out, "%.9g,%.9g,%.9g,%.9g,%.9g,%.9g,%.9g,%.9g,%.9g,%.9g,%.9g,%.9g\n", pt[i].x,
            pt[i].width, pt[i].height, pt[i].b_floor, pt[i].b_centre, pt[i].b_roof, pt[i].b_min,
            pt[i].b_mean, pt[i].b_max, pt[i].p_min, pt[i].p_mean, pt[i].p_max);
}

void fci_vary_header(FILE *out, const char *key, const char *vunit, const char *unit)
{
  fprintf(out, "%s%s%s%s", key, vunit[0] ? " [" : "", vunit, vunit[0] ? "]" : "");
  const char *cols[] = {"crack_forward", "crack_reverse", "reseat_forward", "reseat_reverse",
                        "blowout", "differential"};
  for (int i = 0; i < 6; i++) fprintf(out, ",%s [%s]", cols[i], unit);
  fprintf(out, ",ratio,sealed\n");
}

void fci_vary_row(FILE *out, double v, const fc_valve_pressures *p, double k, int ok)
{
  fprintf(out, "%.10g", v);
  if (!ok) {
    fprintf(out, ",nan,nan,nan,nan,nan,nan,nan,0\n");
    return;
  }
  double c[6] = {p->crack_forward, p->crack_reverse, p->reseat_forward, p->reseat_reverse,
                 p->blowout, p->crack_reverse - p->crack_forward};
  for (int i = 0; i < 6; i++) fprintf(out, ",%.8g", c[i] * k);
  fprintf(out, ",%.8g,%d\n", p->crack_forward > 0.0 ? p->crack_reverse / p->crack_forward : NAN,
          p->sealed);
}
