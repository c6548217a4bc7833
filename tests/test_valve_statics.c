/* Tests of the plug statics, design loading and the `valve` command (src/valve/).
 * Check values: the symmetry argument of the physics reference sec. 5, the ideal burst bound
 * F10, the plausibility facts of the trade (common practice, no published source; reported,
 * see docs/valve-model.md) and the error-path contract of the house style. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "ferrocirc/valve.h"

#define REL(a, b, tol) assert_true(fabs((a) - (b)) <= (tol) * fabs(b))
#define MMHG 133.322387415

static fc_units *units;

static int setup(void **state)
{
  (void)state;
  fc_error e;
  return fc_units_open(&units, &e);
}

static int teardown(void **state)
{
  (void)state;
  fc_units_free(units);
  return 0;
}

static const char *FLUID =
  "\"ferrofluid\": {\"saturation_magnetization\": \"22.3 kA/m\", \"initial_susceptibility\": "
  "0.53, \"density\": \"1100 kg/m3\", \"volume\": \"%s\", \"contact_angle\": {\"advancing\": "
  "\"40 deg\", \"receding\": \"20 deg\"}}, \"carrier\": {\"type\": \"air\", "
  "\"interfacial_tension\": \"28 mN/m\"}";

/* Design text from a channel, magnets and plug volume; parsed at "$". */
static int design(const char *channel, const char *magnets, const char *volume,
                  fc_valve_design **d, fc_error *e)
{
  char fluid[600], text[4000];
  snprintf(fluid, sizeof fluid, FLUID, volume);
  snprintf(text, sizeof text, "{\"format\": \"ferrocirc-valve/1\", \"channel\": %s, %s, "
           "\"magnets\": %s}", channel, fluid, magnets);
  cJSON *j = cJSON_Parse(text);
  assert_non_null(j);
  fc_error_clear(e);
  int rc = fc_valve_design_parse(j, "$", units, NULL, d, e);
  cJSON_Delete(j);
  return rc;
}

static const char *DISC = "[{\"shape\": \"cylinder\", \"diameter\": \"6 mm\", \"length\": "
  "\"3 mm\", \"grade\": \"N42\", \"side\": \"below\", \"gap\": \"1 mm\", \"x\": \"%s\"}]";

static void solve(const char *channel, const char *mx, const char *vol, fc_valve_pressures *p)
{
  char mags[400];
  fc_valve_design *d = NULL;
  fc_error e;
  snprintf(mags, sizeof mags, DISC, mx);
  assert_int_equal(design(channel, mags, vol, &d, &e), FC_OK);
  assert_int_equal(fc_valve_design_solve(d, p, &e), FC_OK);
  fc_valve_design_free(d);
}

static void test_symmetric_design_is_symmetric(void **state)
{
  (void)state;
  /* Physics reference sec. 5: a symmetric field, channel and wetting give equal thresholds. */
  fc_valve_pressures p;
  solve("{\"start\": \"-20 mm\", \"sections\": [{\"length\": \"40 mm\", \"width\": \"2 mm\", "
        "\"height\": \"2 mm\"}]}", "0 mm", "40 uL", &p);
  assert_true(p.crack_forward > 0.0 && p.sealed);
  REL(p.crack_reverse, p.crack_forward, 1e-9);
  REL(p.reseat_reverse, p.reseat_forward, 1e-9);
  REL(p.blowout_reverse, p.blowout_forward, 1e-9);
  /* symmetric step (narrow - wide - narrow) about the magnet */
  solve("{\"start\": \"-20 mm\", \"sections\": [{\"length\": \"17 mm\", \"width\": \"2 mm\", "
        "\"height\": \"2 mm\"}, {\"length\": \"6 mm\", \"width\": \"4 mm\", \"height\": \"2 mm\"},"
        " {\"length\": \"17 mm\", \"width\": \"2 mm\", \"height\": \"2 mm\"}]}", "0 mm", "40 uL",
        &p);
  REL(p.crack_reverse, p.crack_forward, 1e-9);
  REL(p.reseat_reverse, p.reseat_forward, 1e-9);
}

