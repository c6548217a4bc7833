/* The affine Newton matrix (src/sys_eval.c, sys.h "aff_able"): where every element is linear in
 * its mode and every compliance constant, the augmented matrix is assembled as
 * A(gamma) = A(0) + gamma (A(1) - A(0)) instead of stamping each element. The reference is the
 * element-by-element stamp itself (each element's law and partials, checked against finite
 * differences by tests/test_elements.c): the two must agree to rounding at any gamma, and
 * follow a valve's mode switch. The network has every row the affine path allows: chambers,
 * an algebraic junction (no compliance) and a check valve. */
#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include "net.h"
#include "sys.h"
#include "test_sim_rec.h"

static const char NET[] =
  "{\"format\":\"ferrocirc-network/1\",\"fluid\":{\"density\":1000,\"viscosity\":0.001},"
  "\"elements\":["
  "{\"id\":\"src\",\"type\":\"reservoir\",\"node\":\"s\",\"pressure\":\"20 mbar\"},"
  "{\"id\":\"inl\",\"type\":\"channel\",\"from\":\"s\",\"to\":\"v\",\"length\":\"20 mm\",\"diameter\":\"0.2 mm\"},"
  "{\"id\":\"cvv\",\"type\":\"chamber\",\"node\":\"v\",\"compliance\":1e-15},"
  "{\"id\":\"cv\",\"type\":\"check_valve\",\"from\":\"v\",\"to\":\"j\",\"crack_forward\":\"1 mbar\","
  "\"reseat_forward\":\"0.5 mbar\",\"crack_reverse\":\"1 bar\",\"open_resistance\":1e10},"
  "{\"id\":\"a\",\"type\":\"resistor\",\"from\":\"j\",\"to\":\"ca\",\"resistance\":2e11},"
  "{\"id\":\"b\",\"type\":\"resistor\",\"from\":\"j\",\"to\":\"cb\",\"resistance\":3e11},"
  "{\"id\":\"wa\",\"type\":\"chamber\",\"node\":\"ca\",\"compliance\":2e-14},"
  "{\"id\":\"wb\",\"type\":\"chamber\",\"node\":\"cb\",\"compliance\":5e-15},"
  "{\"id\":\"da\",\"type\":\"resistor\",\"from\":\"ca\",\"to\":\"d\",\"resistance\":1e12},"
  "{\"id\":\"db\",\"type\":\"resistor\",\"from\":\"cb\",\"to\":\"d\",\"resistance\":4e12},"
  "{\"id\":\"drain\",\"type\":\"reservoir\",\"node\":\"d\",\"pressure\":0}],"
  "\"simulation\":{\"duration\":1}}";

/* The network above, loaded and assembled. */
static void load(fc_net **net, fci_sys **s)
{
  fc_error err = {0};
  assert_int_equal(fc_net_load_buffer(NET, sizeof NET - 1, "affine.json", ".", g_units, net, &err), FC_OK);
  assert_int_equal(fci_sys_build(*net, s, &err), FC_OK);
}

/* The matrix at gamma through the path the system chooses, and through the stamp alone. */
static void both(fci_sys *s, const double *x, double gamma, double *fast, double *ref)
{
  assert_int_equal(fci_sys_psetup(s, 0.1, x, gamma), 0);
  memcpy(fast, s->A.val, (size_t)s->A.nnz * sizeof *fast);
  int able = s->aff_able;
  s->aff_able = 0;
  assert_int_equal(fci_sys_psetup(s, 0.1, x, gamma), 0);
  memcpy(ref, s->A.val, (size_t)s->A.nnz * sizeof *ref);
  s->aff_able = able;
}

