/* alloc_hook.c - the --wrap replacements behind alloc_hook.h. */
#include "alloc_hook.h"

#include <execinfo.h>
#include <stdatomic.h>
#include <stddef.h>
#include <stdlib.h>

void *__real_malloc(size_t size);
void *__real_calloc(size_t n, size_t size);
void *__real_realloc(void *p, size_t size);
void *__real_aligned_alloc(size_t align, size_t size);
void *__wrap_malloc(size_t size);
void *__wrap_calloc(size_t n, size_t size);
void *__wrap_realloc(void *p, size_t size);
void *__wrap_aligned_alloc(size_t align, size_t size);

static atomic_int armed;      /* 1 while counting */
static atomic_long counted;   /* allocations since alloc_hook_arm */
static atomic_long target;    /* the number that fails; 0 = none */
static atomic_int hit;        /* 1 once it has failed */

void alloc_hook_arm(long fail_at)
{
    atomic_store(&counted, 0);
    atomic_store(&hit, 0);
    atomic_store(&target, fail_at);
    atomic_store(&armed, 1);
}

long alloc_hook_disarm(void)
{
    atomic_store(&armed, 0);
    return atomic_load(&counted);
}

long alloc_hook_count(void)
{
    return atomic_load(&counted);
}

int alloc_hook_failed(void)
{
    return atomic_load(&hit);
}

/* Counts one allocation; 1 when it is the one to fail. */
static int fail_this(void)
{
    if (!atomic_load(&armed))
        return 0;
    long k = atomic_fetch_add(&counted, 1) + 1;
    if (k != atomic_load(&target))
        return 0;
    atomic_store(&hit, 1);
    if (getenv("SW_ALLOC_HOOK_BACKTRACE")) {   /* where the failed allocation was made (glibc) */
        void *frames[32];
        backtrace_symbols_fd(frames, backtrace(frames, 32), 2);
    }
    return 1;
}

void *__wrap_malloc(size_t size)
{
    return fail_this() ? NULL : __real_malloc(size);
}

void *__wrap_calloc(size_t n, size_t size)
{
    return fail_this() ? NULL : __real_calloc(n, size);
}

void *__wrap_realloc(void *p, size_t size)
{
    return fail_this() ? NULL : __real_realloc(p, size);   /* a failed realloc leaves p to its owner */
}

void *__wrap_aligned_alloc(size_t align, size_t size)
{
    return fail_this() ? NULL : __real_aligned_alloc(align, size);
}
