/* ferrocirc — error values (see include/ferrocirc/error.h). */
#include "ferrocirc/error.h"

#include <stdarg.h>
#include <stdio.h>
#include <string.h>

int fc_fail(fc_error *err, int code, const char *path, const char *fmt, ...)
{
  if (!err) return code;
  err->code = code;
  snprintf(err->path, sizeof err->path, "%s", path ? path : "");
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(err->msg, sizeof err->msg, fmt, ap);
  va_end(ap);
  return code;
}

void fc_error_clear(fc_error *err)
{
  if (!err) return;
  memset(err, 0, sizeof *err);
}

void fc_error_set_file(fc_error *err, const char *file, int line, int col)
{
  if (!err) return;
  if (!err->file[0] && file) snprintf(err->file, sizeof err->file, "%s", file);
  if (!err->line && line > 0) {
    err->line = line;
    err->col = col;
  }
}

const char *fc_error_format(const fc_error *err, char *buf, size_t n)
{
  size_t k = 0;
  if (!n) return buf;
  buf[0] = '\0';
#define PUT(...) do { int w_ = snprintf(buf + k, n - k, __VA_ARGS__); \
    if (w_ > 0) k = (k + (size_t)w_ < n) ? k + (size_t)w_ : n - 1; } while (0)
  if (err->file[0]) {
    PUT("%s:", err->file);
    if (err->line > 0) PUT("%d:%d:", err->line, err->col);
    PUT(" ");
  }
  if (err->path[0]) PUT("%s: ", err->path);
  PUT("%s", err->msg[0] ? err->msg : fc_error_name(err->code));
#undef PUT
  return buf;
}

int fc_error_exit_status(int code)
{
  switch (code) {
  case FC_OK: return 0;
  case FC_EJSON: case FC_EPARAM: case FC_ETOPO: case FC_EUSAGE: return 2;
  case FC_ESOLVE: case FC_ECHATTER: return 3;
  default: return 1;
  }
}

const char *fc_error_name(int code)
{
  static const char *names[] = {"FC_OK", "FC_EJSON", "FC_EPARAM", "FC_ETOPO", "FC_ENOMEM",
                                "FC_ESOLVE", "FC_EIO", "FC_EUSAGE", "FC_ECHATTER", "FC_EINTR"};
  if (code < 0 || code >= (int)(sizeof names / sizeof names[0])) return "FC_E?";
  return names[code];
}