static void test_mirror_swaps_directions(void **state)
{
  (void)state;
  fc_valve_pressures a, b;
  solve("{\"start\": \"-20 mm\", \"sections\": [{\"length\": \"20 mm\", \"width\": \"2 mm\", "
        "\"height\": \"2 mm\"}, {\"length\": \"20 mm\", \"width\": \"6 mm\", \"height\": "
        "\"2 mm\"}]}", "-1.5 mm", "50 uL", &a);
  solve("{\"start\": \"-20 mm\", \"sections\": [{\"length\": \"20 mm\", \"width\": \"6 mm\", "
        "\"height\": \"2 mm\"}, {\"length\": \"20 mm\", \"width\": \"2 mm\", \"height\": "
        "\"2 mm\"}]}", "1.5 mm", "50 uL", &b);
  REL(b.crack_forward, a.crack_reverse, 1e-9);
  REL(b.crack_reverse, a.crack_forward, 1e-9);
  REL(b.reseat_forward, a.reseat_reverse, 1e-9);
  REL(b.blowout_forward, a.blowout_reverse, 1e-9);
  /* Directionality from geometry only: pushed into the wide part is the easy way
   * (physics reference sec. 5, asymmetries 2b and 2c [C]). */
  assert_true(a.crack_forward < a.crack_reverse);
  /* Without the step an offset magnet alone gives no direction (long channel, field ~0 at
   * the ends). */
  fc_valve_pressures u;
  solve("{\"start\": \"-20 mm\", \"sections\": [{\"length\": \"40 mm\", \"width\": \"2 mm\", "
        "\"height\": \"2 mm\"}]}", "-1.5 mm", "40 uL", &u);
  REL(u.crack_reverse, u.crack_forward, 1e-3);
}

static void test_hysteresis_order(void **state)
{
  (void)state;
  fc_valve_pressures p;
  solve("{\"start\": \"-20 mm\", \"sections\": [{\"length\": \"20 mm\", \"width\": \"2 mm\", "
        "\"height\": \"2 mm\"}, {\"length\": \"20 mm\", \"width\": \"6 mm\", \"height\": "
        "\"2 mm\"}]}", "-1.5 mm", "50 uL", &p);
  assert_true(p.reseat_forward < p.crack_forward && p.reseat_reverse < p.crack_reverse);
  assert_true(p.crack_forward <= p.blowout_forward && p.crack_reverse <= p.blowout_reverse);
  /* Reseat - crack is the contact-angle hysteresis of both menisci (plug_crack.c):
   * 2 gamma cos-difference terms of Young-Laplace, here at most ~2 x 40 Pa (Y4 form). */
  assert_true(p.crack_forward - p.reseat_forward < 100.0);
}

static void test_ideal_burst_bound(void **state)
{
  (void)state;
  /* F10: attracting sandwich of two M1 discs (10 x 5 mm, Br 1.30 T), faces 2 mm apart, a
   * 20 um channel at mid-gap, no capillarity or buoyancy, a 60 mm plug: the far meniscus sits
   * in ~zero field, so the blowout tends to mu0 Phi(H_max) = 14 832.66 Pa [D]. */
  const char *text =
    "{\"channel\": {\"start\": \"-100 mm\", \"sections\": [{\"length\": \"200 mm\", \"width\": "
    "\"20 um\", \"height\": \"20 um\"}]}, \"ferrofluid\": {\"domain_magnetization\": \"446 kA/m\","
    " \"particle_diameter\": \"10 nm\", \"volume_fraction\": 0.05, \"temperature\": \"300 K\", "
    "\"volume\": 2.4e-11, \"density\": 1200, \"contact_angle\": {\"advancing\": \"90 deg\", "
    "\"receding\": \"90 deg\"}}, \"carrier\": {\"type\": \"liquid\", \"interfacial_tension\": 0, "
    "\"density\": 1200}, \"numerics\": {\"points\": 20001, \"paths\": 3}, \"magnets\": ["
    "{\"shape\": \"cylinder\", \"diameter\": \"10 mm\", \"length\": \"5 mm\", \"remanence\": "
    "\"1.30 T\", \"side\": \"below\", \"gap\": \"0.99 mm\"}, {\"shape\": \"cylinder\", "
    "\"diameter\": \"10 mm\", \"length\": \"5 mm\", \"remanence\": \"1.30 T\", \"side\": "
    "\"above\", \"gap\": \"0.99 mm\"}]}";
  cJSON *j = cJSON_Parse(text);
  fc_valve_design *d = NULL;
  fc_valve_pressures p;
  fc_error e;
  fc_error_clear(&e);
  assert_int_equal(fc_valve_design_parse(j, "$", units, NULL, &d, &e), FC_OK);
  cJSON_Delete(j);
  assert_int_equal(fc_valve_design_solve(d, &p, &e), FC_OK);
  REL(p.blowout_forward, 14832.66, 2e-4);
  REL(p.blowout_reverse, 14832.66, 2e-4);
  assert_true(p.crack_forward <= p.blowout_forward * (1 + 1e-12));
  fc_valve_design_free(d);
}

