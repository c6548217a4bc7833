/* ferrocirc — libFuzzer target for the network loader: JSON text -> fc_net_load_buffer -> (if it
 * loads) fci_sys_build, the topology checks and the state layout. Built and run by
 * tests/fuzz/build_and_run.sh.
 *
 * Besides the sanitizers' findings, the target checks the error contract of the loader
 * (include/ferrocirc/error.h): a failure returns the code it stores in fc_error and always
 * carries a message, so that no bad input can end in a silent or empty error. */
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

#include "ferrocirc/error.h"
#include "ferrocirc/network.h"
#include "ferrocirc/units.h"
#include "net.h"
#include "sys.h"

static fc_units *units; /* loaded once: UDUNITS-2 reads its XML database in ~9 ms */

int LLVMFuzzerInitialize(int *argc, char ***argv);
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerInitialize(int *argc, char ***argv)
{
  (void)argc;
  (void)argv;
  fc_error err = {0};
  if (fc_units_open(&units, &err) != FC_OK) {
    fprintf(stderr, "fuzz_network: cannot open the unit system: %s\n", err.msg);
    abort();
  }
  return 0;
}

static void check_error(int rc, const fc_error *err)
{
  char buf[1400];
  if (err->code != rc || !err->msg[0]) {
    fprintf(stderr, "fuzz_network: status %d but fc_error holds code %d, message \"%s\"\n", rc,
            err->code, err->msg);
    abort();
  }
  fc_error_format(err, buf, sizeof buf);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  /* fc_net_load refuses larger files before reading them (FC_NET_MAX_FILE_BYTES). */
  if (size > FC_NET_MAX_FILE_BYTES) return 0;
  fc_error err = {0};
  fc_net *net = NULL;
  /* A base folder that does not exist: relative "file" references fail without touching the
   * disk (absolute ones are opened, as the command line would). */
  int rc = fc_net_load_buffer((const char *)data, size, "fuzz.json", "/nonexistent-fuzz-dir",
                              units, &net, &err);
  if (rc != FC_OK) {
    check_error(rc, &err);
    if (net) abort(); /* a failed load returns no network */
    return 0;
  }
  if (!net) abort();
  fci_sys *s = NULL;
  fc_error_clear(&err);
  rc = fci_sys_build(net, &s, &err);
  if (rc != FC_OK) check_error(rc, &err);
  fci_sys_free(s);
  fc_net_free(net);
  return 0;
}
