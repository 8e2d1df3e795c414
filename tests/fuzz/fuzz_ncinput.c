/* fuzz_ncinput.c - fuzz harness: a NetCDF input field (sw_ncin_grid, sw_ncin_read_with, sw_crs_read).
 *
 * The input is the bytes of a NetCDF file. Only the classic formats are passed on ("CDF\x01" classic,
 * "CDF\x02" 64-bit offset): HDF5-based (netCDF-4) and other files are rejected before the library sees
 * them, because libnetcdf/libhdf5 themselves crash on some damaged HDF5 files, which is not our code
 * (isolating that is another part of issue 15). The bytes go to an anonymous memory file (memfd), opened
 * by its /proc/self/fd name, so no file is left behind. A classic header whose lists claim more dimensions,
 * attributes, variables or attribute values than the file's bytes could hold is rejected too
 * (classic_header_fits): libnetcdf's nc_open allocates what the header claims before it looks further, and
 * such a file made it spend over 10 s and hundreds of MB inside nc_open (found by this harness; not our code).
 * Variable `depth` is read as a seabed is: its grid,
 * then its values on that grid and on a small second grid that interpolates (with land from missing
 * values and a `mask` variable, or 0 outside, as the last input byte chooses), and its grid mapping.
 */
#define _GNU_SOURCE
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>
#include <unistd.h>

#include "fuzz_target.h"
#include "inputs/crs.h"
#include "inputs/ncinput.h"

#define FUZZ_MAX_CELLS (1u << 20)   /* a grid larger than this is not read (memory, time) */

/* A cursor over the bytes of a classic header (the NetCDF classic format specification). */
typedef struct {
    const uint8_t *p;
    size_t size, pos;
    int ok;
} hdr;

static uint32_t hdr_u32(hdr *h)
{
    if (!h->ok || h->size - h->pos < 4) {
        h->ok = 0;
        return 0;
    }
    const uint8_t *b = h->p + h->pos;
    h->pos += 4;
    return (uint32_t)b[0] << 24 | (uint32_t)b[1] << 16 | (uint32_t)b[2] << 8 | (uint32_t)b[3];
}

/* Skips n bytes padded to a multiple of 4. */
static void hdr_skip(hdr *h, uint64_t n)
{
    n = (n + 3) / 4 * 4;
    if (!h->ok || n > h->size - h->pos)
        h->ok = 0;
    else
        h->pos += (size_t)n;
}

/* Reads a list's tag and count; 1 with *n when the list is present and its n elements of at least
 * min_bytes each fit in what is left, 0 when absent (*n = 0); clears h->ok otherwise. */
static void hdr_list(hdr *h, uint32_t tag, uint32_t *n, size_t min_bytes)
{
    uint32_t t = hdr_u32(h);
    *n = hdr_u32(h);
    if (!h->ok || (t == 0 && *n == 0))
        return;
    if (t != tag || *n > (h->size - h->pos) / min_bytes)
        h->ok = 0;
}

static void hdr_atts(hdr *h)
{
    static const uint64_t type_bytes[] = {0, 1, 1, 2, 4, 4, 8};   /* NC_BYTE .. NC_DOUBLE */
    uint32_t n;
    hdr_list(h, 0x0C, &n, 16);
    for (uint32_t k = 0; k < n && h->ok; k++) {
        hdr_skip(h, hdr_u32(h));   /* name */
        uint32_t type = hdr_u32(h), count = hdr_u32(h);
        if (type < 1 || type > 6)
            h->ok = 0;
        else
            hdr_skip(h, (uint64_t)count * type_bytes[type]);
    }
}

