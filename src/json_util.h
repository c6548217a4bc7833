/* ferrocirc — JSON positions (src/json_util.c, src/json_locate.c). */
#ifndef FERROCIRC_JSON_UTIL_H
#define FERROCIRC_JSON_UTIL_H

#include <stddef.h>

#include "ferrocirc/error.h"

#define FCI_JSON_MAX_DEPTH 64 /* our formats need < 10; deeper files are refused before cJSON */

/* If err has a JSON path and no line yet, find the value at that path in buf and set
 * err->line/col to its start (or to the enclosing value's start if the key is missing). */
void fci_json_locate(const char *buf, size_t len, const char *path, fc_error *err);

#endif
