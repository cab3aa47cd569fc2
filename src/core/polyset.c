/* polyset.c - see polyset.h. */
#include "polyset.h"

#include <string.h>

void lc_polyset_init(lc_polyset *s, const lc_alloc *alloc)
{
    memset(s, 0, sizeof *s);
    s->alloc = alloc;
}

int lc_polyset_reserve(lc_polyset *s, int extra)
{
    return LC_GROW(s->alloc, s->v, s->cap_v, s->nv + extra);
}

int lc_polyset_commit(lc_polyset *s, int n, int src)
{
    if (LC_GROW(s->alloc, s->span, s->cap_p, s->np + 1) < 0)
        return LC_ERR_NO_MEMORY;
    s->span[s->np++] = (lc_span){s->nv, n, src};
    s->nv += n;
    return LC_OK;
}

int lc_polyset_push(lc_polyset *s, const lc_vec2 *v, int n, int src)
{
    if (lc_polyset_reserve(s, n) < 0)
        return LC_ERR_NO_MEMORY;
    memcpy(s->v + s->nv, v, sizeof *v * (size_t)n);
    return lc_polyset_commit(s, n, src);
}

void lc_polyset_free(lc_polyset *s)
{
    LC_RELEASE(s->alloc, s->v, s->cap_v);
    LC_RELEASE(s->alloc, s->span, s->cap_p);
    s->nv = s->np = 0;
}
