/* ferrocirc — time waveforms for sources (see include/ferrocirc/waveform.h for the JSON forms).
 *
 * Shapes, with t0 = delay, T = period, tau = time within the period:
 *   sine   v = M + A sin(2 pi t/T + phase); smooth, no corners.
 *   pulse  v = L before t0; from t0 on, periodic: raised-cosine rise L->H over [0, R], high,
 *          raised-cosine fall over [D T, D T + R], low. A raised-cosine ramp
 *          v = L + (H-L)(1 - cos(pi s/R))/2 has zero slope at both ends, so value and first
 *          derivative are continuous (C1) and the mean is exactly L + (H-L) D. Needs
 *          2 R <= min(D T, (1-D) T); R defaults to 0.05 min(D, 1-D) T; R = 0 is an ideal step.
 *   beat   v = B + P sin(pi tau/(S T)) for tau < S T, else B; mean B + 2 P S/pi.
 *   table  linear interpolation between points, repeated with period T >= t_last - t_first
 *          (default t_last); from t_last the value returns linearly to v_first at t_first + T.
 *          Points are [[t, v], ...] (each a quantity) or a CSV "file" of two numeric columns
 *          (separated by comma, semicolon, tab or blanks; one optional header line; '#' comment
 *          lines), in SI unless "time_unit" / "unit" name their units. At most FCI_TABLE_MAX
 *          (1e6) samples: a longer record should be resampled, not fed to the integrator.
 * Corners (next_corner) are the ends of pulse ramps, the start and end of a beat's ejection and
 * every table point: the integrator stops there instead of stepping across a kink. */
#include "ferrocirc/waveform.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "elem.h"
#include "ferrocirc/alloc.h"

#define FCI_TABLE_MAX 1000000 /* most samples in a table */
#define PI 3.14159265358979323846

enum { W_CONST, W_SINE, W_PULSE, W_BEAT, W_TABLE };

struct fc_waveform {
  int    shape;       /* W_* */
  double period;      /* [s], 0 for constants */
  double a, b;        /* const: value; sine: mean, amplitude; pulse: low, high; beat: base, peak */
  double c;           /* sine: phase [rad]; pulse: high time D T [s]; beat: ejection S T [s] */
  double rise;        /* pulse ramp length [s] */
  double t0;          /* pulse delay [s]; table: first time [s] */
  double corner[4];   /* pulse/beat corner offsets within a period [s], sorted */
  size_t nCorner;     /* entries used in corner[] */
  size_t n;           /* table samples */
  double *t, *v;      /* table times [s] and values (SI), owned */
};

fc_waveform *fc_waveform_constant(double value)
{
  fc_waveform *w = fc_calloc(1, sizeof *w);
  if (w) w->shape = W_CONST, w->a = value;
  return w;
}

void fc_waveform_free(fc_waveform *w)
{
  if (!w) return;
  fc_free(w->t);
  fc_free(w->v);
  fc_free(w);
}

double fc_waveform_period(const fc_waveform *w) { return w->period; }

/* fmod(x, T) for 0 <= x < 2^52 T, bit for bit, without glibc's fmod: that one reduces by long
 * division, about 100 instructions a call, and a pump's waveform is read at every evaluation
 * (10 % of all instructions of a run of pump loops). fmod is exact (C11 F.10.7.1), so with the
 * right integer n the single rounding of fma(-n, T, x) returns x - n T unchanged. The rounded
 * quotient x / T is never below the true one's floor (rounding is monotone and that floor is
 * a double) and at most one above it below 2^52 periods (relative error 2^-53): when it
 * rounded up to the next integer the remainder comes out negative, and the recomputed one is
 * exact. */
static double fmod_pos(double x, double T)
{
  if (!(x >= 0 && x < 0x1p52 * T)) return fmod(x, T);
  double n = (double)(int64_t)(x / T), r = fma(-n, T, x); /* truncation is floor here: 0 <= x / T < 2^52 */
  return r < 0 ? fma(-(n - 1), T, x) : r;
}

/* Time within the period starting at origin, in [0, T). */
static double phase_of(double t, double origin, double T)
{
  double tau = fmod_pos(t - origin, T);
  if (tau < 0) tau += T;
  return tau >= T ? 0.0 : tau;
}

