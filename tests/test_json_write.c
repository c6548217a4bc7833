/* ferrocirc — tests of the streamed JSON writer (src/json_write.c) against cJSON, the reference
 * parser and printer: what we write must parse with cJSON to the same tree, strings must come
 * back byte for byte, every finite double must read back exactly (strtod), and the layout must
 * be byte-identical to cJSON_Print's where the two agree on number text (integers, halves). */
#define _POSIX_C_SOURCE 200809L /* open_memstream */
#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <setjmp.h>
#include <cmocka.h>
#include <cjson/cJSON.h>
#include <float.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "json_write.h"
#include "test_rng.h"

/* The text written by fill(w), NUL-terminated; caller frees. */
static char *written(void (*fill)(fci_jw *), int *finish_rc)
{
  char *buf = NULL;
  size_t len = 0;
  FILE *f = open_memstream(&buf, &len);
  assert_non_null(f);
  fci_jw w;
  fci_jw_init(&w, f);
  fill(&w);
  *finish_rc = fci_jw_finish(&w);
  assert_int_equal(fclose(f), 0);
  return buf;
}

static void fill_layout(fci_jw *w)
{
  fci_jw_object(w, NULL);
  fci_jw_string(w, "format", "x/1");
  fci_jw_number(w, "n", 3);
  fci_jw_number(w, "half", -0.5);
  fci_jw_bool(w, "yes", 1);
  fci_jw_null(w, "none");
  fci_jw_array(w, "list");
  fci_jw_object(w, NULL);
  fci_jw_number(w, "a", 1);
  fci_jw_end(w);
  fci_jw_object(w, NULL);
  fci_jw_end(w);
  fci_jw_end(w);
  fci_jw_array(w, "empty");
  fci_jw_end(w);
  fci_jw_object(w, "inner");
  fci_jw_array(w, "nums");
  fci_jw_number(w, NULL, 1);
  fci_jw_number(w, NULL, 2);
  fci_jw_end(w);
  fci_jw_end(w);
  fci_jw_end(w);
}

static void test_layout_matches_cjson_print(void **state)
{
  (void)state;
  int rc;
  char *ours = written(fill_layout, &rc);
  assert_int_equal(rc, 0);
  cJSON *o = cJSON_CreateObject(), *list, *inner, *nums;
  cJSON_AddStringToObject(o, "format", "x/1");
  cJSON_AddNumberToObject(o, "n", 3);
  cJSON_AddNumberToObject(o, "half", -0.5);
  cJSON_AddBoolToObject(o, "yes", 1);
  cJSON_AddNullToObject(o, "none");
  list = cJSON_AddArrayToObject(o, "list");
  cJSON *e1 = cJSON_CreateObject();
  cJSON_AddNumberToObject(e1, "a", 1);
  cJSON_AddItemToArray(list, e1);
  cJSON_AddItemToArray(list, cJSON_CreateObject());
  cJSON_AddArrayToObject(o, "empty");
  inner = cJSON_AddObjectToObject(o, "inner");
  nums = cJSON_AddArrayToObject(inner, "nums");
  cJSON_AddItemToArray(nums, cJSON_CreateNumber(1));
  cJSON_AddItemToArray(nums, cJSON_CreateNumber(2));
  char *ref = cJSON_Print(o);
  assert_string_equal(ours, ref);
  free(ref);
  cJSON_Delete(o);
  free(ours);
}

static const char *const tricky[] = {
  "plain", "", "quote \" and backslash \\", "tab\tnewline\nreturn\r", "\b\f\x01\x1f end",
  "slash / stays", "UTF-8: \xce\xbc" "L/min, 37 \xc2\xb0" "C", "{\"not\": [json]}"};

static void fill_strings(fci_jw *w)
{
  fci_jw_array(w, NULL);
  for (size_t i = 0; i < sizeof tricky / sizeof tricky[0]; i++) fci_jw_string(w, NULL, tricky[i]);
  fci_jw_end(w);
}

static void test_strings_round_trip_through_cjson(void **state)
{
  (void)state;
  int rc;
  char *txt = written(fill_strings, &rc);
  assert_int_equal(rc, 0);
  cJSON *a = cJSON_Parse(txt);
  assert_non_null(a);
  assert_int_equal(cJSON_GetArraySize(a), (int)(sizeof tricky / sizeof tricky[0]));
  for (size_t i = 0; i < sizeof tricky / sizeof tricky[0]; i++)
    assert_string_equal(cJSON_GetArrayItem(a, (int)i)->valuestring, tricky[i]);
  cJSON_Delete(a);
  free(txt);
}

