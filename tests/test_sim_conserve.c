/* Volume conservation of fc_sim_run (issue 2: "for every run, the volume stored in compliances
 * equals the integrated net inflow to 1e-9 relative").
 *
 * Two checks per network, both against the continuity equation (dV/dt = sum of inflows at a
 * node, physics reference §2):
 *   per node      res->v_stored[n] (V(p_end) - V(p_0), from the chamber's own volume law) equals
 *                 res->v_inflow[n] (time integral of the node's net inflow);
 *   whole network the volume that crossed the boundary (the net volumes of the two-terminal
 *                 elements joining an imposed-pressure node to the interior) equals sum v_stored.
 * The relative error is taken against the larger of |v_stored| and |v_inflow| at the node, and
 * against the volume pumped through the node (sum of |v_net| of its elements) where that is the
 * larger, so that a periodic run whose stored volume returns to ~0 is not judged on a vanishing
 * denominator. */
#define _POSIX_C_SOURCE 200809L
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include "cli.h"
#include "net.h"
#include "test_sim_rec.h"

#define JSON_MAX 4096

/* Nodes whose pressure is imposed: reservoir nodes, then nodes driven by chains of ideal
 * pressure sources (as the engine resolves them, src/sys_build.c). */
static void boundary_nodes(const fc_net *net, int *fixed)
{
  for (int n = 0; n < net->nNode; n++) fixed[n] = 0;
  for (int i = 0; i < net->nElem; i++)
    if (net->elem[i].role == FC_ROLE_FIX) fixed[net->elem[i].node[0]] = 1;
  for (int progress = 1; progress;) {
    progress = 0;
    for (int i = 0; i < net->nElem; i++) {
      const fc_elem *e = &net->elem[i];
      if (e->role != FC_ROLE_LINK || fixed[e->node[0]] == fixed[e->node[1]]) continue;
      fixed[e->node[0]] = fixed[e->node[1]] = 1;
      progress = 1;
    }
  }
}

/* Largest relative conservation error of a finished run, per node and over the boundary. */
static void conservation_errors(const fc_net *net, const fc_sim_result *res, double *node_err,
                                double *sum_err)
{
  int fixed[64];
  assert_true(net->nNode <= 64);
  boundary_nodes(net, fixed);
  double through[64] = {0}, vin = 0, vst = 0, scale = 0;
  for (int i = 0; i < net->nElem; i++) {
    const fc_elem *e = &net->elem[i];
    if (e->nTerm != 2) continue;
    through[e->node[0]] += fabs(res->v_net[i]);
    through[e->node[1]] += fabs(res->v_net[i]);
    int fa = fixed[e->node[0]], fb = fixed[e->node[1]];
    if (fa && !fb) vin += res->v_net[i];
    if (fb && !fa) vin -= res->v_net[i];
    if (fa != fb) scale = fmax(scale, fabs(res->v_net[i]));
  }
  *node_err = 0;
  for (int n = 0; n < net->nNode; n++) {
    double s = fmax(fmax(fabs(res->v_stored[n]), fabs(res->v_inflow[n])), through[n] / 2);
    vst += res->v_stored[n];
    if (s > 0) *node_err = fmax(*node_err, fabs(res->v_stored[n] - res->v_inflow[n]) / s);
  }
  scale = fmax(scale, fmax(fabs(vst), fabs(vin)));
  *sum_err = scale > 0 ? fabs(vst - vin) / scale : 0;
}

static void check_conserved(const char *json, const char *name, double tol)
{
  run R;
  run_json(&R, json);
  assert_int_equal(R.rc_load, FC_OK);
  assert_int_equal(R.rc_sim, FC_OK);
  double en, es;
  conservation_errors(R.net, R.res, &en, &es);
  print_message("%-28s rel_tol %.0e: stored vs inflow %.2e, boundary vs stored %.2e\n", name,
                R.net->sim.rel_tol, en, es);
  CHECK_CLOSE(en, 0, tol, 1, "per-node stored volume vs integrated inflow (continuity)");
  CHECK_CLOSE(es, 0, tol, 1, "boundary inflow vs total stored volume (continuity)");
  run_free(&R);
}

