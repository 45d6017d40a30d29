/* pfr_limits.c - the Lua heap cap of a run.
 *
 * The heap cap counts every byte the Lua state holds (tables, strings, and
 * userdata headers; wave-function storage is capped separately by the engine's
 * memory cap).  The wall-time limit stops a run like an interrupt does, so it
 * lives with the other ways of stopping, in pfr_stop.c. */
#include <stdlib.h>
#include "pfr_limits.h"

void *pfr_limits_alloc(void *ud, void *ptr, size_t osize, size_t nsize)
{
    pfr_limits *lim = ud;
    size_t old = ptr ? osize : 0; /* for a new block osize is a type tag */
    if (nsize == 0) {
        free(ptr);
        lim->used -= old;
        return NULL;
    }
    if (nsize > old && lim->used + (nsize - old) > lim->cap) {
        lim->cap_hit = 1;
        return NULL;
    }
    void *p = realloc(ptr, nsize);
    if (!p) return NULL;
    lim->used = lim->used - old + nsize;
    return p;
}
