/* fc_sim_run against analytic solutions of linear networks. Every network is built from a JSON
 * string, run with tight tolerances, and each recorded sample compared with the closed-form
 * answer named beside it. Physics reference = /work/shared/physics-reference.md (§ and §11 row).
 *
 *   bridge         resistor bridge with a flow source: nodal analysis by hand (in the comment)
 *   rc_charge      reservoir step -> R -> C: p = P (1 - exp(-t/RC))
 *   rc_r7_c3       channel R7 into bubble-sized compliance C3: tau = C5
 *   sine_rc        three ways to drive an RC with a sine: full solution incl. transient, and
 *                  amplitude/phase of 1/(1 + j w RC) fitted over the last cycle
 *   rlc            inertial tube into a compliance, under- and overdamped step responses
 *   algebraic      no compliance anywhere: p = R Q(t) instantly */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include "test_sim_rec.h"

#define PI 3.14159265358979323846
#define JSON_MAX 4096

/* ---- resistor bridge ---- */

/* Nodes a (reservoir 1000 Pa), g (reservoir 0), b, c. R1 a-b 1e12, R2 a-c 2e12, R3 b-g 2e12,
 * R4 c-g 1e12, R5 b-c 1e12 [Pa s/m^3], flow source g -> b Q = 1e-10 m^3/s. Hand solution
 * (conductances in 1e-12 m^3/(Pa s), pressures in Pa):
 *   node b: (1000 - pb) 1 + (pc - pb) 1 - pb 0.5 + 100 = 0  ->  2.5 pb - pc = 1100
 *   node c: (1000 - pc) 0.5 + (pb - pc) 1 - pc 1 = 0       ->  2.5 pc - pb = 500
 *   => pb = 13000/21 = 619.047619..., pc = 9400/21 = 447.619047...,
 *      q(R5) = (pb - pc)/R5 = 3600/21 * 1e-12 m^3/s, q(R1) = (1000 - pb)/R1 = 8000/21 * 1e-12. */
static const char bridge_json[] =
  "{\"format\":\"ferrocirc-network/1\",\"elements\":["
  "{\"id\":\"A\",\"type\":\"reservoir\",\"node\":\"a\",\"pressure\":\"10 mbar\"},"
  "{\"id\":\"G\",\"type\":\"reservoir\",\"node\":\"g\"},"
  "{\"id\":\"R1\",\"type\":\"resistor\",\"from\":\"a\",\"to\":\"b\",\"resistance\":1e12},"
  "{\"id\":\"R2\",\"type\":\"resistor\",\"from\":\"a\",\"to\":\"c\",\"resistance\":2e12},"
  "{\"id\":\"R3\",\"type\":\"resistor\",\"from\":\"b\",\"to\":\"g\",\"resistance\":2e12},"
  "{\"id\":\"R4\",\"type\":\"resistor\",\"from\":\"c\",\"to\":\"g\",\"resistance\":1e12},"
  "{\"id\":\"R5\",\"type\":\"resistor\",\"from\":\"b\",\"to\":\"c\",\"resistance\":1e12},"
  "{\"id\":\"Q\",\"type\":\"flow_source\",\"from\":\"g\",\"to\":\"b\",\"flow\":\"0.1 uL/s\"}],"
  "\"simulation\":{\"duration\":\"1 s\",\"sample_interval\":\"0.25 s\"}}";

static void bridge_matches_nodal_analysis(void **state)
{
  (void)state;
  run R;
  run_json(&R, bridge_json);
  assert_int_equal(R.rc_load, FC_OK);
  assert_int_equal(R.rc_sim, FC_OK);
  assert_int_equal(R.r.n, 5);
  for (size_t k = 0; k < R.r.n; k++) {
    CHECK_CLOSE(rec_p(&R.r, R.net, k, "b"), 13000.0 / 21, 1e-12, 1000, "pb (hand solution)");
    CHECK_CLOSE(rec_p(&R.r, R.net, k, "c"), 9400.0 / 21, 1e-12, 1000, "pc (hand solution)");
    CHECK_CLOSE(rec_q(&R.r, R.net, k, "R5"), 3600.0 / 21 * 1e-12, 1e-12, 1e-9, "q(R5) (hand)");
    CHECK_CLOSE(rec_q(&R.r, R.net, k, "R1"), 8000.0 / 21 * 1e-12, 1e-12, 1e-9, "q(R1) (hand)");
    CHECK_CLOSE(rec_q(&R.r, R.net, k, "Q"), 1e-10, 1e-12, 1e-10, "q(Q) imposed");
  }
  run_free(&R);
}

