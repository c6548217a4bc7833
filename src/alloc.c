/* ferrocirc — allocation wrapper with test-time fault injection (see alloc.h). */
#include "ferrocirc/alloc.h"

#include <stdlib.h>
#include <string.h>

static long fail_countdown = -1; /* allocations left before an injected failure; <0 = never */

static int injected_failure(void)
{
  if (fail_countdown < 0) return 0;
  if (fail_countdown == 0) return 1;
  fail_countdown--;
  return 0;
}

void fc_alloc_fail_after(long n) { fail_countdown = n; }

void *fc_malloc(size_t n) { return injected_failure() ? NULL : malloc(n ? n : 1); }

void *fc_calloc(size_t count, size_t size)
{
  return injected_failure() ? NULL : calloc(count ? count : 1, size ? size : 1);
}

void *fc_realloc(void *p, size_t n) { return injected_failure() ? NULL : realloc(p, n ? n : 1); }

char *fc_strdup(const char *s)
{
  size_t n = strlen(s) + 1;
  char *d = fc_malloc(n);
  if (d) memcpy(d, s, n);
  return d;
}

void fc_free(void *p) { free(p); }
