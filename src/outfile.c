/* ferrocirc — atomic output files (see output.h). */
#define _POSIX_C_SOURCE 200809L
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "ferrocirc/alloc.h"
#include "ferrocirc/output.h"

struct fc_outfile {
  FILE *f;
  char *path;   /* destination */
  char *tmp;    /* temporary beside it; NULL: written in place (not a regular file) */
};

/* A destination that exists and is not a regular file (a FIFO, a terminal, /dev/null) is
 * written in place: a temporary renamed over it would replace the device or the pipe by a
 * plain file (as root, /dev/null itself), and such a destination cannot be made durable or
 * left half-written anyway. A folder is an error before the run, not after it. */
static int open_in_place(fc_outfile *o, const struct stat *st, fc_error *err)
{
  if (S_ISDIR(st->st_mode))
    return fc_fail(err, FC_EIO, NULL, "cannot write output %s: it is a folder", o->path);
  if (!(o->f = fopen(o->path, "w")))
    return fc_fail(err, FC_EIO, NULL, "cannot open output %s: %s", o->path, strerror(errno));
  setvbuf(o->f, NULL, _IOFBF, 1 << 16);
  return FC_OK;
}

int fc_outfile_open(const char *path, fc_outfile **out, fc_error *err)
{
  *out = NULL;
  fc_outfile *o = fc_calloc(1, sizeof *o);
  size_t n = strlen(path) + 32;
  struct stat st;
  if (o && (o->path = fc_strdup(path)) && stat(path, &st) == 0 && !S_ISREG(st.st_mode)) {
    int rc = open_in_place(o, &st, err);
    if (rc) { fc_free(o->path); fc_free(o); return rc; }
    *out = o;
    return FC_OK;
  }
  if (!o || !o->path || !(o->tmp = fc_malloc(n))) {
    if (o) { fc_free(o->path); fc_free(o); }
    return fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  }
  snprintf(o->tmp, n, "%s.tmp-XXXXXX", path);
  int fd = mkstemp(o->tmp);
  if (fd < 0 || !(o->f = fdopen(fd, "w"))) {
    int e = errno;
    if (fd >= 0) { close(fd); unlink(o->tmp); }
    fc_fail(err, FC_EIO, NULL, "cannot create output %s: %s", path, strerror(e));
    fc_free(o->tmp); fc_free(o->path); fc_free(o);
    return FC_EIO;
  }
  /* mkstemp creates mode 0600; outputs are ordinary files, so give them the umask's mode. */
  mode_t um = umask(0);
  umask(um);
  fchmod(fd, 0666 & ~um);
  setvbuf(o->f, NULL, _IOFBF, 1 << 16);
  *out = o;
  return FC_OK;
}

FILE *fc_outfile_stream(fc_outfile *f) { return f->f; }

static void drop(fc_outfile *o)
{
  fc_free(o->path);
  fc_free(o->tmp);
  fc_free(o);
}

/* Flushes and, for a temporary, syncs; 0 or -1 with errno set. */
static int settle(fc_outfile *o)
{
  errno = 0;
  if (ferror(o->f)) { if (!errno) errno = EIO; return -1; }
  if (fflush(o->f) != 0) return -1;
  return o->tmp && fsync(fileno(o->f)) != 0 ? -1 : 0;
}

static void remove_tmp(fc_outfile *o)
{
  if (o->tmp) unlink(o->tmp);
}

int fc_outfile_commit(fc_outfile *o, fc_error *err)
{
  int bad = settle(o) != 0;
  int e = errno;
  if (fclose(o->f) != 0 && !bad) { bad = 1; e = errno; }
  if (!bad && o->tmp && rename(o->tmp, o->path) != 0) { bad = 1; e = errno; }
  if (bad) {
    remove_tmp(o);
    fc_fail(err, FC_EIO, NULL, "writing %s failed: %s%s", o->path, strerror(e),
            o->tmp ? "; nothing was written" : "");
    drop(o);
    return FC_EIO;
  }
  drop(o);
  return FC_OK;
}

/* Two phases, so that either every output appears or none does: first flush, sync and close
 * every temporary (this is where a full disk shows), then rename them all. */
int fc_outfile_commit_all(fc_outfile **o, int n, fc_error *err)
{
  int bad = -1, e = 0;
  for (int i = 0; i < n; i++) {
    if (!o[i]) continue;
    int fail = settle(o[i]) != 0;
    if (fail && bad < 0) { bad = i; e = errno ? errno : EIO; }
    if (fclose(o[i]->f) != 0 && bad < 0) { bad = i; e = errno; }
    o[i]->f = NULL;
  }
  for (int i = 0; i < n && bad < 0; i++)
    if (o[i] && o[i]->tmp && rename(o[i]->tmp, o[i]->path) != 0) { bad = i; e = errno; }
  if (bad >= 0)
    fc_fail(err, FC_EIO, NULL, "writing %s failed: %s%s", o[bad]->path, strerror(e),
            o[bad]->tmp ? "; no output was written" : "");
  for (int i = 0; i < n; i++) {
    if (!o[i]) continue;
    if (bad >= 0) remove_tmp(o[i]);
    drop(o[i]);
    o[i] = NULL;
  }
  return bad >= 0 ? FC_EIO : FC_OK;
}

const char *fc_outfile_path(const fc_outfile *f) { return f->path; }

void fc_outfile_abort(fc_outfile *o)
{
  if (!o) return;
  if (o->f) fclose(o->f);
  remove_tmp(o);
  drop(o);
}

int fc_outfile_keep_partial(fc_outfile *o, const char *note, fc_error *err)
{
  fprintf(o->f, "# %s\n", note);
  int bad = fclose(o->f) != 0;
  if (!o->tmp) { /* in place: what was written stays where it went */
    int rc = bad ? fc_fail(err, FC_EIO, NULL, "closing the output %s failed", o->path) : FC_OK;
    drop(o);
    return rc;
  }
  size_t n = strlen(o->path) + 16;
  char *dst = fc_malloc(n);
  if (!dst) { unlink(o->tmp); drop(o); return fc_fail(err, FC_ENOMEM, NULL, "out of memory"); }
  snprintf(dst, n, "%s.partial", o->path);
  if (bad || rename(o->tmp, dst) != 0) {
    unlink(o->tmp);
    fc_fail(err, FC_EIO, NULL, "keeping the partial output %s failed", dst);
    fc_free(dst);
    drop(o);
    return FC_EIO;
  }
  fc_free(dst);
  drop(o);
  return FC_OK;
}
