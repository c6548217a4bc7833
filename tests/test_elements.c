/* The table-driven battery over every registered element type (fci_registry_all), plus analytic
 * checks of each type's law. Check values name their source: physics reference
 * (/work/shared/physics-reference.md §11, [D] = derived there) or the formula used.
 *
 * Battery: names unique, tables well formed; every type has good and bad snippets; good snippets
 * pass the engine's key check and parse; bad ones fail with the exact JSON path; passive FLOW
 * elements carry no flow without a pressure difference; analytic partials (xFlow, xRhs) match
 * central differences to 1e-6 relative; xStore's dC/dp and xVolume' = C match differences. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "elem.h"
#include "ferrocirc/alloc.h"
#include "ferrocirc/hydraulics.h"

#define EPATH "$.elements[0]"
#define PI 3.14159265358979323846
#define GN 9.80665 /* standard gravity, exact (CGPM 1901) */

/* Keys every element accepts (as src/net_elems.c passes them to fci_check_keys). */
static const char *const common_keys[] = {"id", "type", "from", "to", "node", "note", NULL};

/* Water at 20 C: rho 998.2067 kg/m^3 (P1, Tanaka 2001), mu 1.0016 mPa s (§3 table, IAPWS). */
static const fci_fluid water20 = {1.0016e-3, 998.2067, 101325.0};

typedef struct good_case {
  const char *type, *json;
  int passive; /* 1: FLOW element that is passive (q = 0 when pa = pb and states at rest) */
} good_case;

static const good_case goods[] = {
  {"reservoir", "{}", 0},
  {"reservoir", "{\"pressure\":\"20 mbar\",\"liquid_height\":\"5 cm\"}", 0},
  {"reservoir", "{\"pressure\":{\"shape\":\"sine\",\"mean\":\"10 mbar\",\"amplitude\":\"2 mbar\","
                "\"frequency\":\"1 Hz\"}}", 0},
  {"channel", "{\"length\":\"10 mm\",\"diameter\":\"100 um\"}", 1},
  {"channel", "{\"length\":\"10 mm\",\"width\":\"100 um\",\"height\":\"50 um\","
              "\"culture\":true}", 1},
  {"channel", "{\"length\":0.05,\"width\":5e-4,\"height\":1e-3,\"viscosity\":\"0.7 mPa.s\","
              "\"inertance\":true}", 1},
  {"channel", "{\"length\":\"1 m\",\"diameter\":\"0.5 mm\",\"inertance\":true}", 1},
  {"resistor", "{\"resistance\":\"1e12 Pa.s/m3\"}", 1},
  {"chamber", "{\"compliance\":1e-14}", 0},
  {"chamber", "{\"gas_volume\":\"1 uL\",\"culture\":true}", 0},
  {"chamber", "{\"gas_volume\":\"2 uL\",\"gas_pressure\":\"100 mbar\",\"backing_pressure\":"
              "{\"shape\":\"sine\",\"mean\":\"50 mbar\",\"amplitude\":\"30 mbar\","
              "\"frequency\":\"2 Hz\"}}", 0},
  {"chamber", "{\"tube\":{\"diameter\":\"1 mm\",\"wall_thickness\":\"1 mm\","
              "\"youngs_modulus\":\"1.5 MPa\",\"length\":\"1 m\"}}", 0},
  {"chamber", "{\"tube\":{\"diameter\":\"1 mm\",\"wall_thickness\":\"0.2 mm\",\"youngs_modulus\":"
              "2e6,\"length\":0.1,\"poisson_ratio\":0.3},\"backing_pressure\":\"5 kPa\"}", 0},
  {"flow_source", "{\"flow\":\"10 uL/min\"}", 0},
  {"flow_source", "{\"flow\":{\"shape\":\"sine\",\"mean\":\"10 uL/min\",\"amplitude\":"
                  "\"5 uL/min\",\"period\":\"0.25 s\"}}", 0},
  {"pressure_source", "{\"pressure\":\"100 mbar\"}", 0},
  {"pressure_source", "{\"pressure\":{\"shape\":\"sine\",\"mean\":\"50 mbar\",\"amplitude\":"
                      "\"20 mbar\",\"frequency\":\"4 Hz\"},\"resistance\":3e11}", 0},
  {"check_valve", "{\"crack_forward\":\"5 mmHg\",\"crack_reverse\":\"1 bar\","
                  "\"open_resistance\":\"1e11 Pa.s/m3\"}", 1},
  {"check_valve", "{\"crack_forward\":500,\"crack_reverse\":2000,\"reseat_forward\":100,"
                  "\"reseat_reverse\":800,\"blowout\":\"100 mbar\",\"open_resistance\":1e11,"
                  "\"leak_conductance\":0}", 1},
  {"ferrofluid_valve", "{\"crack_forward\":\"4 mmHg\",\"crack_reverse\":\"20 mmHg\","
                       "\"reseat_forward\":\"1 mmHg\",\"reseat_reverse\":\"9 mmHg\","
                       "\"blowout_forward\":\"40 mmHg\",\"blowout_reverse\":\"60 mmHg\","
                       "\"open_resistance\":2e11}", 1},
};