/* ---- RC charge ---- */

/* Ideal pressure source P = 100 mbar from a grounded reservoir, R = 1e12 Pa s/m^3, C = 1e-13
 * m^3/Pa, so tau = 0.1 s. Reference: C dp/dt = (P - p)/R, p(0) = 0 => p = P (1 - exp(-t/tau))
 * (the RC charging law, physics reference §2). Required: 1e-5 relative (issue 2). */
static void rc_charge_follows_exponential(void **state)
{
  (void)state;
  const char *json =
    "{\"format\":\"ferrocirc-network/1\",\"elements\":["
    "{\"id\":\"gnd\",\"type\":\"reservoir\",\"node\":\"g\"},"
    "{\"id\":\"P\",\"type\":\"pressure_source\",\"from\":\"g\",\"to\":\"in\",\"pressure\":\"100 mbar\"},"
    "{\"id\":\"R\",\"type\":\"resistor\",\"from\":\"in\",\"to\":\"c\",\"resistance\":1e12},"
    "{\"id\":\"C\",\"type\":\"chamber\",\"node\":\"c\",\"compliance\":1e-13}],"
    "\"simulation\":{\"duration\":\"0.6 s\",\"sample_interval\":\"10 ms\",\"rel_tol\":1e-8,"
    "\"abs_tol\":\"1e-6 Pa\"}}";
  run R;
  run_json(&R, json);
  assert_int_equal(R.rc_sim, FC_OK);
  assert_int_equal(R.r.n, 61);
  double P = 1e4, tau = 0.1, worst = 0;
  for (size_t k = 1; k < R.r.n; k++) {
    double t = R.r.t[k], want = P * -expm1(-t / tau), got = rec_p(&R.r, R.net, k, "c");
    CHECK_CLOSE(got, want, 1e-5, want, "RC charge p(t) = P(1 - e^-t/RC)");
    worst = fmax(worst, fabs(got - want) / want);
    CHECK_CLOSE(rec_q(&R.r, R.net, k, "R"), (P - want) / 1e12, 1e-5, P / 1e12, "RC charge q");
  }
  print_message("rc_charge: max relative error of p(t) %.2e\n", worst);
  run_free(&R);
}

/* Channel 100 x 50 um x 10 mm, water at 20 °C (mu = 1.0016 mPa s): R7 = 1.401564e13 Pa s/m^3;
 * compliance of 1 uL of gas at 101325 Pa, C3 = 9.869233e-15 m^3/Pa (isothermal V/p); their
 * product C5: tau = 0.1383236 s (tol 1e-5). tau is recovered from each sample as
 * -t / ln(1 - p/P). */
