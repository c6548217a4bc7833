/* ferrocirc — string hash map (see strmap.h). Load factor kept below 1/2. */
#include <stdint.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "strmap.h"

static uint64_t fnv1a(const char *s)
{
  uint64_t h = 1469598103934665603ull;
  for (; *s; s++) h = (h ^ (unsigned char)*s) * 1099511628211ull;
  return h;
}

int fci_strmap_init(fci_strmap *m, size_t expected)
{
  size_t cap = 16;
  while (cap < 2 * expected + 1) cap <<= 1;
  m->cap = cap;
  m->n = 0;
  m->key = fc_calloc(cap, sizeof *m->key);
  m->val = fc_calloc(cap, sizeof *m->val);
  if (!m->key || !m->val) { fci_strmap_free(m); return -1; }
  return 0;
}

void fci_strmap_free(fci_strmap *m)
{
  fc_free(m->key);
  fc_free(m->val);
  m->key = NULL;
  m->val = NULL;
  m->cap = m->n = 0;
}

int fci_strmap_get(const fci_strmap *m, const char *key)
{
  if (!m->cap) return -1;
  for (size_t i = fnv1a(key) & (m->cap - 1);; i = (i + 1) & (m->cap - 1)) {
    if (!m->key[i]) return -1;
    if (strcmp(m->key[i], key) == 0) return m->val[i];
  }
}

static int grow(fci_strmap *m)
{
  fci_strmap big;
  if (fci_strmap_init(&big, m->cap)) return -1;
  for (size_t i = 0; i < m->cap; i++)
    if (m->key[i]) fci_strmap_put(&big, m->key[i], m->val[i]);
  fci_strmap_free(m);
  *m = big;
  return 0;
}

int fci_strmap_put(fci_strmap *m, const char *key, int val)
{
  if (2 * (m->n + 1) > m->cap && grow(m)) return -1;
  size_t i = fnv1a(key) & (m->cap - 1);
  while (m->key[i]) i = (i + 1) & (m->cap - 1);
  m->key[i] = key;
  m->val[i] = val;
  m->n++;
  return 0;
}
