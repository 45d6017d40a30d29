/* pfr_limits.h - resource limits of a run: the Lua heap cap (a counting
 * allocator handed to lua_newstate) and the wall-time limit. */
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
    double deadline;    /* monotonic seconds; 0: no time limit */
    double seconds;     /* the limit as given */
    int time_hit;
} pfr_limits;

/* lua_Alloc with ud a pfr_limits: frees always succeed, growth beyond the cap
 * fails (Lua then raises a memory error). */
void *pfr_limits_alloc(void *ud, void *ptr, size_t osize, size_t nsize);
/* Arms the wall-time limit for L (which must use pfr_limits_alloc): a count
 * hook raises a resource-limit error in Lua code once it has passed, and an
 * alarm ends the process (exit 5) if an engine call overruns it by more than
 * max(2 s, 10%). */
void pfr_limits_arm_time(lua_State *L, double seconds);
/* Cancels the alarm. */
void pfr_limits_disarm(void);

#endif
