/* Tests of water properties (src/fluid.c) against physics-reference §11 P1–P4. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>

#include "ferrocirc/fluid.h"

static void near_rel(double got, double want, double rtol)
{
  if (fabs(got - want) > rtol * fabs(want)) {
    print_error("got %.12g, expected %.12g (rtol %g)\n", got, want, rtol);
    fail();
  }
}

static void density_tanaka_2001(void **state)
{
  (void)state;
  near_rel(fc_water_density(293.15), 998.2067, 1e-6); /* P1: Tanaka et al. 2001, 20 degC */
  near_rel(fc_water_density(310.15), 993.3290, 1e-6); /* P1: Tanaka et al. 2001, 37 degC */
  /* Tanaka 2001: the formula peaks at t = -a1 = 3.983035 degC with rho = a5 = 999.974950 */
  near_rel(fc_water_density(277.133035), 999.974950, 1e-12);
  assert_true(fc_water_density(277.133035) > fc_water_density(277.0));
  assert_true(fc_water_density(277.133035) > fc_water_density(277.3));
}

static void viscosity_iapws_2008_check_point(void **state)
{
  (void)state;
  near_rel(fc_water_viscosity(298.15, 998.0), 889.735100e-6, 1e-8); /* P3: IAPWS R12-08 Table 4 */
}

static void viscosity_at_20_and_37_degC(void **state)
{
  (void)state;
  near_rel(fc_water_viscosity(293.15, 998.2067), 1.001596e-3, 1e-5);  /* P2: IAPWS 2008 */
  near_rel(fc_water_viscosity(310.15, 993.3290), 0.6913034e-3, 1e-5); /* P2: IAPWS 2008 */
}

static void surface_tension_iapws_r1_76(void **state)
{
  (void)state;
  near_rel(fc_water_surface_tension(293.15), 72.73614e-3, 1e-6); /* P4: IAPWS R1-76(2014) */
  near_rel(fc_water_surface_tension(310.15), 70.08145e-3, 1e-6); /* P4: IAPWS R1-76(2014) */
  assert_true(fc_water_surface_tension(700.0) == 0.0);           /* above Tc = 647.096 K */
}

static void defaults_at_37_degC_match_the_functions(void **state)
{
  (void)state;
  fc_water w;
  fc_error err;
  assert_int_equal(fc_water_props(FC_WATER37_T, &w, "$.fluid.temperature", &err), FC_OK);
  near_rel(w.density, FC_WATER37_DENSITY, 1e-9);
  near_rel(w.viscosity, FC_WATER37_VISCOSITY, 1e-9);
  near_rel(w.tension, FC_WATER37_TENSION, 1e-9);
  near_rel(FC_WATER37_DENSITY, 993.3290, 1e-6);      /* P1 */
  near_rel(FC_WATER37_VISCOSITY, 0.6913034e-3, 1e-5); /* P2 */
  near_rel(FC_WATER37_TENSION, 70.08145e-3, 1e-6);   /* P4 */
}

static void out_of_range_temperature_is_refused(void **state)
{
  (void)state;
  fc_water w;
  fc_error err;
  fc_error_clear(&err);
  assert_int_equal(fc_water_props(353.15, &w, "$.fluid.temperature", &err), FC_EPARAM);
  assert_string_equal(err.path, "$.fluid.temperature");
  assert_int_equal(fc_water_props(NAN, &w, "$.fluid.temperature", &err), FC_EPARAM);
  assert_int_equal(fc_water_props(272.0, &w, "$.fluid.temperature", &err), FC_EPARAM);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(density_tanaka_2001),
    cmocka_unit_test(viscosity_iapws_2008_check_point),
    cmocka_unit_test(viscosity_at_20_and_37_degC),
    cmocka_unit_test(surface_tension_iapws_r1_76),
    cmocka_unit_test(defaults_at_37_degC_match_the_functions),
    cmocka_unit_test(out_of_range_temperature_is_refused),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