static void affine_matrix_equals_the_stamp_in_every_mode(void **state)
{
  (void)state;
  fc_net *net = NULL;
  fci_sys *s = NULL;
  load(&net, &s);
  assert_true(s->nz > 0 && s->ns > 0 && s->no == 0);
  double x[8], *fast = calloc((size_t)s->A.nnz, sizeof *fast), *ref = calloc((size_t)s->A.nnz, sizeof *ref);
  assert_true(s->nx <= 8 && fast && ref);
  for (int k = 0; k < s->nx; k++) x[k] = 1e-15 * (k + 1); /* some stored volume everywhere */
  int cv = fc_net_elem_find(net, "cv");
  assert_true(cv >= 0);
  for (int mode = 0; mode <= 1; mode++) { /* sealed, then open forward */
    net->elem[cv].mode = mode;
    fci_sys_invalidate(s);
    const double gammas[] = {1e-6, 3.7e-4, 2e-2};
    for (size_t g = 0; g < sizeof gammas / sizeof gammas[0]; g++) {
      both(s, x, gammas[g], fast, ref);
      assert_true(s->aff_able && s->aff_ok); /* the affine path was taken */
      double d = rel_diff(s->A.nnz, fast, ref);
      if (d > 1e-14) fail_msg("mode %d, gamma %g: affine and stamped matrices differ by %g", mode, gammas[g], d);
    }
  }
  /* The open valve's conductance is in the matrix: going back to sealed changes it, so a
   * stale pair (A(0), A(1)) of the other mode would fail the comparison above. */
  double *open = malloc((size_t)s->A.nnz * sizeof *open);
  assert_non_null(open);
  memcpy(open, fast, (size_t)s->A.nnz * sizeof *open);
  net->elem[cv].mode = 0;
  fci_sys_invalidate(s);
  both(s, x, 2e-2, fast, ref);
  assert_true(rel_diff(s->A.nnz, open, fast) > 1e-6);
  free(open);
  free(fast);
  free(ref);
  fci_sys_free(s);
  fc_net_free(net);
}

/* The evaluation's fast path (src/sys_eval.c: a conductance read as one coefficient, the
 * other linear elements as three, in element order) gives every element the flow of its own law
 * (xFlow at the same pressures) in both valve modes; the open valve, with its cracking offset,
 * is one of the others. */
static void linear_flows_equal_each_elements_own_law(void **state)
{
  (void)state;
  fc_net *net = NULL;
  fci_sys *s = NULL;
  load(&net, &s);
  double x[8];
  for (int k = 0; k < s->nx; k++) x[k] = 3e-16 * (k + 2);
  int cv = fc_net_elem_find(net, "cv");
  for (int mode = 0; mode <= 1; mode++) {
    net->elem[cv].mode = mode;
    fci_sys_invalidate(s);
    assert_int_equal(fci_sys_eval(s, 0.1, x), 0);
    assert_true(s->nlin - s->nlinx >= 5); /* conductances: the channel and the four resistors */
    if (mode == 1) /* the open valve (k0 != 0) is one of the others */
      assert_true(s->nlinx == 1 && s->linx_j[0] == s->lin_of[cv]);
    double qmax = 0, dmax = 0;
    for (int i = 0; i < net->nElem; i++) {
      const fc_elem *e = &net->elem[i];
      if (e->role != FC_ROLE_FLOW) continue;
      double pp[2] = {s->p[e->node[0]], s->p[e->node[1]]};
      fci_flow f = {0};
      e->type->xFlow(e, 0.1, pp, NULL, &f);
      if (fabs(f.q) > qmax) qmax = fabs(f.q);
      if (fabs(f.q - s->q[i]) > dmax) dmax = fabs(f.q - s->q[i]);
    }
    assert_true(qmax > 0);
    if (dmax > 1e-14 * qmax) fail_msg("mode %d: flows differ from the elements' laws by %g of %g", mode, dmax, qmax);
  }
  fci_sys_free(s);
  fc_net_free(net);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(affine_matrix_equals_the_stamp_in_every_mode),
    cmocka_unit_test(linear_flows_equal_each_elements_own_law),
  };
  return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