typedef struct bad_case {
  const char *type, *json, *path; /* path relative to the element, "" = the element itself */
} bad_case;

static const bad_case bads[] = {
  {"reservoir", "{\"pressure\":\"abc\"}", ".pressure"},
  {"reservoir", "{\"liquid_height\":\"1 Pa\"}", ".liquid_height"},
  {"reservoir", "{\"volume\":1}", ".volume"},
  {"channel", "{\"length\":-0.01,\"diameter\":1e-4}", ".length"},
  {"channel", "{\"diameter\":1e-4}", ".length"},
  {"channel", "{\"length\":0.01}", ".diameter"},
  {"channel", "{\"length\":0.01,\"diameter\":1e-4,\"width\":1e-4}", ".width"},
  {"channel", "{\"length\":0.01,\"width\":1e-4}", ".height"},
  {"channel", "{\"length\":0.01,\"height\":1e-4}", ".width"},
  {"channel", "{\"length\":0.01,\"diameter\":\"5 kg\"}", ".diameter"},
  {"channel", "{\"length\":0.01,\"diameter\":1e-4,\"viscosity\":0}", ".viscosity"},
  {"channel", "{\"length\":0.01,\"diameter\":1e-4,\"inertance\":\"yes\"}", ".inertance"},
  {"channel", "{\"lenght\":0.01,\"diameter\":1e-4}", ".lenght"},
  {"check_valve", "{\"crack_reverse\":2000,\"open_resistance\":1e11}", ".crack_forward"},
  {"check_valve", "{\"crack_forward\":500,\"crack_reverse\":2000}", ".open_resistance"},
  {"check_valve", "{\"crack_forward\":500,\"crack_reverse\":2000,\"reseat_forward\":600,"
                  "\"open_resistance\":1e11}", ".reseat_forward"},
  {"check_valve", "{\"crack_forward\":500,\"crack_reverse\":2000,\"reseat_reverse\":2000,"
                  "\"open_resistance\":1e11}", ".reseat_reverse"},
  {"check_valve", "{\"crack_forward\":500,\"crack_reverse\":2000,\"blowout\":1000,"
                  "\"open_resistance\":1e11}", ".blowout"},
  {"check_valve", "{\"crack_forward\":\"5 mm\",\"crack_reverse\":2000,\"open_resistance\":1e11}",
   ".crack_forward"},
  {"check_valve", "{\"crack_forward\":500,\"crack_reverse\":2000,\"open_resistance\":1e11,"
                  "\"leak_conductance\":-1}", ".leak_conductance"},
  {"ferrofluid_valve", "{\"crack_forward\":500,\"open_resistance\":1e11}", ".crack_reverse"},
  {"ferrofluid_valve", "{\"design\":5,\"open_resistance\":1e11}", ".design"},
  {"resistor", "{}", ".resistance"},
  {"resistor", "{\"resistance\":-1e12}", ".resistance"},
  {"resistor", "{\"resistance\":\"1 m\"}", ".resistance"},
  {"chamber", "{}", ".compliance"},
  {"chamber", "{\"compliance\":-1e-14}", ".compliance"},
  {"chamber", "{\"compliance\":1e-14,\"gas_volume\":1e-9}", ".gas_volume"},
  {"chamber", "{\"compliance\":1e-14,\"gas_pressure\":100}", ".gas_pressure"},
  {"chamber", "{\"gas_volume\":1e-9,\"gas_pressure\":\"-2 bar\"}", ".gas_pressure"},
  {"chamber", "{\"gas_volume\":0}", ".gas_volume"},
  {"chamber", "{\"tube\":5}", ".tube"},
  {"chamber", "{\"tube\":{\"diameter\":1e-3,\"wall_thickness\":1e-3,\"length\":1}}",
   ".tube.youngs_modulus"},
  {"chamber", "{\"tube\":{\"diameter\":1e-3,\"wall_thickness\":1e-3,\"length\":1,"
              "\"youngs_modulus\":1e6,\"poisson_ratio\":0.7}}", ".tube.poisson_ratio"},
  {"chamber", "{\"tube\":{\"diameter\":1e-3,\"thickness\":1e-3,\"length\":1,"
              "\"youngs_modulus\":1e6}}", ".tube.thickness"},
  {"chamber", "{\"compliance\":1e-14,\"backing_pressure\":\"3 m\"}", ".backing_pressure"},
  {"flow_source", "{}", ".flow"},
  {"flow_source", "{\"flow\":\"1 Pa\"}", ".flow"},
  {"pressure_source", "{}", ".pressure"},
  {"pressure_source", "{\"pressure\":100,\"resistance\":0}", ".resistance"},
};