/* Index i of the table segment [t_i, t_i+1) holding x (t_0 <= x); n-1 past the last point. */
static size_t segment(const fc_waveform *w, double x)
{
  size_t lo = 0, hi = w->n - 1;
  if (x >= w->t[hi]) return hi;
  while (hi - lo > 1) {
    size_t mid = lo + (hi - lo) / 2;
    if (w->t[mid] <= x) lo = mid; else hi = mid;
  }
  return lo;
}

/* Table value (want_slope = 0) or slope (1) at t. */
static double table_at(const fc_waveform *w, double t, int want_slope)
{
  double x = w->t0 + phase_of(t, w->t0, w->period);
  size_t i = segment(w, x);
  double ta = w->t[i], va = w->v[i], tb, vb;
  if (i + 1 < w->n) tb = w->t[i + 1], vb = w->v[i + 1];
  else tb = w->t0 + w->period, vb = w->v[0]; /* the return segment to the next period */
  double s = tb > ta ? (vb - va) / (tb - ta) : 0.0;
  return want_slope ? s : va + s * (x - ta);
}

/* Pulse value (want_slope = 0) or slope (1) at t. */
static double pulse_at(const fc_waveform *w, double t, int want_slope)
{
  double L = w->a, H = w->b, R = w->rise;
  if (t < w->t0) return want_slope ? 0.0 : L;
  double tau = phase_of(t, w->t0, w->period), s, from = L, to = H;
  if (tau >= w->c + R) return want_slope ? 0.0 : L;
  if (tau >= R && tau < w->c) return want_slope ? 0.0 : H;
  if (R <= 0.0) return want_slope ? 0.0 : (tau < w->c ? H : L);
  if (tau < R) s = tau / R;
  else s = (tau - w->c) / R, from = H, to = L;
  if (want_slope) return (to - from) * PI / (2.0 * R) * sin(PI * s);
  return from + (to - from) * 0.5 * (1.0 - cos(PI * s));
}

double fc_waveform_eval(const fc_waveform *w, double t)
{
  switch (w->shape) {
  case W_SINE: return w->a + w->b * sin(2.0 * PI * t / w->period + w->c);
  case W_PULSE: return pulse_at(w, t, 0);
  case W_BEAT: {
    double tau = phase_of(t, 0.0, w->period);
    return tau < w->c ? w->a + w->b * sin(PI * tau / w->c) : w->a;
  }
  case W_TABLE: return table_at(w, t, 0);
  default: return w->a;
  }
}

double fc_waveform_deriv(const fc_waveform *w, double t)
{
  switch (w->shape) {
  case W_SINE: {
    double om = 2.0 * PI / w->period;
    return w->b * om * cos(om * t + w->c);
  }
  case W_PULSE: return pulse_at(w, t, 1);
  case W_BEAT: {
    double tau = phase_of(t, 0.0, w->period);
    return tau < w->c ? w->b * PI / w->c * cos(PI * tau / w->c) : 0.0;
  }
  case W_TABLE: return table_at(w, t, 1);
  default: return 0.0;
  }
}

double fc_waveform_mean(const fc_waveform *w)
{
  switch (w->shape) {
  case W_SINE: return w->a;
  case W_PULSE: return w->a + (w->b - w->a) * w->c / w->period;
  case W_BEAT: return w->a + 2.0 * w->b * w->c / (PI * w->period);
  case W_TABLE: {
    double sum = 0.0;
    for (size_t i = 0; i + 1 < w->n; i++)
      sum += 0.5 * (w->v[i] + w->v[i + 1]) * (w->t[i + 1] - w->t[i]);
    sum += 0.5 * (w->v[w->n - 1] + w->v[0]) * (w->t0 + w->period - w->t[w->n - 1]);
    return sum / w->period;
  }
  default: return w->a;
  }
}

/* First corner origin + k T + (c[i] - shift) > lim with k >= kmin; c sorted, c[i] - shift in
 * [0, T]. Bisection, because a table may hold 1e6 points. */
static double lattice_next(double lim, double origin, double T, const double *c, size_t m,
                           double shift, double kmin)
{
  double k0 = floor((lim - origin) / T) - 1.0;
  if (k0 < kmin) k0 = kmin;
  for (double k = k0; k < k0 + 4.0; k += 1.0) {
    double base = origin + k * T - shift;
    size_t lo = 0, hi = m;
    while (lo < hi) {
      size_t mid = lo + (hi - lo) / 2;
      if (base + c[mid] > lim) hi = mid; else lo = mid + 1;
    }
    if (lo < m) return base + c[lo];
  }
  return INFINITY;
}

