/* ferrocirc — faster serial vector kernels for CVODES (internal; included by sim.c only).
 *
 * Why: Debian 12's SUNDIALS 6.4.1 libraries are built without optimisation (-O0: every loop
 * index and partial sum goes through the stack), and CVODES spends a third of a run on a
 * 57 000-element network in its serial vector kernels (linear sums, WRMS norms, scalings:
 * docs/performance.md). The N_Vector interface lets a program supply its own operations
 * (SUNDIALS User Guide, "Description of the NVECTOR modules"): these are compiled with the
 * rest of ferrocirc and do the same floating-point operations in the same order as the serial
 * module (including its special cases for coefficients 1 and -1, and the fall-backs the generic
 * layer uses for the fused operations), so results are bit for bit those of the library's own
 * kernels; the WRMS norm alone sums in four parts, which can move its last bits. */
#ifndef FERROCIRC_NVEC_FAST_H
#define FERROCIRC_NVEC_FAST_H

#include <nvector/nvector_serial.h>

/* Install the kernels in v's operation table. Clones of v (CVODES's internal vectors) copy
 * the table, so calling this on the vectors handed to CVodeInit and CVodeQuadInit covers the
 * integrator. v must be a serial vector. */
void fci_nvec_fast(N_Vector v);

/* CVODE's error weights, w = wscale / (rtol |y| + atol) (its default weights, scaled; sim.c
 * ewt_fn says why), for n states in the kernels' wide build: a division each, at every step.
 * -1 if a denominator is not positive (CVODE then stops: tolerances cannot be met), else 0. */
int fci_nvec_ewt(sunindextype n, const double *y, const double *atol, const double *wscale,
                 double rtol, double *w);

#endif
