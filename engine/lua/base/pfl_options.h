/* pfl_options.h - the one checker for option tables (named fields passed to
 * a Lua function, such as pf.grid{points =, span =}).
 *
 * Every binding function that takes an options table declares its keys once,
 * in a pfl_options_decl next to the function, and checks the table with
 * pfl_options_check before reading anything.  The declarations are also
 * registered by name (pfl_options_declare), so tests can enumerate every
 * function that takes a table (pf._option_sets) and none can be missed.
 *
 * Rules the checker enforces (docs/lua-api.md, "Options tables"):
 *  - an unknown key is an error naming the function, the key and the closest
 *    known key ("did you mean"), or the known keys when none is close;
 *  - keys are strings;
 *  - an options table is a plain table: one with a metatable is refused, so
 *    no metamethod can answer differently between reads;
 *  - fields are read raw (pfl_option_get), and only after the table was
 *    checked against a declaration that lists the field (else an internal
 *    error: the binding read an option it did not declare). */
#ifndef PFL_OPTIONS_H
#define PFL_OPTIONS_H

#include "pfl.h"

typedef struct pfl_options_decl {
    const char *function;    /* as scripts write it: "pf.grid", "wave:fly_long" */
    const char *const *keys; /* the accepted keys, NULL-ended */
} pfl_options_decl;

/* Raises (script position of the caller, level 1) unless the value at idx is
 * a plain table whose keys are all in decl->keys.  Afterwards
 * pfl_option_get may read decl's keys from it.  decl must have been
 * registered with pfl_options_declare (an internal error otherwise). */
void pfl_options_check(lua_State *L, int idx, const pfl_options_decl *decl);

/* For an optional options table: 0 when idx holds none or nil, else checks
 * it as pfl_options_check does and returns idx (absolute). */
int pfl_options_opt(lua_State *L, int idx, const pfl_options_decl *decl);

/* Like pfl_options_check, with the error placed at the given stack level
 * (pf.check_options uses 2: the line that called a recipe). */
void pfl_options_check_at(lua_State *L, int idx, const pfl_options_decl *decl, int level);

/* Registers declarations (array ended by a NULL entry) under their function
 * names, for pfl_options_check and for the enumeration pf._option_sets. */
void pfl_options_declare(lua_State *L, const pfl_options_decl *const *decls);

/* Pushes "chunk:line: " of the first Lua function at or above the stack
 * level (C frames such as a wrapper of the function are skipped), or "". */
void pfl_options_where(lua_State *L, int level);

/* Pushes the raw value of key in the checked options table at t and returns
 * its type, like lua_getfield without metamethods. */
int pfl_option_get(lua_State *L, int t, const char *key);

#endif