#define N_GOOD (sizeof goods / sizeof goods[0])
#define N_BAD (sizeof bads / sizeof bads[0])

static fc_units *units;

static int setup(void **state)
{
  fc_error err;
  (void)state;
  fc_error_clear(&err);
  return fc_units_open(&units, &err) == FC_OK ? 0 : -1;
}

static int teardown(void **state)
{
  (void)state;
  fc_units_free(units);
  return 0;
}

static const fc_elem_type *find_type(const char *name)
{
  for (const fc_elem_type *const *t = fci_registry_all(); *t; t++)
    if (strcmp((*t)->name, name) == 0) return *t;
  return NULL;
}

/* What the engine does for one element: key check against the table, then xParse. */
static int build_failing(fc_elem *e, const char *type, const char *json,
                         const fci_fluid *fluid, long fail_after, fc_error *err)
{
  fci_parse_ctx ctx = {units, fluid, "", "test.json"};
  memset(e, 0, sizeof *e);
  fc_error_clear(err);
  e->type = find_type(type);
  assert_non_null(e->type);
  e->path = EPATH;
  e->node[0] = 0;
  e->node[1] = e->type->nTermDefault == 2 ? 1 : -1;
  e->nTerm = e->type->nTermDefault;
  e->param = fc_calloc(1, e->type->szParam);
  assert_non_null(e->param);
  cJSON *obj = cJSON_Parse(json);
  assert_non_null(obj);
  fc_alloc_fail_after(fail_after); /* only the element's own allocations may fail */
  int rc = fci_check_keys(obj, common_keys, e->type->keys, EPATH, err);
  if (!rc) rc = e->type->xParse(e, obj, EPATH, &ctx, err);
  fc_alloc_fail_after(-1);
  cJSON_Delete(obj);
  return rc;
}

static int build(fc_elem *e, const char *type, const char *json, const fci_fluid *fluid,
                 fc_error *err)
{
  return build_failing(e, type, json, fluid, -1, err);
}

static void destroy(fc_elem *e)
{
  if (e->type && e->type->xFree) e->type->xFree(e);
  fc_free(e->param);
  e->param = NULL;
}

static void near_rel(double got, double want, double tol, const char *what)
{
  double rel = fabs(got - want) / fmax(fabs(want), 1e-300);
  if (!(rel <= tol)) {
    print_error("%s: got %.10g, want %.10g (rel %.3g > %.3g)\n", what, got, want, rel, tol);
    fail();
  }
}

/* Analytic vs central-difference derivative: relative 1e-6, with an absolute floor `scale`
 * (1e-9 of the row's largest entry) so that exact zeros compare with rounding noise. */
static void near_fd(double an, double fd, double scale, const char *what, const good_case *g)
{
  if (!(fabs(an - fd) <= 1e-6 * fmax(fabs(an), fabs(fd)) + 1e-9 * scale)) {
    print_error("%s %s: analytic %.10g, finite difference %.10g\n", g->json, what, an, fd);
    fail();
  }
}

static void tables_are_well_formed_and_names_unique(void **state)
{
  (void)state;
  int n = 0;
  for (const fc_elem_type *const *t = fci_registry_all(); *t; t++, n++) {
    const fc_elem_type *T = *t;
    assert_int_equal(T->version, FC_ELEM_V);
    assert_non_null(T->name);
    assert_non_null(T->keys);
    assert_non_null(T->xParse);
    assert_true(T->nTermDefault == 1 || T->nTermDefault == 2);
    for (const fc_elem_type *const *u = fci_registry_all(); u != t; u++)
      assert_string_not_equal((*u)->name, T->name);
    for (const char *const *k = T->keys; *k; k++)
      for (const char *const *c = common_keys; *c; c++) assert_string_not_equal(*k, *c);
  }
  assert_true(n >= 6);
}

static void every_type_has_good_and_bad_snippets(void **state)
{
  (void)state;
  for (const fc_elem_type *const *t = fci_registry_all(); *t; t++) {
    int ng = 0, nb = 0;
    for (size_t i = 0; i < N_GOOD; i++) ng += strcmp(goods[i].type, (*t)->name) == 0;
    for (size_t i = 0; i < N_BAD; i++) nb += strcmp(bads[i].type, (*t)->name) == 0;
    if (!ng || !nb) print_error("type \"%s\": %d good, %d bad snippets\n", (*t)->name, ng, nb);
    assert_true(ng > 0 && nb > 0);
  }
}

