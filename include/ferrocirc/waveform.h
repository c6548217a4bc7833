/* ferrocirc — time waveforms for sources and backing pressures.
 *
 * JSON forms (values are quantities of the dimension the caller expects, see units.h):
 *   5, "10 uL/min"                         constant
 *   {"shape":"constant","value":V}
 *   {"shape":"sine","mean":M,"amplitude":A,"frequency":F | "period":T,"phase":"90 deg"}
 *       v = M + A sin(2 pi t/T + phase)
 *   {"shape":"pulse","low":L,"high":H,"period":T,"duty":D,"rise":R,"delay":t0}
 *       trapezoid-like pulse whose edges are C1-smooth (raised-cosine) ramps of length R,
 *       high for D*T measured between the ramp mid-points; never a step.
 *   {"shape":"beat","peak":P,"period":T | "rate":"60 1/min","systolic_fraction":S,"base":B}
 *       heartbeat-like ejection: B + P sin(pi t'/(S T)) for t' = t mod T < S T, then B.
 *   {"shape":"table","points":[[t,v],...] | "file":"x.csv","period":T}
 *       linear interpolation; repeated with period T (default: last t), t must increase.
 * The period is 0 for constant waveforms. */
#ifndef FERROCIRC_WAVEFORM_H
#define FERROCIRC_WAVEFORM_H

#include "ferrocirc/error.h"
#include "ferrocirc/units.h"

typedef struct fc_waveform fc_waveform;
struct cJSON;

/* Parse `j` (at JSON `path`) as a waveform of dimension `dim`. `basedir` resolves a table's
 * relative "file" (may be NULL = cwd). The caller owns *out and frees it with fc_waveform_free. */
int fc_waveform_parse(const struct cJSON *j, fc_dim dim, const fc_units *u, const char *basedir,
                      const char *path, fc_waveform **out, fc_error *err);

/* A constant waveform (for defaults). NULL on allocation failure. */
fc_waveform *fc_waveform_constant(double value);

void fc_waveform_free(fc_waveform *w);

/* Value at time t [s] (SI), and its time derivative (SI per second). */
double fc_waveform_eval(const fc_waveform *w, double t);
double fc_waveform_deriv(const fc_waveform *w, double t);

/* Period [s], 0 if not periodic. */
double fc_waveform_period(const fc_waveform *w);

/* Mean over one period (the value itself when constant). */
double fc_waveform_mean(const fc_waveform *w);

/* The first time > t at which the waveform's derivative jumps (table corners, start/end of a
 * beat's ejection, pulse ramp ends), or +INFINITY if none: the integrator stops there so that
 * no step straddles a corner. */
double fc_waveform_next_corner(const fc_waveform *w, double t);

/* 1 if the waveform's first derivative is continuous at all its corners, so that only higher
 * derivatives jump there (the raised-cosine ramps of a pulse); 0 if the derivative itself
 * jumps (table points, the start and end of a beat's ejection). */
int fc_waveform_corners_smooth(const fc_waveform *w);

#endif
