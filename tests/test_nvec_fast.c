/* The vector kernels of src/nvec_fast.c against SUNDIALS's own serial kernels (the reference:
 * the library as Debian ships it), through the generic N_V* calls CVODES makes: every result
 * must be bit for bit the library's (the WRMS norm, summed in four parts: to rounding), for the
 * coefficient shortcuts (1, -1, equal, opposite), for aliased arguments (z = x, z = y) and for
 * the fused operations, which the library's serial vector leaves to the generic fall-backs. */
#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>
#include <string.h>

#include "nvec_fast.h"
#include "test_rng.h"

#define N 97 /* odd, not a multiple of any vector width */
#define NV 5

static uint64_t rng = 0x5851f42d4c957f2du;

typedef struct pair {
  SUNContext ctx;
  N_Vector lib[NV], fast[NV]; /* the same values, the library's kernels and ours */
} pair;

static double uniform(void) { return (double)(test_rng_next(&rng) >> 11) / 9007199254740992.0; }

/* Values over many magnitudes and both signs, a few exact zeros. */
static void fill(pair *P)
{
  for (int v = 0; v < NV; v++) {
    double *a = NV_DATA_S(P->lib[v]), *b = NV_DATA_S(P->fast[v]);
    for (int i = 0; i < N; i++) {
      double x = (uniform() - 0.5) * pow(10.0, 12.0 * uniform() - 6.0);
      if (i % 31 == 7) x = 0;
      a[i] = b[i] = x;
    }
  }
}

static int setup(void **state)
{
  static pair P;
  memset(&P, 0, sizeof P);
  if (SUNContext_Create(NULL, &P.ctx)) return -1;
  for (int v = 0; v < NV; v++) {
    P.lib[v] = N_VNew_Serial(N, P.ctx);
    N_Vector t = N_VNew_Serial(N, P.ctx);
    if (!P.lib[v] || !t) return -1;
    fci_nvec_fast(t);
    P.fast[v] = N_VClone(t); /* clones carry the kernels, as CVODES's internal vectors do */
    N_VDestroy(t);
    if (!P.fast[v]) return -1;
  }
  fill(&P);
  *state = &P;
  return 0;
}

static int teardown(void **state)
{
  pair *P = *state;
  for (int v = 0; v < NV; v++) { N_VDestroy(P->lib[v]); N_VDestroy(P->fast[v]); }
  SUNContext_Free(&P->ctx);
  return 0;
}

static void assert_same(pair *P, int v)
{
  assert_memory_equal(NV_DATA_S(P->lib[v]), NV_DATA_S(P->fast[v]), N * sizeof(double));
}

static void assert_all_same(pair *P)
{
  for (int v = 0; v < NV; v++) assert_same(P, v);
}

static const double coef[] = {1.0, -1.0, 0.0, 0.37, -2.5, 1e-9};
#define NC (sizeof coef / sizeof coef[0])

static void linear_sum_matches_library_for_every_shortcut_and_alias(void **state)
{
  pair *P = *state;
  for (size_t i = 0; i < NC; i++)
    for (size_t j = 0; j < NC + 2; j++) {
      double a = coef[i], b = j < NC ? coef[j] : j == NC ? a : -a; /* equal and opposite */
      for (int alias = 0; alias < 3; alias++) {
        fill(P);
        int z = alias == 0 ? 2 : alias == 1 ? 0 : 1;
        N_VLinearSum(a, P->lib[0], b, P->lib[1], P->lib[z]);
        N_VLinearSum(a, P->fast[0], b, P->fast[1], P->fast[z]);
        assert_all_same(P);
      }
    }
}

static void scale_const_and_elementwise_ops_match_library(void **state)
{
  pair *P = *state;
  for (size_t i = 0; i < NC; i++) {
    fill(P);
    N_VScale(coef[i], P->lib[0], P->lib[1]);
    N_VScale(coef[i], P->fast[0], P->fast[1]);
    N_VScale(coef[i], P->lib[2], P->lib[2]);
    N_VScale(coef[i], P->fast[2], P->fast[2]);
    N_VAddConst(P->lib[3], coef[i], P->lib[4]);
    N_VAddConst(P->fast[3], coef[i], P->fast[4]);
    assert_all_same(P);
    N_VConst(coef[i], P->lib[0]);
    N_VConst(coef[i], P->fast[0]);
    N_VCompare(fabs(coef[i]) * 1e-3, P->lib[1], P->lib[2]);
    N_VCompare(fabs(coef[i]) * 1e-3, P->fast[1], P->fast[2]);
    assert_all_same(P);
  }
  fill(P);
  N_VProd(P->lib[0], P->lib[1], P->lib[2]);
  N_VProd(P->fast[0], P->fast[1], P->fast[2]);
  N_VAbs(P->lib[3], P->lib[3]);
  N_VAbs(P->fast[3], P->fast[3]);
  N_VAddConst(P->lib[3], 1.0, P->lib[3]); /* no zeros: divide and invert */
  N_VAddConst(P->fast[3], 1.0, P->fast[3]);
  N_VDiv(P->lib[0], P->lib[3], P->lib[4]);
  N_VDiv(P->fast[0], P->fast[3], P->fast[4]);
  N_VInv(P->lib[3], P->lib[1]);
  N_VInv(P->fast[3], P->fast[1]);
  assert_all_same(P);
}

