/* ferrocirc — faster serial vector kernels for CVODES: see nvec_fast.h for why.
 *
 * Each kernel computes what the SUNDIALS documentation defines for the operation (SUNDIALS
 * 6.4 User Guide, NVECTOR operations table); where the serial module takes a shortcut for a
 * coefficient of 1 or -1, or groups a*(x + y) when both coefficients are equal, the same
 * shortcut is taken here, because those change the rounding. tests/test_nvec_fast.c compares
 * every kernel with the library's, bit for bit, except the WRMS norm (its sum is split). */
#include "nvec_fast.h"

#include <math.h>

#define LEN(v) NV_LENGTH_S(v)
#define DAT(v) NV_DATA_S(v)

/* The element-wise kernels in two builds, the one chosen at load time (GCC function
 * multi-versioning): AVX2 handles four doubles per instruction where SSE2, the x86-64
 * baseline, handles two. Every lane does the same IEEE operation on the same operands (AVX2
 * brings no fused multiply-add), so the results are the same bits on either path. */
#if defined(__GNUC__) && !defined(__clang__) && defined(__x86_64__)
#define WIDE __attribute__((target_clones("avx2", "default")))
#else
#define WIDE
#endif

/* y <- y + a x */
WIDE static void axpy(double a, N_Vector x, N_Vector y)
{
  const double *xd = DAT(x); /* may be y itself (z += c z in a combination) */
  double *yd = DAT(y);
  sunindextype n = LEN(x);
  if (a == 1.0) for (sunindextype i = 0; i < n; i++) yd[i] += xd[i];
  else if (a == -1.0) for (sunindextype i = 0; i < n; i++) yd[i] -= xd[i];
  else for (sunindextype i = 0; i < n; i++) yd[i] += a * xd[i];
}

WIDE static void linear_sum(double a, N_Vector x, double b, N_Vector y, N_Vector z)
{
  if (b == 1.0 && z == y) { axpy(a, x, y); return; }
  if (a == 1.0 && z == x) { axpy(b, y, x); return; }
  const double *xd = DAT(x), *yd = DAT(y);
  double *zd = DAT(z);
  sunindextype n = LEN(x);
  if (a == 1.0 && b == 1.0) { for (sunindextype i = 0; i < n; i++) zd[i] = xd[i] + yd[i]; return; }
  if ((a == 1.0 && b == -1.0) || (a == -1.0 && b == 1.0)) {
    const double *p = a == 1.0 ? xd : yd, *m = a == 1.0 ? yd : xd; /* p - m */
    for (sunindextype i = 0; i < n; i++) zd[i] = p[i] - m[i];
    return;
  }
  if (a == 1.0 || b == 1.0) { /* c v + u, u the vector with coefficient 1 */
    double c = a == 1.0 ? b : a;
    const double *v = a == 1.0 ? yd : xd, *u = a == 1.0 ? xd : yd;
    for (sunindextype i = 0; i < n; i++) zd[i] = c * v[i] + u[i];
    return;
  }
  if (a == -1.0 || b == -1.0) { /* c v - u, u the vector with coefficient -1 */
    double c = a == -1.0 ? b : a;
    const double *v = a == -1.0 ? yd : xd, *u = a == -1.0 ? xd : yd;
    for (sunindextype i = 0; i < n; i++) zd[i] = c * v[i] - u[i];
    return;
  }
  if (a == b) { for (sunindextype i = 0; i < n; i++) zd[i] = a * (xd[i] + yd[i]); return; }
  if (a == -b) { for (sunindextype i = 0; i < n; i++) zd[i] = a * (xd[i] - yd[i]); return; }
  for (sunindextype i = 0; i < n; i++) zd[i] = a * xd[i] + b * yd[i];
}

WIDE static void set_const(double c, N_Vector z)
{
  double *zd = DAT(z);
  for (sunindextype i = 0, n = LEN(z); i < n; i++) zd[i] = c;
}

WIDE static void prod(N_Vector x, N_Vector y, N_Vector z)
{
  const double *xd = DAT(x), *yd = DAT(y);
  double *zd = DAT(z);
  for (sunindextype i = 0, n = LEN(x); i < n; i++) zd[i] = xd[i] * yd[i];
}

WIDE static void quotient(N_Vector x, N_Vector y, N_Vector z)
{
  const double *xd = DAT(x), *yd = DAT(y);
  double *zd = DAT(z);
  for (sunindextype i = 0, n = LEN(x); i < n; i++) zd[i] = xd[i] / yd[i];
}

WIDE static void scale(double c, N_Vector x, N_Vector z)
{
  const double *xd = DAT(x);
  double *zd = DAT(z);
  sunindextype n = LEN(x);
  if (z == x) { for (sunindextype i = 0; i < n; i++) zd[i] *= c; return; }
  if (c == 1.0) { for (sunindextype i = 0; i < n; i++) zd[i] = xd[i]; return; }
  if (c == -1.0) { for (sunindextype i = 0; i < n; i++) zd[i] = -xd[i]; return; }
  for (sunindextype i = 0; i < n; i++) zd[i] = c * xd[i];
}

WIDE static void absolute(N_Vector x, N_Vector z)
{
  const double *xd = DAT(x);
  double *zd = DAT(z);
  for (sunindextype i = 0, n = LEN(x); i < n; i++) zd[i] = fabs(xd[i]);
}

