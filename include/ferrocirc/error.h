/* ferrocirc — error values.
 *
 * Every fallible function returns an int status and fills a caller-owned fc_error. The buffers
 * are fixed-size so that even an out-of-memory condition can be reported without allocating.
 * Printed form (fc_error_format): "FILE:LINE:COL: PATH: MESSAGE", parts omitted when unknown. */
#ifndef FERROCIRC_ERROR_H
#define FERROCIRC_ERROR_H

#include <stddef.h>

enum {
  FC_OK = 0,   /* success */
  FC_EJSON,    /* malformed JSON or wrong JSON type */
  FC_EPARAM,   /* a value out of range, a wrong unit, an unknown key */
  FC_ETOPO,    /* network topology is unusable (floating node, short circuit, ...) */
  FC_ENOMEM,   /* allocation failed */
  FC_ESOLVE,   /* the integrator or an algebraic solve failed */
  FC_EIO,      /* a file could not be read or written */
  FC_EUSAGE,   /* command-line misuse */
  FC_ECHATTER, /* a valve switched too often within the chatter window */
  FC_EINTR     /* interrupted by a signal */
};

typedef struct fc_error {
  int  code;       /* FC_OK when no error */
  char file[256];  /* input file the error refers to, "" if none */
  int  line, col;  /* 1-based position in file, 0 when unknown */
  char path[256];  /* JSON path, e.g. "$.elements[3].length", "" if none */
  char msg[768];   /* what was wrong and what was expected */
} fc_error;

/* Set err (if non-NULL) to code, path (may be NULL) and a printf-style message; returns code so
 * that `return fc_fail(err, FC_EPARAM, path, "must be > 0, got %g", v);` sets and returns. */
int fc_fail(fc_error *err, int code, const char *path, const char *fmt, ...)
#if defined(__GNUC__)
  __attribute__((format(printf, 4, 5)))
#endif
  ;

/* Reset err to FC_OK with empty strings. */
void fc_error_clear(fc_error *err);

/* Attach the file name (and, when known, line/col) to an error that lacks them. */
void fc_error_set_file(fc_error *err, const char *file, int line, int col);

/* Write the printed form into buf (always NUL-terminated); returns buf. */
const char *fc_error_format(const fc_error *err, char *buf, size_t n);

/* Process exit status for an error code: 2 input/usage, 3 solver/chatter, 1 everything else. */
int fc_error_exit_status(int code);

/* Short name of a status code ("FC_EPARAM"). */
const char *fc_error_name(int code);

#endif