static void norms_minimum_and_inverse_test_match_library(void **state)
{
  pair *P = *state;
  for (int rep = 0; rep < 20; rep++) {
    fill(P);
    /* the norm sums in four parts: equal to rounding, a sum of N positive terms in any order
     * being within (N - 1) eps of the exact one (Higham, Accuracy and Stability of Numerical
     * Algorithms, 2nd ed., section 4.2), so the two within 2 (N - 1) eps, the root half that */
    double a = N_VWrmsNorm(P->lib[0], P->lib[1]), b = N_VWrmsNorm(P->fast[0], P->fast[1]);
    assert_true(fabs(a - b) <= (N - 1) * 2.3e-16 * a);
    assert_true(a > 0);
    a = N_VMaxNorm(P->lib[2]);
    b = N_VMaxNorm(P->fast[2]);
    assert_memory_equal(&a, &b, sizeof a);
    a = N_VMin(P->lib[3]);
    b = N_VMin(P->fast[3]);
    assert_memory_equal(&a, &b, sizeof a);
    /* lib[4] has exact zeros (fill): both report them and invert the rest alike */
    N_VConst(-7.0, P->lib[0]);
    N_VConst(-7.0, P->fast[0]);
    assert_int_equal(N_VInvTest(P->lib[4], P->lib[0]), N_VInvTest(P->fast[4], P->fast[0]));
    assert_all_same(P);
  }
  assert_true(N_VMin(P->fast[0]) < 0); /* the zeros' slots were left alone */
}

static void fused_operations_match_the_generic_fallbacks(void **state)
{
  pair *P = *state;
  double c[4] = {1.0, -0.25, 3.0, -1.0};
  for (int nvec = 1; nvec <= 4; nvec++)
    for (int into_first = 0; into_first < 2; into_first++)
      for (int c0 = 0; c0 < 2; c0++) {
        fill(P);
        c[0] = c0 ? 1.0 : 0.7;
        N_Vector XL[4] = {P->lib[0], P->lib[1], P->lib[2], P->lib[3]};
        N_Vector XF[4] = {P->fast[0], P->fast[1], P->fast[2], P->fast[3]};
        N_VLinearCombination(nvec, c, XL, into_first ? P->lib[0] : P->lib[4]);
        N_VLinearCombination(nvec, c, XF, into_first ? P->fast[0] : P->fast[4]);
        assert_all_same(P);
      }
  for (int nvec = 1; nvec <= 2; nvec++)
    for (int in_place = 0; in_place < 2; in_place++) {
      fill(P);
      N_Vector YL[2] = {P->lib[1], P->lib[2]}, ZL[2] = {P->lib[3], P->lib[4]};
      N_Vector YF[2] = {P->fast[1], P->fast[2]}, ZF[2] = {P->fast[3], P->fast[4]};
      N_VScaleAddMulti(nvec, c + 1, P->lib[0], YL, in_place ? YL : ZL);
      N_VScaleAddMulti(nvec, c + 1, P->fast[0], YF, in_place ? YF : ZF);
      assert_all_same(P);
      N_VScaleVectorArray(nvec, c + 1, YL, in_place ? YL : ZL);
      N_VScaleVectorArray(nvec, c + 1, YF, in_place ? YF : ZF);
      assert_all_same(P);
      N_VLinearSumVectorArray(nvec, 1.0, YL, -1.0, ZL, ZL);
      N_VLinearSumVectorArray(nvec, 1.0, YF, -1.0, ZF, ZF);
      assert_all_same(P);
    }
}

static void a_wrong_kernel_would_be_caught(void **state)
{
  /* The comparison can fail: a*(x + y) rounds differently from a*x + a*y for some values,
   * which is why the equal-coefficient shortcut must be kept. */
  pair *P = *state;
  int differ = 0;
  for (int rep = 0; rep < 10 && !differ; rep++) {
    fill(P);
    const double *x = NV_DATA_S(P->fast[0]), *y = NV_DATA_S(P->fast[1]);
    for (int i = 0; i < N; i++) differ |= 0.37 * (x[i] + y[i]) != 0.37 * x[i] + 0.37 * y[i];
  }
  assert_true(differ);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(linear_sum_matches_library_for_every_shortcut_and_alias),
    cmocka_unit_test(scale_const_and_elementwise_ops_match_library),
    cmocka_unit_test(norms_minimum_and_inverse_test_match_library),
    cmocka_unit_test(fused_operations_match_the_generic_fallbacks),
    cmocka_unit_test(a_wrong_kernel_would_be_caught),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
