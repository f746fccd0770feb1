/*
 * fileio.c - atomic output files: write to a temporary file beside the
 * target, fsync, rename (rename(2) replaces the target atomically on POSIX
 * file systems), and appends of whole lines with one O_APPEND write.
 * Output files get the mode any new file gets (0666 less the umask, as
 * open(2) gives it; a replaced file keeps its mode), not mkstemp's 0600:
 * other users and services read calibrations.
 */
#include "tram/fileio.h"
#include "core/tram_internal.h"

#include <errno.h>
#include <fcntl.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

static int write_all(int fd, const char *p, size_t len)
{
    while (len > 0) {
        ssize_t w = write(fd, p, len);
        if (w < 0) {
            if (errno == EINTR) continue;
            return -1;
        }
        p += w;
        len -= (size_t)w;
    }
    return 0;
}

/* A new file "PATH.tmp.XXXXXX" (name into tmp, cap bytes) opened with
 * O_CREAT | O_EXCL and mode 0666, so that the umask applies as to any new
 * file; the suffix from the process id, the clock and the attempt. */
static int open_temporary(const char *path, char *tmp, size_t cap)
{
    struct timespec ts;
    clock_gettime(CLOCK_REALTIME, &ts);
    unsigned long long x = ((unsigned long long)getpid() << 32) ^ (unsigned long long)ts.tv_nsec ^
                           ((unsigned long long)ts.tv_sec << 20);
    for (int attempt = 0; attempt < 100; attempt++) {
        x = x * 6364136223846793005ULL + 1442695040888963407ULL; /* Knuth's LCG step */
        snprintf(tmp, cap, "%s.tmp.%06llx", path, (x >> 40) & 0xffffffULL);
        int fd = open(tmp, O_WRONLY | O_CREAT | O_EXCL, 0666);
        if (fd >= 0 || errno != EEXIST) return fd;
    }
    errno = EEXIST;
    return -1;
}

tram_status tram_file_write_atomic(const char *path, const char *data, size_t len, int overwrite,
                                   tram_error *err)
{
    struct stat sb;
    int existed = stat(path, &sb) == 0 && S_ISREG(sb.st_mode);
    if (!overwrite && stat(path, &sb) == 0)
        return tram__fail(err, TRAM_EINPUT, path, 0, 0,
                          "already exists; not overwritten (pass --force to replace it)");
    size_t pl = strlen(path);
    char *tmp = tram__malloc(pl + 16);
    if (!tmp) return tram__fail(err, TRAM_ENOMEM, path, 0, 0, "out of memory");
    int fd = open_temporary(path, tmp, pl + 16);
    if (fd >= 0 && existed) fchmod(fd, sb.st_mode & 07777); /* a replaced file keeps its mode */
    if (fd < 0) {
        tram_status st = tram__fail(err, TRAM_EIO, path, 0, 0, "cannot create a temporary file: %s",
                                    strerror(errno));
        tram__free(tmp);
        return st;
    }
    int bad = write_all(fd, data, len) != 0 || fsync(fd) != 0;
    int saved = errno;
    if (close(fd) != 0 && !bad) {
        bad = 1;
        saved = errno;
    }
    if (!bad && rename(tmp, path) != 0) {
        bad = 1;
        saved = errno;
    }
    if (bad) {
        unlink(tmp);
        tram__free(tmp);
        return tram__fail(err, TRAM_EIO, path, 0, 0, "cannot write: %s", strerror(saved));
    }
    tram__free(tmp);
    return TRAM_OK;
}

tram_status tram_file_append_line(const char *path, const char *line, tram_error *err)
{
    size_t n = strlen(line);
    /* room for a newline before the record, when the last line lacks one */
    char *buf = tram__malloc(n + 2);
    if (!buf) return tram__fail(err, TRAM_ENOMEM, path, 0, 0, "out of memory");
    int fd = open(path, O_RDWR | O_APPEND | O_CREAT, 0644);
    if (fd < 0) {
        tram__free(buf);
        return tram__fail(err, TRAM_EIO, path, 0, 0, "cannot open for appending: %s",
                          strerror(errno));
    }
    off_t old = lseek(fd, 0, SEEK_END);
    char last = '\n';
    if (old > 0 && pread(fd, &last, 1, old - 1) != 1) last = '\n';
    size_t k = 0;
    if (last != '\n') buf[k++] = '\n'; /* never glue the record onto the last line */
    memcpy(buf + k, line, n);
    buf[k + n] = '\n';
    /* the record in one write; on failure the file goes back to its length */
    int bad = old < 0 || write_all(fd, buf, k + n + 1) != 0 || fsync(fd) != 0;
    int saved = errno;
    if (bad && old >= 0 && ftruncate(fd, old) != 0) saved = errno;
    close(fd);
    tram__free(buf);
    if (bad) return tram__fail(err, TRAM_EIO, path, 0, 0, "cannot append: %s", strerror(saved));
    return TRAM_OK;
}
