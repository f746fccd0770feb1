/*
 * tram/fileio.h - writing output files so that they are never half-written.
 */
#ifndef TRAM_FILEIO_H
#define TRAM_FILEIO_H

#include "tram/common.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Write len bytes to path atomically: into a temporary file in the same
 * directory, flushed to disk, then renamed over path.  An existing path is
 * an error (TRAM_EINPUT) unless overwrite is set.  On failure path is
 * untouched and no temporary file is left. */
TRAM_API tram_status tram_file_write_atomic(const char *path, const char *data, size_t len,
                                            int overwrite, tram_error *err);

/* Append one line (a '\n' is added) to path with a single write(2) on a
 * file opened with O_APPEND, then fsync: a crash leaves earlier lines
 * intact.  The file is created when missing. */
TRAM_API tram_status tram_file_append_line(const char *path, const char *line, tram_error *err);

#ifdef __cplusplus
}
#endif
#endif
