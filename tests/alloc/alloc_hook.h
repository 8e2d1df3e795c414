/* alloc_hook.h - fail the Nth allocation of the library's own code (a link-time hook for tests).
 *
 * The test executable is linked with -Wl,--wrap=malloc,--wrap=calloc,--wrap=realloc,--wrap=aligned_alloc
 * against the static library, so every call of these in libshoreward.a's objects (and in the test's own
 * objects) goes through alloc_hook.c; shared libraries (libnetcdf, libgomp, FFTW, inih, libc itself) keep
 * their own allocator and are neither counted nor failed. The counter is atomic: allocations made inside
 * OpenMP regions count too (a run with one thread numbers them the same way every time). With the
 * environment variable SW_ALLOC_HOOK_BACKTRACE set, the failed allocation's call stack goes to stderr.
 */
#ifndef SW_ALLOC_HOOK_H
#define SW_ALLOC_HOOK_H

/* Starts counting from 0 and makes allocation number fail_at (1 = the first) return NULL; fail_at 0 =
 * count only, fail none. */
void alloc_hook_arm(long fail_at);

/* Stops counting and failing. Returns the number of allocations counted since alloc_hook_arm. */
long alloc_hook_disarm(void);

/* The number of allocations counted since alloc_hook_arm (counting goes on). */
long alloc_hook_count(void);

/* 1 when the allocation chosen by alloc_hook_arm has been failed since then, else 0. */
int alloc_hook_failed(void);

#endif
