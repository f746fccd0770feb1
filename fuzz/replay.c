/*
 * replay.c - main() for the fuzz harnesses without libFuzzer: runs
 * LLVMFuzzerTestOneInput once on every file named on the command line (a
 * directory: every regular file in it, in name order).  `make test` builds
 * each harness with this driver under AddressSanitizer and UBSan and
 * replays the corpus in fuzz/corpus/, so that every input that once
 * crashed stays fixed.  Prints "replay_HARNESS: N passed, 0 failed".
 */
#define _DEFAULT_SOURCE
#include "fuzz_common.h"

#include <dirent.h>
#include <sys/stat.h>

static int run_file(const char *path)
{
    FILE *f = fopen(path, "rb");
    if (!f) {
        fprintf(stderr, "replay: cannot open %s\n", path);
        return -1;
    }
    size_t cap = 4096, n = 0;
    uint8_t *buf = malloc(cap);
    for (size_t got; buf && (got = fread(buf + n, 1, cap - n, f)) > 0;) {
        n += got;
        if (n == cap) {
            uint8_t *nb = realloc(buf, cap *= 2);
            if (!nb) free(buf);
            buf = nb;
        }
    }
    fclose(f);
    if (!buf) return -1;
    /* An exact-size copy, so that a read past the end is caught. */
    uint8_t *exact = malloc(n ? n : 1);
    if (!exact) {
        free(buf);
        return -1;
    }
    memcpy(exact, buf, n);
    free(buf);
    LLVMFuzzerTestOneInput(exact, n);
    free(exact);
    return 0;
}

static int by_name(const struct dirent **a, const struct dirent **b)
{
    return strcmp((*a)->d_name, (*b)->d_name);
}

int main(int argc, char **argv)
{
    size_t passed = 0, failed = 0;
    for (int i = 1; i < argc; i++) {
        struct stat sb;
        if (stat(argv[i], &sb) != 0) {
            fprintf(stderr, "replay: %s: no such file or directory\n", argv[i]);
            failed++;
            continue;
        }
        if (!S_ISDIR(sb.st_mode)) {
            if (run_file(argv[i]) == 0) passed++; else failed++;
            continue;
        }
        struct dirent **list;
        int n = scandir(argv[i], &list, NULL, by_name);
        for (int k = 0; k < n; k++) {
            char path[4096];
            snprintf(path, sizeof path, "%s/%s", argv[i], list[k]->d_name);
            if (stat(path, &sb) == 0 && S_ISREG(sb.st_mode)) {
                if (run_file(path) == 0) passed++; else failed++;
            }
            free(list[k]);
        }
        if (n >= 0) free(list);
    }
    const char *name = strrchr(argv[0], '/');
    printf("%s: %zu passed, %zu failed\n", name ? name + 1 : argv[0], passed, failed);
    return failed ? 1 : 0;
}
