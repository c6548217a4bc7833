/* ferrocirc — a string -> index hash map (open addressing, FNV-1a), for node names and ids
 * while loading: a linear search would make loading a 10^5-element network quadratic. */
#ifndef FERROCIRC_STRMAP_H
#define FERROCIRC_STRMAP_H

#include <stddef.h>

typedef struct fci_strmap {
  size_t cap;           /* power of two */
  size_t n;             /* entries used */
  const char **key;     /* borrowed keys (must outlive the map) */
  int *val;
} fci_strmap;

/* 0 ok, -1 out of memory. */
int fci_strmap_init(fci_strmap *m, size_t expected);
void fci_strmap_free(fci_strmap *m);
/* Value for key, or -1. */
int fci_strmap_get(const fci_strmap *m, const char *key);
/* Insert (key must not be present). 0 ok, -1 out of memory. */
int fci_strmap_put(fci_strmap *m, const char *key, int val);

#endif
