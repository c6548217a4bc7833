/* Tests of the element parse helpers (src/parse_util.c): unknown-key suggestions, duplicate
 * keys, missing and mistyped values, sign checks, JSON paths in every message. */
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>

#include <cjson/cJSON.h>
#include <math.h>
#include <string.h>

#include "elem.h"

static fc_units *U;
static fci_parse_ctx CTX;
static const char *const KEYS[] = {"length", "width", "height", "wall", NULL};
static const char *const COMMON[] = {"id", "type", "from", "to", "note", NULL};
#define P "$.elements[3]"

static int setup(void **state)
{
  (void)state;
  fc_error err;
  if (fc_units_open(&U, &err)) return -1;
  CTX.units = U;
  CTX.basedir = "";
  return 0;
}

static int teardown(void **state)
{
  (void)state;
  fc_units_free(U);
  return 0;
}

static cJSON *parse(const char *text)
{
  cJSON *j = cJSON_Parse(text);
  assert_non_null(j);
  return j;
}

static void unknown_key_suggests_nearest(void **state)
{
  (void)state;
  fc_error err;
  fc_error_clear(&err);
  cJSON *j = parse("{\"id\":\"c1\",\"type\":\"channel\",\"lenght\":\"1 mm\"}");
  assert_int_equal(fci_check_keys(j, KEYS, COMMON, P, &err), FC_EPARAM);
  assert_string_equal(err.path, P ".lenght");
  assert_string_equal(err.msg, "unknown key \"lenght\"; did you mean \"length\"?");
  cJSON_Delete(j);
  j = parse("{\"tpye\":\"channel\"}"); /* suggestion from the second list */
  assert_int_equal(fci_check_keys(j, KEYS, COMMON, P, &err), FC_EPARAM);
  assert_non_null(strstr(err.msg, "did you mean \"type\"?"));
  cJSON_Delete(j);
}

static void far_unknown_key_lists_allowed_keys(void **state)
{
  (void)state;
  fc_error err;
  cJSON *j = parse("{\"diameter\":1}");
  assert_int_equal(fci_check_keys(j, KEYS, COMMON, P, &err), FC_EPARAM);
  assert_string_equal(err.path, P ".diameter");
  assert_null(strstr(err.msg, "did you mean"));
  assert_non_null(strstr(err.msg, "\"length\", \"width\", \"height\", \"wall\", \"id\""));
  cJSON_Delete(j);
}

static void known_keys_pass_and_keys_are_case_sensitive(void **state)
{
  (void)state;
  fc_error err;
  cJSON *j = parse("{\"id\":\"a\",\"length\":1,\"width\":2}");
  assert_int_equal(fci_check_keys(j, KEYS, COMMON, P, &err), FC_OK);
  assert_int_equal(fci_check_keys(j, KEYS, NULL, P, &err), FC_EPARAM); /* id not allowed */
  cJSON_Delete(j);
  j = parse("{\"Length\":1}");
  assert_int_equal(fci_check_keys(j, KEYS, NULL, P, &err), FC_EPARAM);
  assert_non_null(strstr(err.msg, "did you mean \"length\"?"));
  double v = 5.0;
  assert_int_equal(fci_get_quantity(j, "length", FC_DIM_LENGTH, 0, 7.0, FCI_ANY, &v, P, &CTX,
                                    &err), FC_OK);
  assert_true(v == 7.0); /* "Length" is not "length" */
  cJSON_Delete(j);
}

static void duplicate_key_is_refused(void **state)
{
  (void)state;
  fc_error err;
  cJSON *j = parse("{\"length\":1,\"width\":2,\"length\":3}");
  assert_int_equal(fci_check_keys(j, KEYS, NULL, P, &err), FC_EPARAM);
  assert_string_equal(err.path, P ".length");
  assert_non_null(strstr(err.msg, "duplicate"));
  cJSON_Delete(j);
}

static void quantities_missing_default_and_units(void **state)
{
  (void)state;
  fc_error err;
  double v = 0;
  fc_error_clear(&err);
  cJSON *j = parse("{\"length\":\"10 mm\",\"width\":0.0001}");
  assert_int_equal(fci_get_quantity(j, "length", FC_DIM_LENGTH, 1, 0, FCI_POS, &v, P, &CTX,
                                    &err), FC_OK);
  assert_true(fabs(v - 0.01) < 1e-15);
  assert_int_equal(fci_get_quantity(j, "width", FC_DIM_LENGTH, 1, 0, FCI_POS, &v, P, &CTX, &err),
                   FC_OK);
  assert_true(v == 1e-4);
  assert_int_equal(fci_get_quantity(j, "wall", FC_DIM_LENGTH, 0, 2e-3, FCI_POS, &v, P, &CTX,
                                    &err), FC_OK);
  assert_true(v == 2e-3);
  assert_int_equal(fci_get_quantity(j, "height", FC_DIM_LENGTH, 1, 0, FCI_POS, &v, P, &CTX,
                                    &err), FC_EPARAM);
  assert_string_equal(err.path, P ".height");
  assert_string_equal(err.msg, "missing required key \"height\" (length in m)");
  assert_int_equal(fci_get_quantity(j, "length", FC_DIM_PRESSURE, 1, 0, FCI_ANY, &v, P, &CTX,
                                    &err), FC_EPARAM);
  assert_string_equal(err.path, P ".length");
  assert_string_equal(err.msg, "\"10 mm\" is a length, expected a pressure (Pa)");
  cJSON_Delete(j);
}