static void good_snippets_parse_with_consistent_roles(void **state)
{
  (void)state;
  for (size_t i = 0; i < N_GOOD; i++) {
    fc_elem e;
    fc_error err;
    char buf[1400];
    int rc = build(&e, goods[i].type, goods[i].json, &water20, &err);
    if (rc) print_error("%s: %s\n", goods[i].json, fc_error_format(&err, buf, sizeof buf));
    assert_int_equal(rc, FC_OK);
    const fc_elem_type *T = e.type;
    int two = e.role == FC_ROLE_FLOW || e.role == FC_ROLE_LINK;
    assert_int_equal(T->nTermDefault, two ? 2 : 1);
    if (e.role == FC_ROLE_FLOW) assert_non_null(T->xFlow);
    if (e.role == FC_ROLE_STORE) assert_non_null(T->xStore);
    if (e.role == FC_ROLE_FIX || e.role == FC_ROLE_LINK) assert_non_null(T->xFix);
    assert_true(e.role >= FC_ROLE_FLOW && e.role <= FC_ROLE_LINK);
    assert_true(e.nState >= 0 && e.nState <= FCI_MAX_OWN);
    if (e.nState) assert_non_null(T->xRhs);
    assert_non_null(T->xInfo);
    fci_info info;
    memset(&info, 0, sizeof info);
    T->xInfo(&e, &water20, &info);
    assert_true(strlen(info.text) > 0);
    if (goods[i].passive) assert_true(info.resistance > 0);
    destroy(&e);
  }
}

static void bad_snippets_fail_with_exact_path(void **state)
{
  (void)state;
  for (size_t i = 0; i < N_BAD; i++) {
    fc_elem e;
    fc_error err;
    char want[256], buf[1400];
    snprintf(want, sizeof want, "%s%s", EPATH, bads[i].path);
    int rc = build(&e, bads[i].type, bads[i].json, &water20, &err);
    if (rc == FC_OK || strcmp(err.path, want) != 0)
      print_error("%s %s: rc %d, error \"%s\", want path %s\n", bads[i].type, bads[i].json, rc,
                  fc_error_format(&err, buf, sizeof buf), want);
    assert_int_not_equal(rc, FC_OK);
    assert_string_equal(err.path, want);
    assert_true(strlen(err.msg) > 0);
    destroy(&e);
  }
}

static void passive_flow_elements_carry_no_flow_at_zero_dp(void **state)
{
  (void)state;
  for (size_t i = 0; i < N_GOOD; i++) {
    if (!goods[i].passive) continue;
    fc_elem e;
    fc_error err;
    assert_int_equal(build(&e, goods[i].type, goods[i].json, &water20, &err), FC_OK);
    double x[FCI_MAX_OWN] = {0}, p[2] = {1234.5, 1234.5}, dx[FCI_MAX_OWN] = {0};
    double J[FCI_MAX_OWN * (2 + FCI_MAX_OWN)];
    fci_flow f;
    e.type->xFlow(&e, 0.3, p, x, &f);
    assert_true(f.q == 0.0);
    if (e.nState) {
      assert_int_equal(e.type->xRhs(&e, 0.3, p, x, dx, J), 0);
      for (int k = 0; k < e.nState; k++) assert_true(dx[k] == 0.0);
    }
    destroy(&e);
  }
}

/* Central differences of q and of the own-state derivatives in p_from, p_to and each state. */
static void check_flow_partials(fc_elem *e, const good_case *g, double t)
{
  const fc_elem_type *T = e->type;
  int ns = e->nState, nc = 2 + ns;
  double p[2] = {1523.0, -377.0}, x[FCI_MAX_OWN] = {3.1e-11, -1.7e-11, 2e-12, 5e-12};
  double fd[2 + FCI_MAX_OWN], dx0[FCI_MAX_OWN], J[FCI_MAX_OWN * (2 + FCI_MAX_OWN)];
  double Jfd[FCI_MAX_OWN * (2 + FCI_MAX_OWN)];
  fci_flow f0, fp, fm;
  T->xFlow(e, t, p, x, &f0);
  if (ns) assert_int_equal(T->xRhs(e, t, p, x, dx0, J), 0);
  for (int j = 0; j < nc; j++) {
    double *v = j < 2 ? &p[j] : &x[j - 2], v0 = *v;
    double h = j < 2 ? 1e-3 * fmax(fabs(v0), 1e3) : 1e-4 * fmax(fabs(v0), 1e-12);
    double dp[FCI_MAX_OWN], dm[FCI_MAX_OWN], Jt[FCI_MAX_OWN * (2 + FCI_MAX_OWN)];
    *v = v0 + h;
    T->xFlow(e, t, p, x, &fp);
    if (ns) T->xRhs(e, t, p, x, dp, Jt);
    *v = v0 - h;
    T->xFlow(e, t, p, x, &fm);
    if (ns) T->xRhs(e, t, p, x, dm, Jt);
    *v = v0;
    fd[j] = (fp.q - fm.q) / (2 * h);
    for (int k = 0; k < ns; k++) Jfd[k * nc + j] = (dp[k] - dm[k]) / (2 * h);
  }
  double an[2 + FCI_MAX_OWN] = {f0.dq_dpa, f0.dq_dpb};
  for (int m = 0; m < ns; m++) an[2 + m] = f0.dq_dx[m];
  /* scale: the largest q-partial times a typical change (1 kPa for p, the state for x) */
  double scale = 0.0;
  for (int j = 0; j < nc; j++) scale = fmax(scale, fabs(an[j]) * (j < 2 ? 1.0 : 1e-3));
  for (int j = 0; j < nc; j++) near_fd(an[j], fd[j], scale + 1e-300, "dq", g);
  for (int k = 0; k < ns; k++) {
    double rs = 0.0;
    for (int j = 0; j < nc; j++) rs = fmax(rs, fabs(J[k * nc + j]));
    for (int j = 0; j < nc; j++) near_fd(J[k * nc + j], Jfd[k * nc + j], rs, "J", g);
  }
}

