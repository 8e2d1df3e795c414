/* replay.c - main() that replays a seed corpus through a fuzz harness (LLVMFuzzerTestOneInput).
 *
 *   usage: replay_TARGET DIR|FILE...
 * Every regular file of each DIR (in name order, not recursing) and every FILE is read whole and passed
 * to the harness once. Exit status 0 when at least one input ran and none stopped the process; 1 when
 * nothing could be read (an empty or missing corpus must not pass). This is how the corpus runs as an
 * ordinary test (ctest label fuzz-replay) with any compiler, without libFuzzer.
 */
#define _DEFAULT_SOURCE
#include <dirent.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "fuzz_target.h"

/* Reads the file at path and runs the harness on it. Returns 1 when it ran, 0 when unreadable. */
static int replay_file(const char *path)
{
    FILE *f = fopen(path, "rb");
    if (!f)
        return 0;
    size_t cap = 4096, n = 0;
    unsigned char *buf = malloc(cap);
    size_t got;
    while (buf && (got = fread(buf + n, 1, cap - n, f)) > 0) {
        n += got;
        if (n == cap) {
            unsigned char *bigger = realloc(buf, cap * 2);
            if (!bigger) {
                free(buf);
                buf = NULL;
                break;
            }
            buf = bigger;
            cap *= 2;
        }
    }
    int bad = ferror(f);
    fclose(f);
    if (!buf || bad) {
        free(buf);
        return 0;
    }
    LLVMFuzzerTestOneInput(buf, n);
    free(buf);
    return 1;
}

static int by_name(const void *a, const void *b)
{
    return strcmp(*(const char *const *)a, *(const char *const *)b);
}

/* Replays every regular file of folder dir in name order. Returns the number run, or -1 on failure. */
static long replay_dir(const char *dir)
{
    DIR *d = opendir(dir);
    if (!d)
        return -1;
    char **names = NULL;
    size_t n = 0, cap = 0;
    struct dirent *e;
    while ((e = readdir(d)) != NULL) {
        if (e->d_name[0] == '.')
            continue;
        if (n == cap) {
            cap = cap ? 2 * cap : 64;
            char **bigger = realloc(names, cap * sizeof *names);
            if (!bigger)
                break;
            names = bigger;
        }
        size_t len = strlen(dir) + strlen(e->d_name) + 2;
        names[n] = malloc(len);
        if (!names[n])
            break;
        snprintf(names[n], len, "%s/%s", dir, e->d_name);
        n++;
    }
    closedir(d);
    if (n)
        qsort(names, n, sizeof *names, by_name);
    long ran = 0;
    for (size_t k = 0; k < n; k++) {
        struct stat s;
        if (stat(names[k], &s) == 0 && S_ISREG(s.st_mode)) {
            if (!replay_file(names[k])) {
                fprintf(stderr, "replay: cannot read %s\n", names[k]);
                ran = -1 - ran;
            } else if (ran >= 0) {
                ran++;
            }
        }
        free(names[k]);
    }
    free(names);
    return ran;
}

int main(int argc, char **argv)
{
    long total = 0;
    for (int a = 1; a < argc; a++) {
        struct stat s;
        if (stat(argv[a], &s) != 0) {
            fprintf(stderr, "replay: %s: no such file or folder\n", argv[a]);
            return 1;
        }
        long ran = S_ISDIR(s.st_mode) ? replay_dir(argv[a]) : replay_file(argv[a]);
        if (ran <= 0) {
            fprintf(stderr, "replay: %s: nothing replayed (an empty corpus or an unreadable file)\n", argv[a]);
            return 1;
        }
        total += ran;
    }
    if (total == 0) {
        fprintf(stderr, "usage: %s DIR|FILE...\n", argv[0]);
        return 1;
    }
    printf("replayed %ld inputs\n", total);
    return 0;
}
