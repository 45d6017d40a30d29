/* pfr_limits.h - resource limits of a run: the Lua heap cap (a counting
 * allocator handed to lua_newstate).  The wall-time limit: pfr_stop.h. */
#ifndef PFR_LIMITS_H
#define PFR_LIMITS_H

#include <stddef.h>
#include <lua.h>

/* Default cap on the Lua heap when --memory-cap is not given. */
#define PFR_DEFAULT_LUA_HEAP ((size_t)2 << 30)

typedef struct pfr_limits {
    size_t used;        /* bytes the Lua state holds now */
    size_t cap;         /* refuse allocations beyond this */
    int cap_hit;        /* an allocation was refused */
} pfr_limits;

/* lua_Alloc with ud a pfr_limits: frees always succeed, growth beyond the cap
 * fails (Lua then raises a memory error). */
void *pfr_limits_alloc(void *ud, void *ptr, size_t osize, size_t nsize);

#endif
