/*
 * alloc.h - the one allocation hook of the core.
 *
 * The core never calls malloc directly: every buffer grows through an
 * lc_alloc, so that a test can count allocations and show that a warm
 * workspace allocates nothing per frame. Buffers grow to a high-water mark
 * and are reused; nothing shrinks until the owner releases it.
 *
 * A struct that owns buffers keeps its allocator (`const lc_alloc *alloc`):
 * its ..._init(x, alloc) empties it and sets the allocator (NULL: the
 * default), a zeroed struct is the same with the default, and ..._free(x)
 * releases its buffers through that allocator, which must outlive it; the
 * struct stays usable, empty.
 */
#ifndef LC_ALLOC_H
#define LC_ALLOC_H

#include <stddef.h>

#include "status.h"

typedef struct lc_alloc {
    /* realloc semantics: n == 0 frees p and returns NULL. */
    void *(*realloc)(void *data, void *p, size_t n);
    void *data;
} lc_alloc;

/* The C library's allocator. */
const lc_alloc *lc_alloc_default(void);

/*
 * Make *p hold at least need elements of size elem, growing *cap
 * geometrically. Returns LC_OK, or LC_ERR_NO_MEMORY (then *p and *cap are
 * unchanged). A NULL alloc means lc_alloc_default().
 */
int lc_grow(const lc_alloc *alloc, void **p, int *cap, int need, size_t elem);

/* Release a buffer made by lc_grow and zero its capacity. */
void lc_release(const lc_alloc *alloc, void **p, int *cap);

#define LC_GROW(alloc, ptr, cap, need) \
    lc_grow((alloc), (void **)&(ptr), &(cap), (need), sizeof *(ptr))
#define LC_RELEASE(alloc, ptr, cap) lc_release((alloc), (void **)&(ptr), &(cap))

#endif
