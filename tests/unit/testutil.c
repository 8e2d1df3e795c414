/* testutil.c - helpers shared by the unit tests (see testutil.h). */
#include "testutil.h"

#include <stdio.h>
#include <stdlib.h>

void tu_tmp_path(char *out, size_t n, const char *name)
{
    const char *dir = getenv("SW_TEST_TMP");
    snprintf(out, n, "%s/%s", dir && *dir ? dir : "/tmp", name);
}

int tu_write_file(const char *path, const char *text)
{
    FILE *f = fopen(path, "w");
    if (!f)
        return -1;
    int bad = fputs(text, f) < 0;
    bad |= fclose(f) != 0;
    return bad ? -1 : 0;
}