static void wrong_types_say_what_was_expected(void **state)
{
  (void)state;
  fc_error err;
  double v;
  int b;
  const cJSON *o;
  cJSON *j = parse("{\"length\":true,\"flag\":\"yes\",\"sub\":[1],\"ok\":false,\"obj\":{}}");
  assert_int_equal(fci_get_quantity(j, "length", FC_DIM_LENGTH, 1, 0, FCI_ANY, &v, P, &CTX,
                                    &err), FC_EJSON);
  assert_string_equal(err.path, P ".length");
  assert_non_null(strstr(err.msg, "a number in SI (m) or a string such as \"500 um\""));
  assert_int_equal(fci_get_bool(j, "flag", 0, &b, P, &err), FC_EJSON);
  assert_string_equal(err.path, P ".flag");
  assert_string_equal(err.msg, "expected true or false");
  assert_int_equal(fci_get_bool(j, "ok", 1, &b, P, &err), FC_OK);
  assert_int_equal(b, 0);
  assert_int_equal(fci_get_bool(j, "missing", 1, &b, P, &err), FC_OK);
  assert_int_equal(b, 1);
  assert_int_equal(fci_get_object(j, "sub", 0, &o, P, &err), FC_EJSON);
  assert_string_equal(err.path, P ".sub");
  assert_non_null(strstr(err.msg, "expected an object"));
  assert_int_equal(fci_get_object(j, "obj", 1, &o, P, &err), FC_OK);
  assert_non_null(o);
  assert_int_equal(fci_get_object(j, "none", 0, &o, P, &err), FC_OK);
  assert_null(o);
  assert_int_equal(fci_get_object(j, "none", 1, &o, P, &err), FC_EPARAM);
  assert_string_equal(err.path, P ".none");
  cJSON_Delete(j);
}

static void sign_checks(void **state)
{
  (void)state;
  fc_error err;
  double v;
  cJSON *j = parse("{\"zero\":0,\"neg\":\"-1 mm\",\"pos\":\"1 mm\"}");
  assert_int_equal(fci_get_quantity(j, "zero", FC_DIM_LENGTH, 1, 0, FCI_POS, &v, P, &CTX, &err),
                   FC_EPARAM);
  assert_string_equal(err.path, P ".zero");
  assert_string_equal(err.msg, "must be > 0, got 0 m");
  assert_int_equal(fci_get_quantity(j, "zero", FC_DIM_LENGTH, 1, 0, FCI_NONNEG, &v, P, &CTX,
                                    &err), FC_OK);
  assert_int_equal(fci_get_quantity(j, "neg", FC_DIM_LENGTH, 1, 0, FCI_NONNEG, &v, P, &CTX,
                                    &err), FC_EPARAM);
  assert_string_equal(err.msg, "must be >= 0, got -0.001 m");
  assert_int_equal(fci_get_quantity(j, "neg", FC_DIM_LENGTH, 1, 0, FCI_ANY, &v, P, &CTX, &err),
                   FC_OK);
  assert_true(v == -1e-3);
  assert_int_equal(fci_get_quantity(j, "pos", FC_DIM_LENGTH, 1, 0, FCI_POS, &v, P, &CTX, &err),
                   FC_OK);
  cJSON_Delete(j);
}

static void waveform_helper_default_and_parse(void **state)
{
  (void)state;
  fc_error err;
  fc_waveform *w = NULL;
  cJSON *j = parse("{\"p\":\"20 mbar\",\"bad\":{\"shape\":\"sine\"}}");
  assert_int_equal(fci_get_waveform(j, "p", FC_DIM_PRESSURE, 1, 0, &w, P, &CTX, &err), FC_OK);
  assert_true(fabs(fc_waveform_eval(w, 3.0) - 2000.0) < 1e-12);
  fc_waveform_free(w);
  assert_int_equal(fci_get_waveform(j, "q", FC_DIM_FLOW, 0, 1.5, &w, P, &CTX, &err), FC_OK);
  assert_true(fc_waveform_eval(w, 1.0) == 1.5);
  fc_waveform_free(w);
  assert_int_equal(fci_get_waveform(j, "q", FC_DIM_FLOW, 1, 0, &w, P, &CTX, &err), FC_EPARAM);
  assert_string_equal(err.path, P ".q");
  assert_null(w);
  assert_int_equal(fci_get_waveform(j, "bad", FC_DIM_PRESSURE, 1, 0, &w, P, &CTX, &err),
                   FC_EPARAM);
  assert_string_equal(err.path, P ".bad.amplitude");
  assert_null(w);
  cJSON_Delete(j);
}

static void path_key_joins(void **state)
{
  (void)state;
  char buf[64], small[8];
  assert_string_equal(fci_path_key(buf, sizeof buf, "$.elements[3]", "length"),
                      "$.elements[3].length");
  assert_string_equal(fci_path_key(small, sizeof small, "$.elements[3]", "length"), "$.eleme");
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(unknown_key_suggests_nearest),
    cmocka_unit_test(far_unknown_key_lists_allowed_keys),
    cmocka_unit_test(known_keys_pass_and_keys_are_case_sensitive),
    cmocka_unit_test(duplicate_key_is_refused),
    cmocka_unit_test(quantities_missing_default_and_units),
    cmocka_unit_test(wrong_types_say_what_was_expected),
    cmocka_unit_test(sign_checks),
    cmocka_unit_test(waveform_helper_default_and_parse),
    cmocka_unit_test(path_key_joins),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
