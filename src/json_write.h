/* ferrocirc — streamed JSON text (src/json_write.c). Internal.
 *
 * Writes a document straight to a stream as it is produced, so a summary of 10^5 elements
 * costs no tree and no whole-document string. Layout follows cJSON_Print (tab indentation,
 * "key":<TAB>value, array items separated by ", "), so files look as they did when the summary
 * was a cJSON tree. Numbers are the shortest of %.15g/%.16g/%.17g that reads back to the same
 * double (exact round trip); non-finite numbers are written as null. */
#ifndef FERROCIRC_JSON_WRITE_H
#define FERROCIRC_JSON_WRITE_H

#include <stdio.h>

#define FCI_JW_MAX_DEPTH 16

typedef struct fci_jw {
  FILE *f;
  int depth;
  char first[FCI_JW_MAX_DEPTH]; /* 1 until the container at this depth has a member */
  char array[FCI_JW_MAX_DEPTH]; /* 1 for an array, 0 for an object */
  int overflow;                 /* nesting deeper than FCI_JW_MAX_DEPTH was attempted */
} fci_jw;

void fci_jw_init(fci_jw *w, FILE *f);
/* key is the member name inside an object and must be NULL inside an array or at the root. */
void fci_jw_object(fci_jw *w, const char *key);
void fci_jw_array(fci_jw *w, const char *key);
void fci_jw_end(fci_jw *w); /* closes the innermost object or array */
void fci_jw_number(fci_jw *w, const char *key, double v);
void fci_jw_string(fci_jw *w, const char *key, const char *s);
void fci_jw_bool(fci_jw *w, const char *key, int v);
void fci_jw_null(fci_jw *w, const char *key);
/* 0 if everything was written and every container closed; -1 otherwise (write error,
 * unbalanced or too deep nesting). */
int fci_jw_finish(fci_jw *w);

/* Shortest "%.15g".."%.17g" text of finite v that strtod reads back exactly; returns length.
 * buf holds at least 32 bytes. */
int fci_jw_format_double(char *buf, double v);

#endif
