/* ferrocirc — running a study's points: on `jobs` local processes (fork; UDUNITS and the engine
 * are not thread-safe, and processes also isolate a crashing point), for one shard of a larger
 * study. Each process writes its rows to its own temporary file; the parent puts them back in
 * point order, so the output bytes do not depend on the number of jobs or shards. A progress
 * line goes to stderr when asked (a byte per finished point comes back through a pipe). */
#define _POSIX_C_SOURCE 200809L
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#include "ferrocirc/alloc.h"
#include "sweep.h"

static double now(void)
{
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static void progress(long done, long fail, long total, double t0)
{
  double el = now() - t0, left = done ? el * (double)(total - done) / (double)done : 0;
  fprintf(stderr, "\r%ld/%ld points, %ld failed, %.0f s elapsed, ~%.0f s left   ", done, total,
          fail, el, left);
  if (done == total) fputc('\n', stderr);
}

static void worker(const fci_study *S, int shard, int nshard, int w, int jobs, FILE *out, int fd)
{
  long j = 0;
  for (long k = shard; k < S->npoints; k += nshard, j++) {
    if (j % jobs != w) continue;
    fprintf(out, "%ld\t", k);
    int failed = fci_study_row(S, k, out);
    if (fd >= 0) {
      char c = failed ? 'x' : '.';
      if (write(fd, &c, 1) < 0) fd = -1;
    }
  }
  fflush(out);
}

/* Read "k\trow\n" lines of all parts and write the rows in point order. */
static int collect(FILE **part, int jobs, long nmine, int shard, int nshard, FILE *f, fc_error *err)
{
  char **row = fc_calloc((size_t)(nmine ? nmine : 1), sizeof *row);
  char *line = NULL;
  size_t cap = 0;
  int rc = row ? FC_OK : fc_fail(err, FC_ENOMEM, NULL, "out of memory");
  for (int w = 0; !rc && w < jobs; w++) {
    rewind(part[w]);
    ssize_t n;
    while ((n = getline(&line, &cap, part[w])) > 0) {
      long k = strtol(line, NULL, 10), j = (k - shard) / nshard;
      char *tab = strchr(line, '\t');
      if (!tab || j < 0 || j >= nmine || row[j]) { rc = fc_fail(err, FC_EIO, NULL, "corrupt worker output"); break; }
      if (!(row[j] = fc_strdup(tab + 1))) { rc = fc_fail(err, FC_ENOMEM, NULL, "out of memory"); break; }
    }
  }
  for (long j = 0; !rc && j < nmine; j++) {
    if (!row[j]) rc = fc_fail(err, FC_EIO, NULL, "point %ld produced no row (a worker died)", shard + j * nshard);
    else fputs(row[j], f);
  }
  for (long j = 0; row && j < nmine; j++) fc_free(row[j]);
  fc_free(row);
  free(line);
  return rc;
}

int fci_study_run(const fci_study *S, int shard, int nshard, int jobs, int show, FILE *f,
                  fc_error *err)
{
  long nmine = S->npoints > shard ? (S->npoints - shard + nshard - 1) / nshard : 0;
  if (jobs > nmine) jobs = nmine > 0 ? (int)nmine : 1;
  FILE *part[256];
  pid_t pid[256];
  int fds[2] = {-1, -1}, rc = FC_OK;
  if (jobs > 256) jobs = 256;
  if (show && pipe(fds)) show = 0;
  for (int w = 0; w < jobs; w++)
    if (!(part[w] = tmpfile())) {
      for (int v = 0; v < w; v++) fclose(part[v]);
      return fc_fail(err, FC_EIO, NULL, "cannot create a temporary file: %s", strerror(errno));
    }
  fflush(NULL);
  for (int w = 0; w < jobs; w++) {
    pid[w] = fork();
    if (pid[w] == 0) {
      if (fds[0] >= 0) close(fds[0]);
      worker(S, shard, nshard, w, jobs, part[w], fds[1]);
      _exit(0);
    }
    if (pid[w] < 0) { rc = fc_fail(err, FC_EIO, NULL, "fork failed: %s", strerror(errno)); jobs = w; break; }
  }
  if (fds[1] >= 0) close(fds[1]);
  double t0 = now();
  long done = 0, fail = 0;
  char c;
  while (show && read(fds[0], &c, 1) == 1) {
    done++;
    fail += c == 'x';
    progress(done, fail, nmine, t0);
  }
  if (fds[0] >= 0) close(fds[0]);
  for (int w = 0; w < jobs; w++) {
    int st;
    if (waitpid(pid[w], &st, 0) < 0 || !WIFEXITED(st) || WEXITSTATUS(st))
      if (!rc) rc = fc_fail(err, FC_EIO, NULL, "worker %d ended abnormally", w);
  }
  if (!rc) rc = collect(part, jobs, nmine, shard, nshard, f, err);
  for (int w = 0; w < jobs; w++) fclose(part[w]);
  return rc;
}