double fc_waveform_next_corner(const fc_waveform *w, double t)
{
  /* A corner within rounding of t is the one the integrator just stopped at. */
  double lim = t + 1e-12 * fmax(1.0, fabs(t));
  switch (w->shape) {
  case W_PULSE:
    if (lim < w->t0) return w->t0;
    return lattice_next(lim, w->t0, w->period, w->corner, w->nCorner, 0.0, 0.0);
  case W_BEAT: return lattice_next(lim, 0.0, w->period, w->corner, w->nCorner, 0.0, -INFINITY);
  case W_TABLE: return lattice_next(lim, w->t0, w->period, w->t, w->n, w->t0, -INFINITY);
  default: return INFINITY;
  }
}

/* A raised-cosine ramp L + (H - L)(1 - cos(pi tau / R))/2 has zero slope at both ends; with
 * R = 0 the pulse is a step and its edges are jumps of the value itself. */
int fc_waveform_corners_smooth(const fc_waveform *w) { return w->shape == W_PULSE && w->rise > 0; }

/* ---- parsing ---- */

static int get_period(const cJSON *j, const char *alt, double *T, const char *path,
                      const fci_parse_ctx *ctx, fc_error *err)
{
  char kp[256];
  int hasT = cJSON_GetObjectItemCaseSensitive(j, "period") != NULL;
  int hasF = cJSON_GetObjectItemCaseSensitive(j, alt) != NULL;
  if (hasT && hasF)
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, alt),
                   "give either \"period\" or \"%s\", not both", alt);
  if (!hasF) return fci_get_quantity(j, "period", FC_DIM_TIME, 1, 0, FCI_POS, T, path, ctx, err);
  double f;
  int rc = fci_get_quantity(j, alt, FC_DIM_FREQUENCY, 1, 0, FCI_POS, &f, path, ctx, err);
  if (!rc) *T = 1.0 / f;
  return rc;
}

static int parse_sine(fc_waveform *w, const cJSON *j, const char *path, const fci_parse_ctx *ctx,
                      fc_dim dim, fc_error *err)
{
  static const char *const keys[] = {"shape", "note", "mean", "amplitude", "frequency",
                                     "period", "phase", NULL};
  int rc = fci_check_keys(j, keys, NULL, path, err);
  if (!rc) rc = fci_get_quantity(j, "mean", dim, 0, 0.0, FCI_ANY, &w->a, path, ctx, err);
  if (!rc) rc = fci_get_quantity(j, "amplitude", dim, 1, 0, FCI_ANY, &w->b, path, ctx, err);
  if (!rc) rc = get_period(j, "frequency", &w->period, path, ctx, err);
  if (!rc) rc = fci_get_quantity(j, "phase", FC_DIM_ANGLE, 0, 0.0, FCI_ANY, &w->c, path, ctx, err);
  return rc;
}

static int parse_pulse(fc_waveform *w, const cJSON *j, const char *path,
                       const fci_parse_ctx *ctx, fc_dim dim, fc_error *err)
{
  static const char *const keys[] = {"shape", "note", "low", "high", "period", "frequency",
                                     "duty", "rise", "delay", NULL};
  char kp[256];
  double D, T;
  int rc = fci_check_keys(j, keys, NULL, path, err);
  if (!rc) rc = fci_get_quantity(j, "low", dim, 0, 0.0, FCI_ANY, &w->a, path, ctx, err);
  if (!rc) rc = fci_get_quantity(j, "high", dim, 1, 0, FCI_ANY, &w->b, path, ctx, err);
  if (!rc) rc = get_period(j, "frequency", &w->period, path, ctx, err);
  if (!rc) rc = fci_get_quantity(j, "duty", FC_DIM_NONE, 0, 0.5, FCI_ANY, &D, path, ctx, err);
  if (rc) return rc;
  if (!(D > 0.0 && D < 1.0))
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "duty"),
                   "must be in (0, 1), got %g", D);
  T = w->period;
  w->c = D * T;
  double shorter = fmin(D, 1.0 - D) * T;
  rc = fci_get_quantity(j, "rise", FC_DIM_TIME, 0, 0.05 * shorter, FCI_NONNEG, &w->rise, path,
                        ctx, err);
  if (!rc) rc = fci_get_quantity(j, "delay", FC_DIM_TIME, 0, 0.0, FCI_NONNEG, &w->t0, path, ctx,
                                 err);
  if (rc) return rc;
  if (2.0 * w->rise > shorter)
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "rise"),
                   "%g s is too long: twice the rise must fit in the shorter of the high time "
                   "(%g s) and the low time (%g s)", w->rise, D * T, (1.0 - D) * T);
  double R = w->rise, c[4] = {0.0, R, w->c, w->c + R};
  size_t m = 0;
  for (int i = 0; i < 4; i++)
    if (!m || c[i] > w->corner[m - 1]) w->corner[m++] = c[i]; /* R = 0 merges corners */
  w->nCorner = m;
  return FC_OK;
}