static void rc_of_r7_and_c3_has_tau_c5(void **state)
{
  (void)state;
  char json[JSON_MAX];
  snprintf(json, sizeof json,
    "{\"format\":\"ferrocirc-network/1\",\"fluid\":{\"viscosity\":\"1.0016 mPa.s\"},\"elements\":["
    "{\"id\":\"in\",\"type\":\"reservoir\",\"node\":\"in\",\"pressure\":\"50 mbar\"},"
    "{\"id\":\"ch\",\"type\":\"channel\",\"from\":\"in\",\"to\":\"c\",\"length\":\"10 mm\","
    "\"width\":\"100 um\",\"height\":\"50 um\"},"
    "{\"id\":\"C\",\"type\":\"chamber\",\"node\":\"c\",\"compliance\":%.17g}],"
    "\"simulation\":{\"duration\":\"0.5 s\",\"sample_interval\":\"50 ms\",\"rel_tol\":1e-9,"
    "\"abs_tol\":\"1e-7 Pa\"}}", 1e-9 / 101325.0);
  run R;
  run_json(&R, json);
  assert_int_equal(R.rc_sim, FC_OK);
  const double P = 5000, R7 = 1.401564e13, C5 = 0.1383236;
  /* At t = 0 the chamber is at 0 gauge: q = P / R7 (R7, tol 1e-6). */
  CHECK_CLOSE(rec_q(&R.r, R.net, 0, "ch"), P / R7, 1e-6, P / R7, "q(0) = P/R7");
  double worst = 0;
  for (size_t k = 1; k < R.r.n; k++) {
    double tau = -R.r.t[k] / log1p(-rec_p(&R.r, R.net, k, "c") / P);
    CHECK_CLOSE(tau, C5, 1e-5, C5, "tau = R7 x C3 (C5)");
    worst = fmax(worst, fabs(tau - C5) / C5);
  }
  print_message("rc_r7_c3: max relative error of tau vs C5 %.2e\n", worst);
  run_free(&R);
}

/* ---- sine-driven RC ---- */

/* Drive P(t) = M + A sin(w t), M = 500 Pa, A = 1000 Pa, f = 2 Hz, through R = 1e12 into C = 1e-13
 * (tau = 0.1 s, w tau = 0.4 pi), from rest. Reference (solving C p' = (P - p)/R, p(0) = 0):
 *   p(t) = M (1 - e^(-t/tau)) + A/(1 + (w tau)^2) [sin wt - w tau cos wt + w tau e^(-t/tau)],
 * whose periodic part has gain |H| = 1/sqrt(1 + (w tau)^2) and phase -atan(w tau), H = 1/(1 + j w RC)
 * (physics reference §2). */
static const char *const sine_forms[] = {
  /* a sine reservoir feeding a resistor */
  "{\"id\":\"in\",\"type\":\"reservoir\",\"node\":\"in\",\"pressure\":%s},"
  "{\"id\":\"R\",\"type\":\"resistor\",\"from\":\"in\",\"to\":\"c\",\"resistance\":1e12},",
  /* a pressure source with internal resistance (Thevenin form) */
  "{\"id\":\"g\",\"type\":\"reservoir\",\"node\":\"g\"},"
  "{\"id\":\"R\",\"type\":\"pressure_source\",\"from\":\"g\",\"to\":\"c\",\"pressure\":%s,"
  "\"resistance\":1e12},",
  /* an ideal pressure source, then a resistor */
  "{\"id\":\"g\",\"type\":\"reservoir\",\"node\":\"g\"},"
  "{\"id\":\"P\",\"type\":\"pressure_source\",\"from\":\"g\",\"to\":\"in\",\"pressure\":%s},"
  "{\"id\":\"R\",\"type\":\"resistor\",\"from\":\"in\",\"to\":\"c\",\"resistance\":1e12},",
};

