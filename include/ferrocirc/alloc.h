/* ferrocirc — the one allocation wrapper.
 *
 * All library allocations go through fc_malloc/fc_calloc/fc_realloc so that tests can make the
 * n-th call fail (fc_alloc_fail_after) and check that every path unwinds cleanly. */
#ifndef FERROCIRC_ALLOC_H
#define FERROCIRC_ALLOC_H

#include <stddef.h>

void *fc_malloc(size_t n);
void *fc_calloc(size_t count, size_t size);
void *fc_realloc(void *p, size_t n);
char *fc_strdup(const char *s);
void  fc_free(void *p);

/* Make the allocation after `n` more successful ones fail (n < 0: never fail). Test use only. */
void fc_alloc_fail_after(long n);

#endif