static int parse_beat(fc_waveform *w, const cJSON *j, const char *path, const fci_parse_ctx *ctx,
                      fc_dim dim, fc_error *err)
{
  static const char *const keys[] = {"shape", "note", "peak", "period", "rate",
                                     "systolic_fraction", "base", NULL};
  char kp[256];
  double S;
  int rc = fci_check_keys(j, keys, NULL, path, err);
  if (!rc) rc = fci_get_quantity(j, "peak", dim, 1, 0, FCI_ANY, &w->b, path, ctx, err);
  if (!rc) rc = get_period(j, "rate", &w->period, path, ctx, err);
  if (!rc) rc = fci_get_quantity(j, "systolic_fraction", FC_DIM_NONE, 0, 1.0 / 3.0, FCI_ANY, &S,
                                 path, ctx, err);
  if (!rc) rc = fci_get_quantity(j, "base", dim, 0, 0.0, FCI_ANY, &w->a, path, ctx, err);
  if (rc) return rc;
  if (!(S > 0.0 && S < 1.0))
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "systolic_fraction"),
                   "must be in (0, 1), got %g", S);
  w->c = S * w->period;
  w->corner[0] = 0.0, w->corner[1] = w->c, w->nCorner = 2;
  return FC_OK;
}

/* Append (t, v) to the table, growing it geometrically. */
static int table_push(fc_waveform *w, size_t *cap, double t, double v)
{
  if (w->n == *cap) {
    size_t nc = *cap ? 2 * *cap : 64;
    double *nt = fc_realloc(w->t, nc * sizeof *nt);
    if (!nt) return FC_ENOMEM;
    w->t = nt;
    double *nv = fc_realloc(w->v, nc * sizeof *nv);
    if (!nv) return FC_ENOMEM;
    w->v = nv;
    *cap = nc;
  }
  w->t[w->n] = t, w->v[w->n] = v, w->n++;
  return FC_OK;
}

/* Two numbers separated by a comma, semicolon, tab or blanks, nothing else; 1 if so. */
static int csv_pair(const char *line, double *a, double *b)
{
  char *e;
  *a = strtod(line, &e);
  if (e == line) return 0;
  const char *p = e;
  while (*p == ' ' || *p == '\t') p++;
  if (*p == ',' || *p == ';') p++;
  *b = strtod(p, &e);
  if (e == p) return 0;
  while (*e == ' ' || *e == '\t' || *e == '\r' || *e == '\n') e++;
  return *e == '\0' && isfinite(*a) && isfinite(*b);
}

/* Factor and offset turning a number in `unit` into SI (affine: UDUNITS units are). */
static int unit_affine(const cJSON *j, const char *key, fc_dim dim, double *f, double *z,
                       const char *path, const fci_parse_ctx *ctx, fc_error *err)
{
  char kp[256], q[128];
  const cJSON *it = cJSON_GetObjectItemCaseSensitive(j, key);
  *f = 1.0, *z = 0.0;
  if (!it) return FC_OK;
  fci_path_key(kp, sizeof kp, path, key);
  if (!cJSON_IsString(it) || strlen(it->valuestring) > 100)
    return fc_fail(err, FC_EJSON, kp, "expected a unit string such as \"%s\"",
                   dim == FC_DIM_TIME ? "ms" : fc_dim_si_name(dim));
  double one;
  snprintf(q, sizeof q, "0 %s", it->valuestring);
  int rc = fc_units_parse(ctx->units, q, dim, z, kp, err);
  snprintf(q, sizeof q, "1 %s", it->valuestring);
  if (!rc) rc = fc_units_parse(ctx->units, q, dim, &one, kp, err);
  if (!rc) *f = one - *z;
  return rc;
}

