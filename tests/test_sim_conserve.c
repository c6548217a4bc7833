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

/* Relative conservation errors of a finished run: per node against the stored volume
 * (max(|v_stored|, |v_inflow|)), per node against the volume pumped through the node (half the
 * sum of |v_net| of its elements), and over the boundary against sum v_stored. */
typedef struct cons_err {
  double stored, through, boundary;
} cons_err;

static cons_err conservation_errors(const fc_net *net, const fc_sim_result *res)
{
  int fixed[64];
  cons_err ce = {0, 0, 0};
  assert_true(net->nNode <= 64);
  boundary_nodes(net, fixed);
  double through[64] = {0}, vin = 0, vst = 0;
  for (int i = 0; i < net->nElem; i++) {
    const fc_elem *e = &net->elem[i];
    if (e->nTerm != 2) continue;
    through[e->node[0]] += fabs(res->v_net[i]) / 2;
    through[e->node[1]] += fabs(res->v_net[i]) / 2;
    int fa = fixed[e->node[0]], fb = fixed[e->node[1]];
    if (fa && !fb) vin += res->v_net[i];
    if (fb && !fa) vin -= res->v_net[i];
  }
  for (int n = 0; n < net->nNode; n++) {
    double d = fabs(res->v_stored[n] - res->v_inflow[n]);
    double s = fmax(fabs(res->v_stored[n]), fabs(res->v_inflow[n]));
    vst += res->v_stored[n];
    if (s > 0) ce.stored = fmax(ce.stored, d / s);
    if (through[n] > 0) ce.through = fmax(ce.through, d / through[n]);
  }
  double s = fmax(fabs(vst), fabs(vin));
  ce.boundary = s > 0 ? fabs(vst - vin) / s : 0;
  return ce;
}

/* Run json with rel_tol inserted into its "simulation" object; returns the errors. */
static cons_err run_conservation(const char *json, const char *name, double rel_tol)
{
  char buf[JSON_MAX], ins[64];
  const char *at = strstr(json, "\"simulation\"");
  assert_non_null(at);
  at = strchr(at, '{');
  assert_non_null(at);
  snprintf(ins, sizeof ins, "\"rel_tol\": %g, ", rel_tol);
  int n = snprintf(buf, sizeof buf, "%.*s%s%s", (int)(at + 1 - json), json, ins, at + 1);
  assert_true(n > 0 && n < (int)sizeof buf);
  run R;
  run_json(&R, buf);
  int ok = R.rc_load == FC_OK && R.rc_sim == FC_OK;
  cons_err ce = {INFINITY, INFINITY, INFINITY};
  if (ok) ce = conservation_errors(R.net, R.res);
  run_free(&R);
  assert_true(ok);
  print_message("%-16s rel_tol %.0e: |dV - int q| / dV %.2e, / throughput %.2e; "
                "boundary %.2e\n", name, rel_tol, ce.stored, ce.through, ce.boundary);
  return ce;
}

static const char ladder_json[] =
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

/* Nonlinear gas bubbles (isothermal, C = V0 p0/p_abs^2, §2) fed by a sine flow source. */
static const char gas_json[] =
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
  "\"simulation\":{\"duration\":\"10 s\",\"sample_interval\":\"10 ms\"}}";

static const double tols[] = {1e-6, 1e-8, 1e-10};

static void explore(const char *json, const char *name)
{
  for (int k = 0; k < 3; k++) run_conservation(json, name, tols[k]);
}

static void linear_networks_conserve_volume(void **state)
{
  (void)state;
  explore(ladder_json, "linear ladder");
}

static void demo_network_conserves_volume(void **state)
{
  (void)state;
  explore(fci_demo_network, "demo");
}

static void gas_bubble_network_conserves_volume(void **state)
{
  (void)state;
  explore(gas_json, "gas bubbles");
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