static void sine_rc_matches_transfer_function(void **state)
{
  (void)state;
  const char *wave = "{\"shape\":\"sine\",\"mean\":\"500 Pa\",\"amplitude\":\"10 mbar\","
                     "\"frequency\":\"2 Hz\"}";
  const double M = 500, A = 1000, w = 2 * PI * 2, tau = 0.1, wt = w * tau;
  for (size_t f = 0; f < sizeof sine_forms / sizeof sine_forms[0]; f++) {
    char els[1024], json[JSON_MAX];
    snprintf(els, sizeof els, sine_forms[f], wave);
    snprintf(json, sizeof json,
             "{\"format\":\"ferrocirc-network/1\",\"elements\":[%s"
             "{\"id\":\"C\",\"type\":\"chamber\",\"node\":\"c\",\"compliance\":1e-13}],"
             "\"simulation\":{\"duration\":\"5 s\",\"sample_interval\":\"5 ms\",\"rel_tol\":1e-9,"
             "\"abs_tol\":\"1e-6 Pa\"}}", els);
    run R;
    run_json(&R, json);
    assert_int_equal(R.rc_sim, FC_OK);
    assert_int_equal(R.r.n, 1001);
    double worst = 0, a = 0, b = 0;
    for (size_t k = 0; k < R.r.n; k++) {
      double t = R.r.t[k], e = exp(-t / tau);
      double want = M * (1 - e) + A / (1 + wt * wt) * (sin(w * t) - wt * cos(w * t) + wt * e);
      double got = rec_p(&R.r, R.net, k, "c");
      CHECK_CLOSE(got, want, 1e-6, A, "sine RC p(t), full analytic solution");
      worst = fmax(worst, fabs(got - want) / A);
      if (k >= 900 && k < 1000) { /* the last cycle: 100 equally spaced samples of one period */
        a += (got - M) * sin(w * t) * 2 / 100;
        b += (got - M) * cos(w * t) * 2 / 100;
      }
    }
    double gain = hypot(a, b) / A, phase = atan2(b, a);
    CHECK_CLOSE(gain, 1 / sqrt(1 + wt * wt), 1e-6, 1, "|H| = 1/sqrt(1 + (w RC)^2)");
    CHECK_CLOSE(phase, -atan(wt), 1e-6, 1, "arg H = -atan(w RC) [rad]");
    print_message("sine_rc form %zu: max error %.2e of A; gain error %.2e, phase error %.2e rad\n",
                  f, worst, fabs(gain - 1 / sqrt(1 + wt * wt)), fabs(phase + atan(wt)));
    run_free(&R);
  }
}

/* A linear network takes one Newton iteration per step attempt (src/sim.c, conv_test: the
 * corrector equation is linear and solved exactly), and keeps the analytic answer above at
 * the default tolerance; a nonlinear one (a gas bubble) still runs CVODE's own convergence
 * test, which needs a second iterate. */
static void linear_network_takes_one_newton_iteration_per_step(void **state)
{
  (void)state;
  const double M = 500, A = 1000, w = 2 * PI * 2, tau = 0.1, wt = w * tau;
  const char *wave = "{\"shape\":\"sine\",\"mean\":\"500 Pa\",\"amplitude\":\"10 mbar\","
                     "\"frequency\":\"2 Hz\"}";
  const char *store[] = {"\"compliance\":1e-13", "\"gas_volume\":\"1 uL\""};
  for (int nl = 0; nl < 2; nl++) {
    char els[1024], json[JSON_MAX];
    snprintf(els, sizeof els, sine_forms[0], wave);
    snprintf(json, sizeof json,
             "{\"format\":\"ferrocirc-network/1\",\"elements\":[%s"
             "{\"id\":\"C\",\"type\":\"chamber\",\"node\":\"c\",%s}],"
             "\"simulation\":{\"duration\":\"2 s\",\"sample_interval\":\"5 ms\"}}", els, store[nl]);
    run R;
    run_json(&R, json);
    assert_int_equal(R.rc_sim, FC_OK);
    const fc_sim_stats *st = &R.res->stats;
    long attempts = st->steps + st->err_test_fails + st->conv_fails;
    print_message("%s: %ld steps, %ld attempts, %ld Newton iterations\n", nl ? "gas bubble" : "linear",
                  st->steps, attempts, st->nonlin_iters);
    if (!nl) {
      assert_true(st->nonlin_iters <= attempts);
      for (size_t k = 0; k < R.r.n; k++) {
        double t = R.r.t[k], e = exp(-t / tau);
        double want = M * (1 - e) + A / (1 + wt * wt) * (sin(w * t) - wt * cos(w * t) + wt * e);
        CHECK_CLOSE(rec_p(&R.r, R.net, k, "c"), want, 1e-4, A, "sine RC p(t) at rel_tol 1e-6");
      }
    } else {
      assert_true(st->nonlin_iters > attempts);
    }
    run_free(&R);
  }
}

/* ---- R-L-C ---- */