static uint64_t rng = 0x243f6a8885a308d3u;

static uint64_t next(void) { return test_rng_next(&rng); }

static void test_doubles_read_back_exactly_and_shortest(void **state)
{
  (void)state;
  long bad = 0, shorter = 0;
  for (int k = 0; k < 200000; k++) {
    uint64_t u = next();
    double v;
    memcpy(&v, &u, sizeof v);
    if (!isfinite(v)) continue;
    char buf[32], fifteen[32];
    fci_jw_format_double(buf, v);
    if (strtod(buf, NULL) != v) bad++;
    /* Not longer than needed: the 15-digit text is used whenever it reads back. */
    snprintf(fifteen, sizeof fifteen, "%.15g", v);
    if (strtod(fifteen, NULL) == v && strcmp(fifteen, buf) != 0) shorter++;
  }
  const double edge[] = {0.0, -0.0, 5e-324, DBL_MIN, DBL_MAX, 0.1, 1.0 / 3, 0.83333333333333337,
                         9.7990442600323e-10, 1e23, 6.02214076e23};
  for (size_t i = 0; i < sizeof edge / sizeof edge[0]; i++) {
    char buf[32];
    fci_jw_format_double(buf, edge[i]);
    if (strtod(buf, NULL) != edge[i] || signbit(strtod(buf, NULL)) != signbit(edge[i])) bad++;
  }
  assert_int_equal(bad, 0);
  assert_int_equal(shorter, 0);
}

static const double nums[] = {NAN, INFINITY, -INFINITY, 1.5e-300, -2.25};

static void fill_numbers(fci_jw *w)
{
  fci_jw_object(w, NULL);
  fci_jw_array(w, "v");
  for (size_t i = 0; i < sizeof nums / sizeof nums[0]; i++) fci_jw_number(w, NULL, nums[i]);
  fci_jw_end(w);
  fci_jw_end(w);
}

static void test_non_finite_numbers_become_null(void **state)
{
  (void)state;
  int rc;
  char *txt = written(fill_numbers, &rc);
  assert_int_equal(rc, 0);
  cJSON *o = cJSON_Parse(txt), *v = cJSON_GetObjectItem(o, "v");
  assert_non_null(v);
  for (int i = 0; i < 3; i++) assert_true(cJSON_IsNull(cJSON_GetArrayItem(v, i)));
  assert_true(cJSON_GetArrayItem(v, 3)->valuedouble == 1.5e-300);
  assert_true(cJSON_GetArrayItem(v, 4)->valuedouble == -2.25);
  cJSON_Delete(o);
  free(txt);
}

static void fill_unclosed(fci_jw *w)
{
  fci_jw_object(w, NULL);
  fci_jw_array(w, "a");
  fci_jw_end(w);
}

static void fill_too_deep(fci_jw *w)
{
  for (int i = 0; i < FCI_JW_MAX_DEPTH + 2; i++) fci_jw_array(w, NULL);
  for (int i = 0; i < FCI_JW_MAX_DEPTH + 2; i++) fci_jw_end(w);
}

static void fill_extra_end(fci_jw *w)
{
  fci_jw_array(w, NULL);
  fci_jw_end(w);
  fci_jw_end(w);
}

static void test_unbalanced_or_too_deep_nesting_is_reported(void **state)
{
  (void)state;
  int rc;
  free(written(fill_unclosed, &rc));
  assert_int_equal(rc, -1);
  free(written(fill_too_deep, &rc));
  assert_int_equal(rc, -1);
  free(written(fill_extra_end, &rc));
  assert_int_equal(rc, -1);
}

int main(void)
{
  const struct CMUnitTest tests[] = {
    cmocka_unit_test(test_layout_matches_cjson_print),
    cmocka_unit_test(test_strings_round_trip_through_cjson),
    cmocka_unit_test(test_doubles_read_back_exactly_and_shortest),
    cmocka_unit_test(test_non_finite_numbers_become_null),
    cmocka_unit_test(test_unbalanced_or_too_deep_nesting_is_reported),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