/* 1 when the classic header's lists fit in the file's bytes (see the top of this file), else 0. */
static int classic_header_fits(const uint8_t *data, size_t size)
{
    hdr h = {data, size, 4, 1};
    const size_t begin_bytes = data[3] == 2 ? 8 : 4;
    (void)hdr_u32(&h);   /* numrecs */
    uint32_t n, len[64], n_dims;
    hdr_list(&h, 0x0A, &n, 12);
    n_dims = n;
    for (uint32_t k = 0; k < n && h.ok; k++) {
        hdr_skip(&h, hdr_u32(&h));
        uint32_t l = hdr_u32(&h);   /* the dimension's length: left to the code under test */
        if (k < 64)
            len[k] = l;
    }
    hdr_atts(&h);
    hdr_list(&h, 0x0B, &n, 24);
    for (uint32_t k = 0; k < n && h.ok; k++) {
        hdr_skip(&h, hdr_u32(&h));
        uint32_t ndims = hdr_u32(&h);
        /* libnetcdf 4.9 divides by zero while opening (NC_check_vlen, SIGFPE) on a record (length 0)
         * dimension anywhere but first and on a type outside the classic ones: library bugs outside this
         * project, which isolate.c turns into errors for users; here they would only stop the fuzzer */
        for (uint32_t d = 0; d < ndims && h.ok && d < 1024; d++) {
            uint32_t id = hdr_u32(&h);
            if (d > 0 && id < n_dims && id < 64 && len[id] == 0)
                h.ok = 0;
        }
        if (ndims >= 1024)
            h.ok = 0;
        hdr_atts(&h);
        const uint32_t type = hdr_u32(&h);
        if (type < 1 || type > 6)   /* not a classic type: libnetcdf 4.9 divides by its size 0 (SIGFPE) */
            h.ok = 0;
        hdr_skip(&h, 4 + begin_bytes);   /* vsize, begin */
    }
    return h.ok;
}

static int memfd = -1;              /* the memory file, reused by every input */
static char memfd_path[64];

static void check_failure(sw_status st, const sw_error *err)
{
    if (st != SW_OK && !err->msg[0])
        abort();   /* contract: a failure names its cause */
}

/* Reads `depth` of the file at path onto g with the options the flags byte chooses. */
static void read_onto(const char *path, const sw_grid *g, unsigned flags)
{
    size_t n = g->nx * g->ny;
    double *out = malloc(n * sizeof *out);
    unsigned char *land = malloc(n);
    if (!out || !land) {
        free(out);
        free(land);
        return;
    }
    int positive = 0;
    sw_ncin_options opt = {
        .outside = (flags & 1u) ? SW_NCIN_OUTSIDE_ZERO : SW_NCIN_OUTSIDE_ERROR,
        .missing_land = (flags & 2u) ? 1 : 0,
        .land_mask = (flags & 4u) ? "mask" : NULL,
        .land = land,
        .missing_hint = (flags & 8u) ? "a hint" : NULL,
        .positive_attr = &positive,
    };
    sw_error err = {0};
    check_failure(sw_ncin_read_with(path, "depth", g, &opt, out, &err), &err);
    free(land);
    free(out);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    /* read in this process: a library crash must reach the fuzzer, not become an isolated error
     * (src/base/isolate.h), and a fork per input would cost more than the read */
    setenv("SHOREWARD_ISOLATE", "off", 1);
    if (size < 4 || memcmp(data, "CDF", 3) != 0 || (data[3] != 1 && data[3] != 2))
        return 0;   /* classic formats only: see the top of this file */
    if (!classic_header_fits(data, size))
        return 0;
    if (memfd < 0) {
        memfd = memfd_create("sw-fuzz-nc", 0);
        if (memfd < 0)
            abort();
        snprintf(memfd_path, sizeof memfd_path, "/proc/self/fd/%d", memfd);
    }
    if (ftruncate(memfd, 0) != 0 || pwrite(memfd, data, size, 0) != (ssize_t)size)
        abort();
    const unsigned flags = data[size - 1];
    sw_grid g;
    sw_error err = {0};
    sw_status st = sw_ncin_grid(memfd_path, "depth", (flags & 16u) ? 6.4e6 : 0.0, &g, &err);
    check_failure(st, &err);
    if (st == SW_OK && g.nx > 0 && g.ny > 0 && g.nx <= FUZZ_MAX_CELLS / g.ny) {
        read_onto(memfd_path, &g, flags);
        sw_grid h = g;   /* a coarser grid, shifted: interpolation and points beyond the file */
        h.nx = 7;
        h.ny = 5;
        h.dx_m = g.dx_m * 1.7;
        h.dy_m = g.dy_m * 1.3;
        h.x0_m = g.x0_m + 0.3 * g.dx_m;
        h.y0_m = g.y0_m - 0.6 * g.dy_m;
        read_onto(memfd_path, &h, flags);
    }
    sw_crs crs;
    sw_error cerr = {0};
    st = sw_crs_read(memfd_path, "depth", &crs, &cerr);
    check_failure(st, &cerr);
    if (st == SW_OK)
        sw_crs_free(&crs);
    return 0;
}