static int read_csv(fc_waveform *w, const char *file, const cJSON *j, const char *kp,
                    const fci_parse_ctx *ctx, fc_dim dim, fc_error *err)
{
  char full[1024], line[512];
  double ft, zt, fv, zv, a, b;
  size_t cap = 0, lineno = 0, data = 0;
  int header = 0;
  const char *base = ctx->basedir && file[0] != '/' ? ctx->basedir : "";
  snprintf(full, sizeof full, "%s%s%s", base, base[0] && base[strlen(base) - 1] != '/' ? "/" : "",
           file);
  int rc = unit_affine(j, "time_unit", FC_DIM_TIME, &ft, &zt, kp, ctx, err);
  if (!rc) rc = unit_affine(j, "unit", dim, &fv, &zv, kp, ctx, err);
  if (rc) return rc;
  FILE *fp = fopen(full, "r");
  if (!fp) return fc_fail(err, FC_EIO, kp, "cannot open table file \"%s\"", full);
  while (!rc && fgets(line, sizeof line, fp)) {
    lineno++;
    const char *s = line + strspn(line, " \t");
    if (!strchr(line, '\n') && !feof(fp))
      rc = fc_fail(err, FC_EPARAM, kp, "%s:%zu: line longer than %zu characters", full, lineno,
                   sizeof line - 2);
    else if (*s == '#' || *s == '\n' || *s == '\r' || !*s) continue;
    else if (!csv_pair(s, &a, &b)) {
      if (!data && !header++) continue; /* the one optional header line */
      rc = fc_fail(err, FC_EPARAM, kp, "%s:%zu: expected two numbers \"time, value\"", full,
                   lineno);
    } else if (++data > FCI_TABLE_MAX)
      rc = fc_fail(err, FC_EPARAM, kp, "%s: more than %d samples; resample the record", full,
                   FCI_TABLE_MAX);
    else if (table_push(w, &cap, zt + ft * a, zv + fv * b))
      rc = fc_fail(err, FC_ENOMEM, kp, "out of memory reading \"%s\"", full);
    else if (w->n > 1 && !(w->t[w->n - 1] > w->t[w->n - 2]))
      rc = fc_fail(err, FC_EPARAM, kp, "%s:%zu: times must increase (%g after %g s)", full,
                   lineno, w->t[w->n - 1], w->t[w->n - 2]);
  }
  if (!rc && ferror(fp)) rc = fc_fail(err, FC_EIO, kp, "error reading \"%s\"", full);
  fclose(fp);
  return rc;
}

static int read_points(fc_waveform *w, const cJSON *pts, const char *kp,
                       const fci_parse_ctx *ctx, fc_dim dim, fc_error *err)
{
  char ep[300];
  size_t cap = 0, i = 0;
  if (!cJSON_IsArray(pts)) return fc_fail(err, FC_EJSON, kp, "expected an array of [t, v] pairs");
  for (const cJSON *p = pts->child; p; p = p->next, i++) {
    double t, v;
    snprintf(ep, sizeof ep, "%s[%zu]", kp, i);
    if (!cJSON_IsArray(p) || cJSON_GetArraySize(p) != 2)
      return fc_fail(err, FC_EJSON, ep, "expected a pair [t, v]");
    if (i >= FCI_TABLE_MAX)
      return fc_fail(err, FC_EPARAM, ep, "more than %d samples", FCI_TABLE_MAX);
    snprintf(ep, sizeof ep, "%s[%zu][0]", kp, i);
    int rc = fc_units_json(ctx->units, p->child, FC_DIM_TIME, &t, ep, err);
    if (rc) return rc;
    if (i && !(t > w->t[i - 1]))
      return fc_fail(err, FC_EPARAM, ep, "times must increase (%g after %g s)", t, w->t[i - 1]);
    snprintf(ep, sizeof ep, "%s[%zu][1]", kp, i);
    rc = fc_units_json(ctx->units, p->child->next, dim, &v, ep, err);
    if (rc) return rc;
    if (table_push(w, &cap, t, v)) return fc_fail(err, FC_ENOMEM, kp, "out of memory");
  }
  return FC_OK;
}

