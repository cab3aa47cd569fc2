/* alloc.c - see alloc.h. */
#include "alloc.h"

#include <limits.h>
#include <stdint.h>
#include <stdlib.h>

static void *libc_realloc(void *data, void *p, size_t n)
{
    (void)data;
    if (n == 0) {
        free(p);
        return NULL;
    }
    return realloc(p, n);
}

static const lc_alloc libc_alloc = {libc_realloc, NULL};

const lc_alloc *lc_alloc_default(void) { return &libc_alloc; }

int lc_grow(const lc_alloc *alloc, void **p, int *cap, int need, size_t elem)
{
    if (need <= *cap)
        return LC_OK;
    if (!alloc)
        alloc = &libc_alloc;
    long want = *cap < 16 ? 16 : (long)*cap;
    while (want < need)
        want *= 2;
    if (want > INT_MAX || (size_t)want > SIZE_MAX / elem)
        return LC_ERR_NO_MEMORY;
    void *q = alloc->realloc(alloc->data, *p, (size_t)want * elem);
    if (!q)
        return LC_ERR_NO_MEMORY;
    *p = q;
    *cap = (int)want;
    return LC_OK;
}

void lc_release(const lc_alloc *alloc, void **p, int *cap)
{
    if (!alloc)
        alloc = &libc_alloc;
    if (*p)
        alloc->realloc(alloc->data, *p, 0);
    *p = NULL;
    *cap = 0;
}
