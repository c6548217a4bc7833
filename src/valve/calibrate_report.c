/* ferrocirc — the text report of a valve calibration: fitted values with standard errors,
 * correlation matrix, identifiability, chi-square, and the residual (and leave-one-out
 * prediction error) of every measured value, in the pressure unit of the measurement file. */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "calibrate.h"

static const char *lm_info(int info)
{
  switch (info) {
  case 1: return "converged: relative reduction of the sum of squares below ftol";
  case 2: return "converged: relative change of the parameters below xtol";
  case 3: return "converged: sum of squares and parameters below tolerance";
  case 4: return "converged: residuals orthogonal to the Jacobian (gradient zero)";
  case 5: return "NOT CONVERGED: evaluation limit reached";
  default: return "stopped at the numerical noise of the model (tolerance too small to reach)";
  }
}

static void params(FILE *out, const fci_cal_model *m, const fci_cal_fit *f)
{
  fprintf(out, "  %-3s %-42s %12s %12s %12s  %s\n", "#", "parameter", "start", "fitted",
          "std. error", "unit");
  for (int i = 0; i < f->p; i++) {
    const fci_cal_param *q = fci_cal_model_param(m, i);
    const char *tag = f->ident[i] == FCI_CAL_NOT_IDENTIFIABLE ? "  NOT IDENTIFIABLE" :
                      f->ident[i] == FCI_CAL_WEAK ? "  weakly determined" : "";
    fprintf(out, "  %-3d %-42s %12.6g %12.6g %12.4g  %s%s%s\n", i + 1, q->path, q->start * q->k,
            f->theta[i] * q->k, f->se[i] * q->k, q->unit[0] ? q->unit : "(SI)", tag,
            f->at_bound[i] ? "  AT BOUND" : "");
    if (q->bounded)
      fprintf(out, "      bounds %g .. %g (sine transform)\n", q->lo * q->k, q->hi * q->k);
  }
  if (f->p > 1) {
    fprintf(out, "  correlation:\n");
    for (int i = 0; i < f->p; i++) {
      fprintf(out, "    [%d]", i + 1);
      for (int j = 0; j < f->p; j++) fprintf(out, " %7.4f", f->corr[i * f->p + j]);
      fputc('\n', out);
    }
  }
  fprintf(out, "  condition number of the correlation-scaled normal matrix: %.4g\n", f->cond);
}

static void warnings(FILE *out, const fci_cal_model *m, const fci_cal_fit *f)
{
  if (!f->identifiable) {
    fprintf(out, "WARNING: not identifiable: the data cannot separate");
    for (int i = 0; i < f->p; i++)
      if (f->ident[i] == FCI_CAL_NOT_IDENTIFIABLE)
        fprintf(out, " %s", fci_cal_model_param(m, i)->path);
    fprintf(out, ".\n  Undetermined combination (parameters scaled by their standard deviations "
            "of the normal matrix):");
    for (int i = 0; i < f->p; i++) fprintf(out, " %+.3f*[%d]", f->weak[i], i + 1);
    fprintf(out, ".\n  Measure other quantities or configurations that "
            "tell them apart, or fit fewer parameters.\n");
  }
  for (int i = 0; i < f->p; i++) {
    if (f->ident[i] == FCI_CAL_WEAK)
      fprintf(out, "WARNING: %s is weakly determined (condition number %.3g, standard error "
              "%.3g of the value): predictions that depend on it alone are uncertain.\n",
              fci_cal_model_param(m, i)->path, f->cond, f->se[i] / fabs(f->theta[i]));
    if (f->at_bound[i])
      fprintf(out, "WARNING: %s ends at its bound: its standard error is not meaningful; widen "
              "the bounds or question the model.\n", fci_cal_model_param(m, i)->path);
  }
  if (f->info == 5) fprintf(out, "WARNING: the fit did not converge.\n");
  if (f->dof > 0 && f->redchi2 > 1.0 + 3.0 * sqrt(2.0 / f->dof) && fci_cal_model_data(m)->has_sigma)
    fprintf(out, "WARNING: reduced chi-square %.3g is well above 1: the model misses something "
            "the bench shows, or the sigmas are too small; the standard errors are then "
            "understated.\n", f->redchi2);
}

static void residual_table(FILE *out, const fci_cal_data *d, const fci_cal_fit *f,
                           const double *loo)
{
  double k = d->k, ss = 0.0, sl = 0.0;
  int nl = 0;
  fprintf(out, "residuals, model - measured [%s]:\n  %5s  %-26s %-30s %-8s %-8s %9s %9s %9s %7s%s\n",
          d->unit, "line", "design", "override", "dir", "quantity", "measured", "model",
          "residual", "z", loo ? "  leave-one-out" : "");
  for (int v = 0; v < d->nValue; v++) {
    const fci_cal_row *r = &d->row[d->vrow[v]];
    double meas = r->meas[d->vq[v]], res = f->pred[v] - meas;
    double z = res / (d->has_sigma ? r->sigma : sqrt(f->redchi2));
    fprintf(out, "  %5d  %-26.26s %-30.30s %-8s %-8s %9.4g %9.4g %+9.3g %+7.2f", r->line,
            r->design, r->override[0] ? r->override : "-", r->reverse ? "reverse" : "forward",
            fci_cal_qname(d->vq[v]), meas * k, f->pred[v] * k, res * k, z);
    if (loo && isfinite(loo[v])) fprintf(out, "  %+9.3g", loo[v] * k);
    else if (loo) fprintf(out, "  %9s", "(skipped)");
    fputc('\n', out);
    ss += res * res;
    if (loo && isfinite(loo[v])) { sl += loo[v] * loo[v]; nl++; }
  }
  fprintf(out, "  rms residual %.4g %s", sqrt(ss / d->nValue) * k, d->unit);
  if (nl) fprintf(out, "; rms leave-one-out prediction error %.4g %s (%d values)",
                  sqrt(sl / nl) * k, d->unit, nl);
  fputc('\n', out);
}

void fci_cal_report(FILE *out, const fci_cal_model *m, const fci_cal_fit *f, const double *loo)
{
  const fci_cal_data *d = fci_cal_model_data(m);
  fprintf(out, "valve calibration: %s, %d rows, %d values, %d parameter%s, %d degrees of freedom\n",
          d->file, d->nRow, f->n, f->p, f->p == 1 ? "" : "s", f->dof);
  fprintf(out, "  weights: %s\n", d->has_sigma ?
          "1/sigma from the sigma column; covariance (J^T J)^-1" :
          "none (no sigma column); covariance s^2 (J^T J)^-1, s^2 = reduced chi-square");
  fprintf(out, "  Levenberg-Marquardt (MINPACK lmdif): %s; %d evaluations (info %d)\n",
          lm_info(f->info), f->nfev, f->info);
  params(out, m, f);
  fprintf(out, "  chi-square %.5g for %d degrees of freedom: reduced chi-square %.4g%s\n",
          f->chi2, f->dof, f->redchi2, d->has_sigma ? "" : " [Pa^2] (unweighted)");
  residual_table(out, d, f, loo);
  warnings(out, m, f);
  fprintf(out, "Caution: a calibrated model interpolates the bench data it was fitted to; confirm "
          "new designs on the bench before use with cells and follow local rules.\n");
}