static void analytic_jacobian_matches_finite_differences(void **state)
{
  (void)state;
  for (size_t i = 0; i < N_GOOD; i++) {
    fc_elem e;
    fc_error err;
    assert_int_equal(build(&e, goods[i].type, goods[i].json, &water20, &err), FC_OK);
    if (e.role == FC_ROLE_FLOW)
      for (double t = 0.0; t < 1.0; t += 0.137) check_flow_partials(&e, &goods[i], t);
    destroy(&e);
  }
}

/* dC/dp and dV/dp = C by central differences; dV/dt at fixed p = -qext for a driven store
 * (V depends on p - p_back(t) only, and qext = C dp_back/dt). */
static void store_derivatives_match_finite_differences(void **state)
{
  (void)state;
  static const double ps[] = {-5e4, -1e3, 0.0, 250.0, 3e4, 2e5};
  for (size_t i = 0; i < N_GOOD; i++) {
    fc_elem e;
    fc_error err;
    assert_int_equal(build(&e, goods[i].type, goods[i].json, &water20, &err), FC_OK);
    if (e.role != FC_ROLE_STORE) { destroy(&e); continue; }
    const fc_elem_type *T = e.type;
    assert_non_null(T->xVolume);
    for (double t = 0.05; t < 1.0; t += 0.21)
      for (size_t k = 0; k < sizeof ps / sizeof ps[0]; k++) {
        double p = ps[k], h = 10.0, C, dC, Cp, Cm, d, dCfd, scale;
        T->xStore(&e, t, p, &C, &dC);
        assert_true(C > 0 && isfinite(C));
        T->xStore(&e, t, p + h, &Cp, &d);
        T->xStore(&e, t, p - h, &Cm, &d);
        dCfd = (Cp - Cm) / (2 * h);
        scale = C / 1e5; /* dC/dp of a gas pocket is ~C/p_abs */
        near_fd(dC, dCfd, scale, "dC/dp", &goods[i]);
        double dV = (T->xVolume(&e, t, p + h) - T->xVolume(&e, t, p - h)) / (2 * h);
        near_fd(C, dV, C, "dV/dp", &goods[i]);
      }
    destroy(&e);
  }
}

/* The engine evaluates elements that declare themselves linear (xLinear) from their cached
 * coefficients instead of xFlow / xStore, so the two must agree: for every good snippet, in
 * every valve mode, at several times and pressures. A linear FLOW must have no own states; a
 * linear STORE a constant compliance and V = k0 p. At least the channel,
 * resistor, both valve types and the constant chamber must declare it. */