static void load_example(const char *name, fc_valve_pressures *p)
{
  char path[512];
  fc_valve_design *d = NULL;
  fc_error e;
  fc_error_clear(&e);
  snprintf(path, sizeof path, "%s/networks/valves/%s", FC_SOURCE_DIR, name);
  assert_int_equal(fc_valve_design_load(path, units, &d, &e), FC_OK);
  assert_int_equal(fc_valve_design_solve(d, p, &e), FC_OK);
  fc_valve_design_free(d);
}

static void test_plausibility_of_the_trade(void **state)
{
  (void)state;
  /* Facts of the trade, common practice (no published source): one small disc under a 2 x 2 mm
   * channel cracks at a few to a few tens of mmHg in the easy direction, 3-6x higher in the
   * blocking one; a second magnet above raises both several-fold, roughly doubles the
   * differential and brings the ratio towards 2. We assert what the model reproduces and print
   * the rest; docs/valve-model.md explains the disagreement. No parameter was tuned to these. */
  fc_valve_pressures one, two;
  load_example("one-magnet-step.json", &one);
  load_example("two-magnet-step.json", &two);
  double r1 = one.crack_reverse / one.crack_forward, r2 = two.crack_reverse / two.crack_forward;
  double d1 = one.crack_reverse - one.crack_forward, d2 = two.crack_reverse - two.crack_forward;
  printf("# one magnet: crack %.2f / %.2f mmHg, ratio %.2f (trade: 3-6), diff %.2f mmHg\n",
         one.crack_forward / MMHG, one.crack_reverse / MMHG, r1, d1 / MMHG);
  printf("# two magnets: crack %.2f / %.2f mmHg, ratio %.2f (trade: ~2), diff %.2f mmHg "
         "(trade: ~2x the one-magnet diff)\n", two.crack_forward / MMHG,
         two.crack_reverse / MMHG, r2, d2 / MMHG);
  assert_true(one.crack_forward > 1.0 * MMHG && one.crack_forward < 50.0 * MMHG);
  assert_true(r1 > 1.0);                          /* a check valve, easy way forward */
  assert_true(two.crack_forward > 2.0 * one.crack_forward);
  assert_true(two.crack_reverse > 2.0 * one.crack_reverse);
  assert_true(r2 < r1);                           /* the ratio falls with the second magnet */
}

