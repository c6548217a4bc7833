/* ferrocirc — libFuzzer target for the valve-design loader: JSON text -> cJSON -> (if it parses)
 * fc_valve_design_parse -> (if it loads) fc_valve_design_solve and the open resistance. Built
 * and run by tests/fuzz/build_and_run.sh.
 *
 * The design code (src/valve/) gets the object exactly as an inline "design" of a network
 * element would pass it. The error contract is checked as in fuzz_network.c: a failure returns
 * the code it stores in fc_error, with a message. */
#include <cjson/cJSON.h>
#include <math.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/error.h"
#include "ferrocirc/units.h"
#include "ferrocirc/valve.h"

#define MAX_INPUT (1u << 20) /* designs are a few kB; the file loader refuses > 4 MiB */

static fc_units *units;

int LLVMFuzzerInitialize(int *argc, char ***argv);
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerInitialize(int *argc, char ***argv)
{
  (void)argc;
  (void)argv;
  fc_error err = {0};
  if (fc_units_open(&units, &err) != FC_OK) {
    fprintf(stderr, "fuzz_valve: cannot open the unit system: %s\n", err.msg);
    abort();
  }
  return 0;
}

static void check_error(const char *what, int rc, const fc_error *err)
{
  if (err->code != rc || !err->msg[0]) {
    fprintf(stderr, "fuzz_valve: %s: status %d but fc_error holds code %d, message \"%s\"\n",
            what, rc, err->code, err->msg);
    abort();
  }
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  if (size > MAX_INPUT) return 0;
  char *text = malloc(size + 1);
  if (!text) return 0;
  memcpy(text, data, size);
  text[size] = '\0';
  cJSON *root = cJSON_ParseWithLength(text, size);
  free(text);
  if (!root) return 0;
  fc_error err = {0};
  fc_valve_design *d = NULL;
  int rc = fc_valve_design_parse(root, "$", units, "/nonexistent-fuzz-dir", &d, &err);
  if (rc != FC_OK) {
    check_error("fc_valve_design_parse", rc, &err);
    if (d) abort();
  } else {
    fc_valve_pressures p;
    fc_error_clear(&err);
    rc = fc_valve_design_solve(d, &p, &err);
    if (rc != FC_OK) check_error("fc_valve_design_solve", rc, &err);
    double r = fc_valve_design_open_resistance(d, 1e-3);
    if (isnan(r)) {
      fprintf(stderr, "fuzz_valve: open resistance is NaN for a design that loaded\n");
      abort();
    }
    fc_valve_design_free(d);
  }
  cJSON_Delete(root);
  return 0;
}