static void linear_coefficients_agree_with_the_element_laws(void **state)
{
  (void)state;
  static const double ps[][2] = {{0, 0}, {1523.0, -377.0}, {-4e4, 250.0}, {3e5, 3e5}};
  int nlin = 0;
  for (size_t i = 0; i < N_GOOD; i++) {
    fc_elem e;
    fc_error err;
    assert_int_equal(build(&e, goods[i].type, goods[i].json, &water20, &err), FC_OK);
    const fc_elem_type *T = e.type;
    double k[3], x[FCI_MAX_OWN] = {0};
    for (int mode = e.nRoot ? -1 : e.mode; mode <= (e.nRoot ? 2 : e.mode); mode++) {
      e.mode = mode;
      if (!T->xLinear || !T->xLinear(&e, k)) continue;
      nlin++;
      for (double t = 0.0; t < 1.0; t += 0.31)
        for (size_t j = 0; j < sizeof ps / sizeof ps[0]; j++) {
          if (e.role == FC_ROLE_FLOW) {
            fci_flow f;
            assert_int_equal(e.nState, 0);
            T->xFlow(&e, t, ps[j], x, &f);
            double want = k[0] + k[1] * ps[j][0] + k[2] * ps[j][1];
            near_fd(f.q, want, fabs(k[1]) * 1e3 + fabs(k[0]) + 1e-300, "linear q", &goods[i]);
            near_fd(f.dq_dpa, k[1], fabs(k[1]) + 1e-300, "linear dq/dpa", &goods[i]);
            near_fd(f.dq_dpb, k[2], fabs(k[2]) + 1e-300, "linear dq/dpb", &goods[i]);
          } else {
            double C, dC;
            assert_int_equal(e.role, FC_ROLE_STORE);
            T->xStore(&e, t, ps[j][0], &C, &dC);
            near_fd(C, k[0], k[0], "linear C", &goods[i]);
            assert_true(dC == 0.0);
            near_fd(T->xVolume(&e, t, ps[j][0]), k[0] * ps[j][0], k[0] * 1e3, "linear V", &goods[i]);
          }
        }
    }
    destroy(&e);
  }
  assert_true(nlin >= 5);
}

/* Out of memory at each allocation of xParse in turn: FC_ENOMEM naming the element's path (or a
 * key below it), nothing leaked (the sanitizer build checks), and success once enough succeed. */
static void parse_survives_allocation_failures(void **state)
{
  (void)state;
  for (size_t i = 0; i < N_GOOD; i++) {
    int ok = 0;
    for (long n = 0; n < 50 && !ok; n++) {
      fc_elem e;
      fc_error err;
      int rc = build_failing(&e, goods[i].type, goods[i].json, &water20, n, &err);
      if (rc) {
        assert_int_equal(rc, FC_ENOMEM);
        assert_memory_equal(err.path, EPATH, strlen(EPATH));
      }
      ok = rc == FC_OK;
      destroy(&e);
    }
    assert_true(ok);
  }
}

/* ---- Each type's law against analytic values ---- */

static fc_elem make(const char *type, const char *json, const fci_fluid *fluid)
{
  fc_elem e;
  fc_error err;
  char buf[1400];
  int rc = build(&e, type, json, fluid, &err);
  if (rc) print_error("%s: %s\n", json, fc_error_format(&err, buf, sizeof buf));
  assert_int_equal(rc, FC_OK);
  return e;
}

static fci_info info_of(const fc_elem *e)
{
  fci_info info;
  memset(&info, 0, sizeof info);
  e->type->xInfo(e, &water20, &info);
  return info;
}

static void channel_resistances_match_R1_R7(void **state)
{
  (void)state;
  fc_elem e = make("channel", "{\"length\":\"10 mm\",\"diameter\":\"100 um\","
                   "\"viscosity\":\"1 mPa.s\"}", &water20);
  near_rel(info_of(&e).resistance, 4.074367e12, 1e-6, "R1 circle");      /* R1 [D] */
  destroy(&e);
  e = make("channel", "{\"length\":\"10 mm\",\"width\":\"100 um\",\"height\":\"50 um\"}",
           &water20);
  near_rel(info_of(&e).resistance, 1.401564e13, 1e-6, "R7 rectangle");   /* R7 [D], mu 1.0016 */
  double p[2] = {233.6, 0.0}, x[1] = {0};
  fci_flow f;
  e.type->xFlow(&e, 0.0, p, x, &f);
  /* R7: 233.6 Pa drives 1 uL/min through this channel (physics reference §2, C5 example) */
  near_rel(f.q, 1e-9 / 60, 1e-4, "R7 233.6 Pa -> 1 uL/min");
  destroy(&e);
}

static void culture_channel_reports_centre_wall_shear(void **state)
{
  (void)state;
  fc_elem e = make("channel", "{\"length\":\"10 mm\",\"width\":\"1 mm\",\"height\":\"100 um\","
                   "\"viscosity\":\"0.7 mPa.s\",\"culture\":true}", &water20);
  assert_int_equal(e.culture, 1);
  /* R8 [D]: 6 mu Q/(w h^2) = 0.0700 Pa at 10 uL/min, times the R9 centre factor at alpha 0.1 */
  double Q = 10e-9 / 60;
  near_rel(info_of(&e).shear_per_flow * Q, 0.0700 * fc_hyd_rect_centre_shear_factor(0.1), 1e-6,
           "R8 x R9 centre shear");
  near_rel(info_of(&e).resistance, 8.965019e10, 1e-6, "R8 exact R");   /* R8 [D] */
  destroy(&e);
  e = make("channel", "{\"length\":\"10 mm\",\"diameter\":\"100 um\",\"culture\":true}", &water20);
  /* circle: tau = 4 mu Q/(pi r^3) (Hagen–Poiseuille) */
  near_rel(info_of(&e).shear_per_flow, 4 * 1.0016e-3 / (PI * pow(50e-6, 3)), 1e-12, "circle");
  destroy(&e);
}