static void test_errors_name_the_path(void **state)
{
  (void)state;
  fc_valve_design *d = NULL;
  fc_error e;
  const char *ch = "{\"sections\": [{\"length\": \"40 mm\", \"width\": \"2 mm\", \"height\": "
                   "\"2 mm\"}]}";
  const char *badgap = "[{\"shape\": \"cylinder\", \"diameter\": \"6 mm\", \"length\": "
                       "\"3 mm\", \"grade\": \"N42\", \"side\": \"below\", \"gap\": \"-1 mm\"}]";
  assert_int_equal(design(ch, badgap, "40 uL", &d, &e), FC_EPARAM);
  assert_string_equal(e.path, "$.magnets[0].gap");
  const char *badgrade = "[{\"shape\": \"cylinder\", \"diameter\": \"6 mm\", \"length\": "
                         "\"3 mm\", \"grade\": \"N99\", \"side\": \"below\", \"gap\": \"1 mm\"}]";
  assert_int_equal(design(ch, badgrade, "40 uL", &d, &e), FC_EPARAM);
  assert_string_equal(e.path, "$.magnets[0].grade");
  assert_int_equal(design(ch, "[]", "40 uL", &d, &e), FC_EPARAM);
  assert_string_equal(e.path, "$.magnets");
  assert_int_equal(design(ch, badgap, "1 mm", &d, &e), FC_EPARAM);
  assert_string_equal(e.path, "$.ferrofluid.volume");
  assert_null(d);
}

static void test_load_positions_and_set(void **state)
{
  (void)state;
  char path[512];
  fc_valve_design *d = NULL, *v = NULL;
  fc_valve_pressures p1, p2;
  fc_error e;
  FILE *f = fopen("valve_syntax.json", "w");
  assert_non_null(f);
  fputs("{\n  \"format\": \"ferrocirc-valve/1\",\n  \"channel\": {,}\n}\n", f);
  fclose(f);
  fc_error_clear(&e);
  assert_int_equal(fc_valve_design_load("valve_syntax.json", units, &d, &e), FC_EJSON);
  assert_string_equal(e.file, "valve_syntax.json");
  assert_int_equal(e.line, 3);
  remove("valve_syntax.json");
  snprintf(path, sizeof path, "%s/networks/valves/one-magnet-step.json", FC_SOURCE_DIR);
  fc_error_clear(&e);
  assert_int_equal(fc_valve_design_load(path, units, &d, &e), FC_OK);
  assert_int_equal(fc_valve_design_set(d, "magnets[0].gap", "2 mm", units, &v, &e), FC_OK);
  assert_int_equal(fc_valve_design_solve(d, &p1, &e), FC_OK);
  assert_int_equal(fc_valve_design_solve(v, &p2, &e), FC_OK);
  assert_true(p2.crack_forward < p1.crack_forward); /* a farther magnet holds less */
  fc_valve_design_free(v);
  v = NULL;
  assert_int_equal(fc_valve_design_set(d, "magnets[0].gapp", "2 mm", units, &v, &e), FC_EPARAM);
  assert_string_equal(e.path, "$.magnets[0].gapp");
  assert_int_equal(fc_valve_design_set(d, "magnets[3].gap", "2 mm", units, &v, &e), FC_EPARAM);
  fc_valve_design_free(d);
}

static void test_cli(void **state)
{
  (void)state;
  char path[512];
  snprintf(path, sizeof path, "%s/networks/valves/taper.json", FC_SOURCE_DIR);
  char *ok[] = {"valve", path, "--json"};
  assert_int_equal(fc_valve_cli(3, ok), 0);
  char *vary[] = {"valve", path, "--vary", "magnets[0].gap=0.5mm..2mm", "--steps", "4", "-o",
                  "valve_vary.csv"};
  assert_int_equal(fc_valve_cli(8, vary), 0);
  FILE *f = fopen("valve_vary.csv", "r");
  assert_non_null(f);
  char line[512];
  int n = 0;
  while (fgets(line, sizeof line, f)) n++;
  fclose(f);
  assert_int_equal(n, 5);
  remove("valve_vary.csv");
  char *bad[] = {"valve", path, "--steps", "1"};
  assert_int_equal(fc_valve_cli(4, bad), 2);
  char *missing[] = {"valve", "no-such-design.json"};
  assert_int_equal(fc_valve_cli(2, missing), 1);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(test_symmetric_design_is_symmetric),
    cmocka_unit_test(test_mirror_swaps_directions),
    cmocka_unit_test(test_hysteresis_order),
    cmocka_unit_test(test_ideal_burst_bound),
    cmocka_unit_test(test_plausibility_of_the_trade),
    cmocka_unit_test(test_errors_name_the_path),
    cmocka_unit_test(test_load_positions_and_set),
    cmocka_unit_test(test_cli),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