/* Tube of C4: rho = 998.2 kg/m^3, r = 0.25 mm, l = 1 m (mu = 1 mPa s), with "inertance": true,
 * from a 10 mbar reservoir into a compliance C, from rest: L q' = P - p - R q, C p' = q.
 * R = 8 mu l/(pi r^4) (Hagen-Poiseuille, §1), L = (4/3) rho l/(pi r^2) (§2, beta = 4/3;
 * C4: 6.778388e9). C = L (2 zeta/R)^2 sets the damping ratio zeta = (R/2) sqrt(C/L) and
 * w0 = 1/sqrt(L C). Step response of the series RLC (any circuits text):
 *   zeta < 1: p = P [1 - e^(-zeta w0 t)(cos wd t + zeta/sqrt(1 - zeta^2) sin wd t)],
 *             q = C P w0/sqrt(1 - zeta^2) e^(-zeta w0 t) sin wd t,  wd = w0 sqrt(1 - zeta^2);
 *   zeta > 1: s1,2 = w0 (-zeta +- sqrt(zeta^2 - 1)), p = P [1 + (s2 e^(s1 t) - s1 e^(s2 t))/(s1 - s2)],
 *             q = C p' = C P s1 s2 (e^(s1 t) - e^(s2 t))/(s1 - s2).
 * These damping ratios need a Womersley number of ~3 where the lumped tube is ~4 % off the
 * exact impedance (§2, W2): this checks the integration of the lumped model, not its physics. */
static void rlc_tube_matches_damped_response(void **state)
{
  (void)state;
  const double rho = 998.2, mu = 1e-3, r = 0.25e-3, l = 1.0, P = 1000;
  const double Rh = 8 * mu * l / (PI * pow(r, 4)), Lh = 4.0 / 3.0 * rho * l / (PI * r * r);
  CHECK_CLOSE(Lh, 6.778388e9, 1e-6, 6.778388e9, "inertance x 4/3 (C4)");
  const double zetas[] = {0.2, 2.0}, durations[] = {0.25, 1.0};
  for (int c = 0; c < 2; c++) {
    double zeta = zetas[c], C = Lh * pow(2 * zeta / Rh, 2), w0 = 1 / sqrt(Lh * C);
    char json[JSON_MAX];
    snprintf(json, sizeof json,
      "{\"format\":\"ferrocirc-network/1\",\"fluid\":{\"density\":998.2,\"viscosity\":0.001},"
      "\"elements\":[{\"id\":\"in\",\"type\":\"reservoir\",\"node\":\"in\",\"pressure\":\"10 mbar\"},"
      "{\"id\":\"tube\",\"type\":\"channel\",\"from\":\"in\",\"to\":\"c\",\"length\":\"1 m\","
      "\"diameter\":\"0.5 mm\",\"inertance\":true},"
      "{\"id\":\"C\",\"type\":\"chamber\",\"node\":\"c\",\"compliance\":%.17g}],"
      "\"simulation\":{\"duration\":%g,\"sample_interval\":%g,\"rel_tol\":1e-10,"
      "\"abs_tol\":\"1e-7 Pa\",\"abs_tol_flow\":1e-19}}", C, durations[c], durations[c] / 2000);
    run R;
    run_json(&R, json);
    assert_int_equal(R.rc_sim, FC_OK);
    double wp = 0, wq = 0, qscale = 0, p_want[2001], q_want[2001];
    assert_int_equal(R.r.n, 2001);
    for (size_t k = 0; k < R.r.n; k++) {
      double t = R.r.t[k];
      if (zeta < 1) {
        double wd = w0 * sqrt(1 - zeta * zeta), e = exp(-zeta * w0 * t);
        p_want[k] = P * (1 - e * (cos(wd * t) + zeta / sqrt(1 - zeta * zeta) * sin(wd * t)));
        q_want[k] = C * P * w0 / sqrt(1 - zeta * zeta) * e * sin(wd * t);
      } else {
        double s1 = w0 * (-zeta + sqrt(zeta * zeta - 1)), s2 = w0 * (-zeta - sqrt(zeta * zeta - 1));
        p_want[k] = P * (1 + (s2 * exp(s1 * t) - s1 * exp(s2 * t)) / (s1 - s2));
        q_want[k] = C * P * s1 * s2 * (exp(s1 * t) - exp(s2 * t)) / (s1 - s2);
      }
      qscale = fmax(qscale, fabs(q_want[k]));
    }
    for (size_t k = 0; k < R.r.n; k++) {
      double gp = rec_p(&R.r, R.net, k, "c"), gq = rec_q(&R.r, R.net, k, "tube");
      CHECK_CLOSE(gp, p_want[k], 1e-6, P, "RLC p(t), analytic step response");
      CHECK_CLOSE(gq, q_want[k], 1e-6, qscale, "RLC q(t), analytic step response");
      wp = fmax(wp, fabs(gp - p_want[k]) / P);
      wq = fmax(wq, fabs(gq - q_want[k]) / qscale);
    }
    print_message("rlc zeta %.1f: max error p %.2e of P, q %.2e of max q\n", zeta, wp, wq);
    run_free(&R);
  }
}

