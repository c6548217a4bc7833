/* ferrocirc — `merge`: join the shard outputs of one study into exactly the bytes of an
 * unsharded run (same header; rows in point order). Every shard must have the same header, and
 * each point may appear once; missing points are reported (the merged file would differ). */
#define _POSIX_C_SOURCE 200809L
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "ferrocirc/alloc.h"
#include "study_int.h"

typedef struct row { long k; char *text; } row;

static int by_point(const void *a, const void *b)
{
  long x = ((const row *)a)->k, y = ((const row *)b)->k;
  return (x > y) - (x < y);
}

static int read_shard(const char *file, char **header, row **rows, long *n, long *cap, fc_error *err)
{
  FILE *f = fopen(file, "r");
  if (!f) return fc_fail(err, FC_EIO, NULL, "%s: cannot open", file);
  char *line = NULL;
  size_t lc = 0;
  int rc = FC_OK;
  if (getline(&line, &lc, f) <= 0) rc = fc_fail(err, FC_EPARAM, NULL, "%s: empty, expected a study CSV", file);
  else if (!*header) *header = fc_strdup(line);
  else if (strcmp(*header, line))
    rc = fc_fail(err, FC_EPARAM, NULL, "%s: header differs from the first shard's; shards of "
                 "different studies cannot be merged", file);
  for (long ln = 2; !rc && getline(&line, &lc, f) > 0; ln++) {
    char *end;
    long k = strtol(line, &end, 10);
    if (end == line || *end != ',') { rc = fc_fail(err, FC_EPARAM, NULL, "%s:%ld: expected a point number", file, ln); break; }
    if (*n == *cap) {
      *cap = *cap ? 2 * *cap : 1024;
      row *r = fc_realloc(*rows, (size_t)*cap * sizeof *r);
      if (!r) { rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory"); break; }
      *rows = r;
    }
    (*rows)[*n].k = k;
    if (!((*rows)[(*n)++].text = fc_strdup(line))) rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  }
  free(line);
  fclose(f);
  return rc;
}

int fci_study_merge(int nfile, char *const *files, FILE *out, long *npoints, fc_error *err)
{
  char *header = NULL;
  row *rows = NULL;
  long n = 0, cap = 0;
  int rc = FC_OK;
  for (int i = 0; !rc && i < nfile; i++) rc = read_shard(files[i], &header, &rows, &n, &cap, err);
  if (!rc && rows) qsort(rows, (size_t)n, sizeof *rows, by_point);
  for (long j = 0; !rc && j < n; j++) {
    if (rows[j].k != j)
      rc = fc_fail(err, FC_EPARAM, NULL, rows[j].k < j ? "point %ld appears twice" :
                   "point %ld is missing (a shard is absent or incomplete)", rows[j].k < j ? rows[j].k : j);
  }
  if (!rc && header) {
    fputs(header, out);
    for (long j = 0; j < n; j++) fputs(rows[j].text, out);
  }
  for (long j = 0; j < n; j++) fc_free(rows[j].text);
  fc_free(rows);
  fc_free(header);
  *npoints = n;
  return rc;
}