/* Linear compliances: C p' = sum q is linear in p, so V = C p and the inflow quadrature obey
 * the same BDF recurrence and agree to the Newton tolerance. */
static void linear_networks_conserve_volume(void **state)
{
  (void)state;
  /* RC ladder with an inertial tube, a driven membrane (backing pressure) and a pulse source. */
  const char *ladder =
    "{\"format\":\"ferrocirc-network/1\",\"elements\":["
    "{\"id\":\"in\",\"type\":\"reservoir\",\"node\":\"in\",\"pressure\":{\"shape\":\"pulse\","
    "\"low\":0,\"high\":\"20 mbar\",\"period\":\"0.5 s\",\"duty\":0.4,\"rise\":\"10 ms\"}},"
    "{\"id\":\"R1\",\"type\":\"resistor\",\"from\":\"in\",\"to\":\"n1\",\"resistance\":1e12},"
    "{\"id\":\"C1\",\"type\":\"chamber\",\"node\":\"n1\",\"compliance\":2e-14},"
    "{\"id\":\"tube\",\"type\":\"channel\",\"from\":\"n1\",\"to\":\"n2\",\"length\":\"0.5 m\","
    "\"diameter\":\"0.5 mm\",\"inertance\":true},"
    "{\"id\":\"C2\",\"type\":\"chamber\",\"node\":\"n2\",\"compliance\":5e-15,"
    "\"backing_pressure\":{\"shape\":\"sine\",\"mean\":0,\"amplitude\":\"5 mbar\",\"frequency\":\"2 Hz\"}},"
    "{\"id\":\"R3\",\"type\":\"resistor\",\"from\":\"n2\",\"to\":\"out\",\"resistance\":3e12},"
    "{\"id\":\"out\",\"type\":\"reservoir\",\"node\":\"out\",\"liquid_height\":\"5 mm\"}],"
    "\"simulation\":{\"duration\":\"2.3 s\",\"sample_interval\":\"10 ms\"}}";
  check_conserved(ladder, "linear ladder (defaults)", 1e-9);
}

/* The built-in demo (src/demo.c): beat pump, 2 uL gas bubble trap, chambers, inertial drain. */
static void demo_network_conserves_volume(void **state)
{
  (void)state;
  check_conserved(fci_demo_network, "demo (as shipped)", 1e-9);
}

/* Nonlinear gas bubbles (isothermal, C = V0 p0/p_abs^2, §2) fed by a sine flow source. */
static const char gas_fmt[] =
  "{\"format\":\"ferrocirc-network/1\",\"elements\":["
  "{\"id\":\"supply\",\"type\":\"reservoir\",\"node\":\"s\"},"
  "{\"id\":\"pump\",\"type\":\"flow_source\",\"from\":\"s\",\"to\":\"b1\",\"flow\":{\"shape\":\"sine\","
  "\"mean\":\"20 uL/min\",\"amplitude\":\"15 uL/min\",\"frequency\":\"1 Hz\"}},"
  "{\"id\":\"bubble\",\"type\":\"chamber\",\"node\":\"b1\",\"gas_volume\":\"1 uL\"},"
  "{\"id\":\"R1\",\"type\":\"resistor\",\"from\":\"b1\",\"to\":\"b2\",\"resistance\":3e13},"
  "{\"id\":\"bubble2\",\"type\":\"chamber\",\"node\":\"b2\",\"gas_volume\":\"0.5 uL\","
  "\"gas_pressure\":\"50 mbar\"},"
  "{\"id\":\"R2\",\"type\":\"resistor\",\"from\":\"b2\",\"to\":\"w\",\"resistance\":2e13},"
  "{\"id\":\"waste\",\"type\":\"reservoir\",\"node\":\"w\"}],"
  "\"simulation\":{\"duration\":\"10 s\",\"sample_interval\":\"10 ms\",\"rel_tol\":%g}}";

static void gas_bubble_network_conserves_volume(void **state)
{
  (void)state;
  char json[JSON_MAX];
  snprintf(json, sizeof json, gas_fmt, 1e-6);
  check_conserved(json, "gas bubbles (defaults)", 1e-9);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(linear_networks_conserve_volume),
    cmocka_unit_test(demo_network_conserves_volume),
    cmocka_unit_test(gas_bubble_network_conserves_volume),
  };
  return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