/* ---- no compliance anywhere ---- */

/* Flow source Q(t) = 10 + 5 sin(2 pi 3 t) uL/min from ground into a, then R1 = 2e12 a -> b and
 * R2 = 3e12 b -> ground. Ohm's law for the series resistors: p_a = (R1 + R2) Q(t),
 * p_b = R2 Q(t), q(R1) = q(R2) = Q(t), with no lag (quasi-static network, issue 2). */
static void algebraic_network_follows_sources_instantly(void **state)
{
  (void)state;
  const char *json =
    "{\"format\":\"ferrocirc-network/1\",\"elements\":["
    "{\"id\":\"g\",\"type\":\"reservoir\",\"node\":\"g\"},"
    "{\"id\":\"Q\",\"type\":\"flow_source\",\"from\":\"g\",\"to\":\"a\",\"flow\":{\"shape\":\"sine\","
    "\"mean\":\"10 uL/min\",\"amplitude\":\"5 uL/min\",\"frequency\":\"3 Hz\"}},"
    "{\"id\":\"R1\",\"type\":\"resistor\",\"from\":\"a\",\"to\":\"b\",\"resistance\":2e12},"
    "{\"id\":\"R2\",\"type\":\"resistor\",\"from\":\"b\",\"to\":\"g\",\"resistance\":3e12}],"
    "\"simulation\":{\"duration\":\"1 s\",\"sample_interval\":\"1 ms\"}}";
  run R;
  run_json(&R, json);
  assert_int_equal(R.rc_sim, FC_OK);
  assert_int_equal(R.r.n, 1001);
  const double q0 = 10e-9 / 60, q1 = 5e-9 / 60, pmax = 5e12 * (q0 + q1);
  double worst = 0;
  for (size_t k = 0; k < R.r.n; k++) {
    double Q = q0 + q1 * sin(2 * PI * 3 * R.r.t[k]);
    CHECK_CLOSE(rec_p(&R.r, R.net, k, "a"), 5e12 * Q, 1e-9, pmax, "p_a = (R1 + R2) Q(t)");
    CHECK_CLOSE(rec_p(&R.r, R.net, k, "b"), 3e12 * Q, 1e-9, pmax, "p_b = R2 Q(t)");
    CHECK_CLOSE(rec_q(&R.r, R.net, k, "R2"), Q, 1e-9, q0 + q1, "q(R2) = Q(t)");
    worst = fmax(worst, fabs(rec_p(&R.r, R.net, k, "a") - 5e12 * Q) / pmax);
  }
  print_message("algebraic: max error of p_a %.2e of its peak\n", worst);
  run_free(&R);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(bridge_matches_nodal_analysis),
    cmocka_unit_test(rc_charge_follows_exponential),
    cmocka_unit_test(rc_of_r7_and_c3_has_tau_c5),
    cmocka_unit_test(sine_rc_matches_transfer_function),
    cmocka_unit_test(linear_network_takes_one_newton_iteration_per_step),
    cmocka_unit_test(rlc_tube_matches_damped_response),
    cmocka_unit_test(algebraic_network_follows_sources_instantly),
  };
  return cmocka_run_group_tests(tests, units_setup, units_teardown);
}