static void inertial_channel_matches_C4_and_C8(void **state)
{
  (void)state;
  const fci_fluid rho9982 = {1e-3, 998.2, 101325.0}; /* C4 uses rho = 998.2 */
  fc_elem e = make("channel", "{\"length\":\"1 m\",\"diameter\":\"0.5 mm\",\"inertance\":true}",
                   &rho9982);
  assert_int_equal(e.nState, 1);
  fci_info info;
  memset(&info, 0, sizeof info);
  e.type->xInfo(&e, &rho9982, &info);
  near_rel(info.inertance, 6.778388e9, 1e-6, "C4 4/3 rho l/A");          /* C4 [D] */
  /* steady state: q = dp/R gives dq/dt = 0; the flow is the state */
  double p[2] = {500.0, 100.0}, x[1] = {400.0 / info.resistance}, dx[1], J[3];
  fci_flow f;
  assert_int_equal(e.type->xRhs(&e, 0.0, p, x, dx, J), 0);
  assert_true(fabs(dx[0]) <= 1e-12 * 400.0 / info.inertance);
  e.type->xFlow(&e, 0.0, p, x, &f);
  assert_true(f.q == x[0] && f.dq_dx[0] == 1.0 && f.dq_dpa == 0.0);
  destroy(&e);
  e = make("channel", "{\"length\":0.05,\"width\":\"500 um\",\"height\":\"1 mm\","
           "\"inertance\":true}", &rho9982);
  memset(&info, 0, sizeof info);
  e.type->xInfo(&e, &rho9982, &info);
  near_rel(info.inertance, 1.347459 * 998.2 * 0.05 / 5e-7, 1e-5, "C8 beta(0.5)"); /* C8 [D] */
  destroy(&e);
}

static void reservoir_adds_hydrostatic_head(void **state)
{
  (void)state;
  fc_elem e = make("reservoir", "{\"pressure\":\"20 mbar\",\"liquid_height\":\"5 cm\"}", &water20);
  assert_int_equal(e.role, FC_ROLE_FIX);
  /* p = P + rho gn h, gn = 9.80665 exact */
  near_rel(e.type->xFix(&e, 3.0), 2000.0 + 998.2067 * GN * 0.05, 1e-12, "rho g h");
  destroy(&e);
  e = make("reservoir", "{\"pressure\":{\"shape\":\"sine\",\"mean\":\"10 mbar\",\"amplitude\":"
           "\"2 mbar\",\"frequency\":\"1 Hz\"}}", &water20);
  near_rel(e.type->xFix(&e, 0.25), 1200.0, 1e-12, "sine peak at T/4");
  near_rel(info_of(&e).period, 1.0, 1e-12, "period");
  destroy(&e);
}

static void chamber_compliances_match_C1_C3(void **state)
{
  (void)state;
  double C, dC, V0 = 1e-9, pamb = 101325.0;
  fc_elem e = make("chamber", "{\"gas_volume\":\"1 uL\"}", &water20);
  e.type->xStore(&e, 0.0, 0.0, &C, &dC);
  near_rel(C, 9.869233e-15, 1e-6, "C3 bubble");                          /* C3 [D] */
  assert_true(e.type->xVolume(&e, 0.0, 0.0) == 0.0);
  /* Boyle: at 2 atm absolute the gas holds V0/2, so V0/2 of liquid has entered */
  near_rel(e.type->xVolume(&e, 0.0, pamb), V0 / 2, 1e-12, "Boyle");
  destroy(&e);
  e = make("chamber", "{\"gas_volume\":\"2 uL\",\"gas_pressure\":\"100 mbar\"}", &water20);
  e.type->xStore(&e, 0.0, 0.0, &C, &dC);
  near_rel(C, 2e-9 * (pamb + 1e4) / (pamb * pamb), 1e-12, "C = V0 p0abs / pabs^2");
  destroy(&e);
  e = make("chamber", "{\"tube\":{\"diameter\":\"1 mm\",\"wall_thickness\":\"1 mm\","
           "\"youngs_modulus\":\"1.5 MPa\",\"length\":\"1 m\"}}", &water20);
  near_rel(info_of(&e).compliance, 1.832596e-12, 1e-6, "C1 Lame");       /* C1 [D] */
  destroy(&e);
}