static int parse_table(fc_waveform *w, const cJSON *j, const char *path,
                       const fci_parse_ctx *ctx, fc_dim dim, fc_error *err)
{
  static const char *const keys[] = {"shape", "note", "points", "file", "period", "time_unit",
                                     "unit", NULL};
  char kp[256];
  const cJSON *pts = cJSON_GetObjectItemCaseSensitive(j, "points");
  const cJSON *file = cJSON_GetObjectItemCaseSensitive(j, "file");
  int rc = fci_check_keys(j, keys, NULL, path, err);
  if (rc) return rc;
  if (!pts == !file)
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, pts ? "file" : "points"),
                   pts ? "give either \"points\" or \"file\", not both"
                       : "missing required key \"points\" (or \"file\")");
  fci_path_key(kp, sizeof kp, path, pts ? "points" : "file");
  if (file && !cJSON_IsString(file))
    return fc_fail(err, FC_EJSON, kp, "expected a file name string (a CSV of time, value)");
  if (pts && (cJSON_GetObjectItemCaseSensitive(j, "unit") ||
              cJSON_GetObjectItemCaseSensitive(j, "time_unit")))
    return fc_fail(err, FC_EPARAM, kp, "\"unit\" and \"time_unit\" apply to a \"file\"; give "
                   "units inside \"points\" (e.g. [\"2 s\", \"20 mbar\"])");
  rc = pts ? read_points(w, pts, kp, ctx, dim, err)
           : read_csv(w, file->valuestring, j, kp, ctx, dim, err);
  if (rc) return rc;
  if (w->n < 2) return fc_fail(err, FC_EPARAM, kp, "a table needs at least 2 points, got %zu",
                               w->n);
  w->t0 = w->t[0];
  double span = w->t[w->n - 1] - w->t0;
  rc = fci_get_quantity(j, "period", FC_DIM_TIME, 0, w->t[w->n - 1], FCI_POS, &w->period, path,
                        ctx, err);
  if (rc) return rc;
  if (!(w->period >= span))
    return fc_fail(err, FC_EPARAM, fci_path_key(kp, sizeof kp, path, "period"),
                   "%g s is shorter than the table's span (%g s from first to last time)",
                   w->period, span);
  return FC_OK;
}

int fc_waveform_parse(const cJSON *j, fc_dim dim, const fc_units *u, const char *basedir,
                      const char *path, fc_waveform **out, fc_error *err)
{
  static const char *const shapes[] = {"constant", "sine", "pulse", "beat", "table", NULL};
  static const char *const ckeys[] = {"shape", "note", "value", NULL};
  fci_parse_ctx ctx = {u, NULL, basedir ? basedir : "", NULL};
  char kp[256];
  int rc;
  *out = NULL;
  fc_waveform *w = fc_calloc(1, sizeof *w);
  if (!w) return fc_fail(err, FC_ENOMEM, path, "out of memory");
  if (!cJSON_IsObject(j) || (!cJSON_GetObjectItemCaseSensitive(j, "shape") &&
                              cJSON_GetObjectItemCaseSensitive(j, "tolerance"))) {
    w->shape = W_CONST; /* a plain or toleranced quantity is a constant */
    rc = fc_units_json(u, j, dim, &w->a, path, err);
    goto done;
  }
  const cJSON *sh = cJSON_GetObjectItemCaseSensitive(j, "shape");
  fci_path_key(kp, sizeof kp, path, "shape");
  if (!sh) {
    rc = fc_fail(err, FC_EPARAM, kp, "missing required key \"shape\" (one of \"constant\", "
                 "\"sine\", \"pulse\", \"beat\", \"table\")");
    goto done;
  }
  int s = -1;
  for (int i = 0; cJSON_IsString(sh) && shapes[i]; i++)
    if (strcmp(sh->valuestring, shapes[i]) == 0) s = i;
  if (s < 0) {
    rc = fc_fail(err, cJSON_IsString(sh) ? FC_EPARAM : FC_EJSON, kp, "expected one of "
                 "\"constant\", \"sine\", \"pulse\", \"beat\", \"table\"");
    goto done;
  }
  w->shape = s; /* the order of shapes[] is that of the W_* codes */
  switch (s) {
  case W_CONST:
    rc = fci_check_keys(j, ckeys, NULL, path, err);
    if (!rc) rc = fci_get_quantity(j, "value", dim, 1, 0, FCI_ANY, &w->a, path, &ctx, err);
    break;
  case W_SINE: rc = parse_sine(w, j, path, &ctx, dim, err); break;
  case W_PULSE: rc = parse_pulse(w, j, path, &ctx, dim, err); break;
  case W_BEAT: rc = parse_beat(w, j, path, &ctx, dim, err); break;
  default: rc = parse_table(w, j, path, &ctx, dim, err); break;
  }
done:
  if (rc) {
    fc_waveform_free(w);
    return rc;
  }
  *out = w;
  return FC_OK;
}