WIDE static void inverse(N_Vector x, N_Vector z)
{
  const double *xd = DAT(x);
  double *zd = DAT(z);
  for (sunindextype i = 0, n = LEN(x); i < n; i++) zd[i] = 1.0 / xd[i];
}

WIDE static void add_const(N_Vector x, double b, N_Vector z)
{
  const double *xd = DAT(x);
  double *zd = DAT(z);
  for (sunindextype i = 0, n = LEN(x); i < n; i++) zd[i] = xd[i] + b;
}

static double max_norm(N_Vector x)
{
  const double *xd = DAT(x);
  double m = 0;
  for (sunindextype i = 0, n = LEN(x); i < n; i++) if (fabs(xd[i]) > m) m = fabs(xd[i]);
  return m;
}

/* Four partial sums, added at the end: a single running sum waits for each addition's result
 * (3-4 cycles) before the next, and this norm is taken several times a step. The order differs
 * from the serial module's, so the norm can differ from the library's in its last bits (at most
 * about n units in the last place; tests/test_nvec_fast.c); the partial sums are fixed by the
 * source, so every build and both paths above give the same bits. */
WIDE static double wrms_norm(N_Vector x, N_Vector w)
{
  const double *xd = DAT(x), *wd = DAT(w);
  sunindextype n = LEN(x), i = 0;
  double s0 = 0, s1 = 0, s2 = 0, s3 = 0;
  for (; i + 4 <= n; i += 4) {
    double p0 = xd[i] * wd[i], p1 = xd[i + 1] * wd[i + 1];
    double p2 = xd[i + 2] * wd[i + 2], p3 = xd[i + 3] * wd[i + 3];
    s0 += p0 * p0;
    s1 += p1 * p1;
    s2 += p2 * p2;
    s3 += p3 * p3;
  }
  for (; i < n; i++) {
    double p = xd[i] * wd[i];
    s0 += p * p;
  }
  return sqrt(((s0 + s1) + (s2 + s3)) / (double)n);
}

static double minimum(N_Vector x)
{
  const double *xd = DAT(x);
  double m = xd[0];
  for (sunindextype i = 1, n = LEN(x); i < n; i++) if (xd[i] < m) m = xd[i];
  return m;
}

static void compare(double c, N_Vector x, N_Vector z)
{
  const double *xd = DAT(x);
  double *zd = DAT(z);
  for (sunindextype i = 0, n = LEN(x); i < n; i++) zd[i] = fabs(xd[i]) >= c ? 1.0 : 0.0;
}

static booleantype inv_test(N_Vector x, N_Vector z)
{
  const double *xd = DAT(x);
  double *zd = DAT(z);
  booleantype ok = SUNTRUE;
  for (sunindextype i = 0, n = LEN(x); i < n; i++) {
    if (xd[i] == 0.0) ok = SUNFALSE;
    else zd[i] = 1.0 / xd[i];
  }
  return ok;
}

/* z = sum c_i X_i, formed as the generic layer's fall-back does: z = c_0 X_0 (a scaling), then
 * z += c_i X_i in turn; one pass over z per term, but no call per term. */
static int linear_combination(int nvec, realtype *c, N_Vector *X, N_Vector z)
{
  scale(c[0], X[0], z);
  for (int k = 1; k < nvec; k++) axpy(c[k], X[k], z);
  return 0;
}

/* Z_i = a_i x + Y_i, for each i. */
static int scale_add_multi(int nvec, realtype *a, N_Vector x, N_Vector *Y, N_Vector *Z)
{
  for (int k = 0; k < nvec; k++) linear_sum(a[k], x, 1.0, Y[k], Z[k]);
  return 0;
}

static int linear_sum_array(int nvec, realtype a, N_Vector *X, realtype b, N_Vector *Y, N_Vector *Z)
{
  for (int k = 0; k < nvec; k++) linear_sum(a, X[k], b, Y[k], Z[k]);
  return 0;
}

static int scale_array(int nvec, realtype *c, N_Vector *X, N_Vector *Z)
{
  for (int k = 0; k < nvec; k++) scale(c[k], X[k], Z[k]);
  return 0;
}

WIDE int fci_nvec_ewt(sunindextype n, const double *y, const double *atol, const double *wscale,
                      double rtol, double *w)
{
  int bad = 0;
  for (sunindextype k = 0; k < n; k++) {
    double d = rtol * fabs(y[k]) + atol[k];
    bad |= !(d > 0);
    w[k] = wscale[k] / d;
  }
  return bad ? -1 : 0;
}

void fci_nvec_fast(N_Vector v)
{
  N_Vector_Ops o = v->ops;
  o->nvlinearsum = linear_sum;
  o->nvconst = set_const;
  o->nvprod = prod;
  o->nvdiv = quotient;
  o->nvscale = scale;
  o->nvabs = absolute;
  o->nvinv = inverse;
  o->nvaddconst = add_const;
  o->nvmaxnorm = max_norm;
  o->nvwrmsnorm = wrms_norm;
  o->nvmin = minimum;
  o->nvcompare = compare;
  o->nvinvtest = inv_test;
  o->nvlinearcombination = linear_combination;
  o->nvscaleaddmulti = scale_add_multi;
  o->nvlinearsumvectorarray = linear_sum_array;
  o->nvscalevectorarray = scale_array;
}