static void driven_chamber_volume_follows_backing_pressure(void **state)
{
  (void)state;
  /* constant C with p_back = 5 kPa + 3 kPa sin(2 pi 2 t): V = C (p - p_back(t)), so at a held
   * pressure the volume changes at -C dp_back/dt (src/elem.h) */
  fc_elem e = make("chamber", "{\"compliance\":1e-14,\"backing_pressure\":{\"shape\":\"sine\","
                   "\"mean\":\"50 mbar\",\"amplitude\":\"30 mbar\",\"frequency\":\"2 Hz\"}}",
                   &water20);
  double C, dC, t = 0.1, ht = 1e-6;
  e.type->xStore(&e, t, 0.0, &C, &dC);
  near_rel(C, 1e-14, 1e-15, "C independent of the drive");
  double dVt = (e.type->xVolume(&e, t + ht, 7000.0) - e.type->xVolume(&e, t - ht, 7000.0)) / (2 * ht);
  near_rel(dVt, -1e-14 * 3000.0 * 4 * PI * cos(4 * PI * t), 1e-6, "dV/dt = -C dp_back/dt");
  near_rel(e.type->xVolume(&e, t, 7000.0), 1e-14 * (7000.0 - 5000.0 - 3000.0 * sin(4 * PI * t)),
           1e-9, "V relative to p - p_back");
  near_rel(info_of(&e).period, 0.5, 1e-12, "period");
  destroy(&e);
}

static void sources_impose_their_waveforms(void **state)
{
  (void)state;
  double p[2] = {-4000.0, 9000.0}, x[1] = {0};
  fci_flow f;
  fc_elem e = make("flow_source", "{\"flow\":\"10 uL/min\"}", &water20);
  e.type->xFlow(&e, 1.0, p, x, &f);
  near_rel(f.q, 1e-8 / 60, 1e-12, "10 uL/min whatever the pressures");
  assert_true(f.dq_dpa == 0.0 && f.dq_dpb == 0.0);
  int smooth = -1;
  assert_true(isinf(e.type->xCorner(&e, 0.0, &smooth)));
  destroy(&e);
  /* beat: ejection ends at S T = 0.3 s, the period ends at 1 s (waveform.h) */
  e = make("flow_source", "{\"flow\":{\"shape\":\"beat\",\"peak\":\"30 uL/min\",\"period\":\"1 s\","
           "\"systolic_fraction\":0.3}}", &water20);
  near_rel(e.type->xCorner(&e, 0.1, &smooth), 0.3, 1e-12, "beat corner");
  assert_int_equal(smooth, 0); /* the flow's derivative jumps where ejection ends */
  near_rel(info_of(&e).period, 1.0, 1e-12, "beat period");
  destroy(&e);
  e = make("pressure_source", "{\"pressure\":\"100 mbar\"}", &water20);
  assert_int_equal(e.role, FC_ROLE_LINK);
  near_rel(e.type->xFix(&e, 2.0), 1e4, 1e-12, "ideal rise");
  destroy(&e);
  e = make("pressure_source", "{\"pressure\":{\"shape\":\"sine\",\"mean\":\"50 mbar\","
           "\"amplitude\":\"20 mbar\",\"frequency\":\"4 Hz\"},\"resistance\":3e11}", &water20);
  assert_int_equal(e.role, FC_ROLE_FLOW);
  e.type->xFlow(&e, 1.0 / 16, p, x, &f); /* sin(pi/2) = 1: rise 7000 Pa */
  near_rel(f.q, (-4000.0 + 7000.0 - 9000.0) / 3e11, 1e-12, "q = (pa + P - pb)/R");
  near_rel(info_of(&e).period, 0.25, 1e-12, "period");
  destroy(&e);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(tables_are_well_formed_and_names_unique),
    cmocka_unit_test(every_type_has_good_and_bad_snippets),
    cmocka_unit_test(good_snippets_parse_with_consistent_roles),
    cmocka_unit_test(bad_snippets_fail_with_exact_path),
    cmocka_unit_test(passive_flow_elements_carry_no_flow_at_zero_dp),
    cmocka_unit_test(analytic_jacobian_matches_finite_differences),
    cmocka_unit_test(store_derivatives_match_finite_differences),
    cmocka_unit_test(linear_coefficients_agree_with_the_element_laws),
    cmocka_unit_test(parse_survives_allocation_failures),
    cmocka_unit_test(channel_resistances_match_R1_R7),
    cmocka_unit_test(culture_channel_reports_centre_wall_shear),
    cmocka_unit_test(inertial_channel_matches_C4_and_C8),
    cmocka_unit_test(reservoir_adds_hydrostatic_head),
    cmocka_unit_test(chamber_compliances_match_C1_C3),
    cmocka_unit_test(driven_chamber_volume_follows_backing_pressure),
    cmocka_unit_test(sources_impose_their_waveforms),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
