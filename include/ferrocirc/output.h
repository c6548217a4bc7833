/* ferrocirc — output files that are never half-written, and the time-series CSV sink.
 *
 * fc_outfile writes to a temporary file in the destination's folder (so the final rename is
 * atomic on POSIX file systems) and renames it only on commit. Abort removes the temporary;
 * keep_partial renames it to "PATH.partial" for inspection. A destination that exists and is
 * not a regular file (a FIFO, /dev/null, a terminal) is written in place instead: no
 * temporary, no sync, nothing renamed; a folder is refused at open. */
#ifndef FERROCIRC_OUTPUT_H
#define FERROCIRC_OUTPUT_H

#include <stdio.h>

#include "ferrocirc/error.h"
#include "ferrocirc/network.h"
#include "ferrocirc/sim.h"

typedef struct fc_outfile fc_outfile;

/* Create the temporary beside `path`. FC_EIO (exit 1) if the folder is not writable. */
int fc_outfile_open(const char *path, fc_outfile **out, fc_error *err);
FILE *fc_outfile_stream(fc_outfile *f);
/* Flush, close and rename over `path`; frees f. FC_EIO on a write error (disk full): then the
 * temporary is removed and `path` is untouched. */
int fc_outfile_commit(fc_outfile *f, fc_error *err);
/* Commit the n outputs (NULL entries skipped) together: all are flushed and closed before any
 * is renamed, and on any write error every temporary is removed, so either all appear or none
 * does (a rename failing after others succeeded is the one gap: same folder, so rare). Frees
 * them and sets the entries to NULL. */
int fc_outfile_commit_all(fc_outfile **f, int n, fc_error *err);
/* The destination path. */
const char *fc_outfile_path(const fc_outfile *f);
/* Remove the temporary; frees f. NULL is a no-op. */
void fc_outfile_abort(fc_outfile *f);
/* Close and rename to "PATH.partial" after writing `note` as a last comment line; frees f. */
int fc_outfile_keep_partial(fc_outfile *f, const char *note, fc_error *err);

/* Time-series CSV: "t [s]", "p:NODE [unit]"..., "q:ID [unit]"... for two-terminal elements,
 * "state:ID" for elements with modes. Numbers in %.9g. */
typedef struct fc_csv_sink fc_csv_sink;
int fc_csv_sink_new(const fc_net *net, FILE *f, double p_factor, double q_factor,
                    const char *p_unit, const char *q_unit, fc_csv_sink **out, fc_error *err);
/* Writes every row not yet written and stops the writer thread; 0, or -1 with errno set (and
 * *fail_t, if not NULL, the time of the first row that could not be written). Call it before
 * the file is closed; fc_csv_sink_free without it drops the rows not yet handed over. */
int fc_csv_sink_finish(fc_csv_sink *c, double *fail_t);
void fc_csv_sink_free(fc_csv_sink *c);
/* Fill a sim sink that writes rows through c. */
void fc_csv_sink_bind(fc_csv_sink *c, fc_sim_sink *sink);

/* Event list CSV ("t [s]", "element", "from", "to", "dp [unit]") as a sink's xEvent. */
int fc_events_csv_header(FILE *f, const char *p_unit);

#endif
