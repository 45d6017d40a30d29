/* pfl_params.h - what the runner tells pf.parameters (pfl_params.c): the
 * --set overrides, help mode and the label of the script being run. */
#ifndef PFL_PARAMS_H
#define PFL_PARAMS_H

#include <lua.h>

/* Stores the overrides ("NAME=VALUE" strings, command-line order), help mode
 * (pf.parameters prints the listing and stops the script) and the label shown
 * in the listing.  Call before the script runs. */
void pfl_params_configure(lua_State *L, int nsets, char *const *sets, int help, const char *label);
/* Publishes psiflight.params (module table at mod): the raw --set values
 * (numbers when they look like numbers) behind a proxy that notes every
 * name the script reads.  Call after pfl_params_configure. */
void pfl_params_publish(lua_State *L, int mod);
/* After a run: the first --set name (command-line order) that the script
 * neither declared (pf.parameters) nor read (pf.params.NAME), or NULL. */
const char *pfl_params_unused(lua_State *L);
/* Called by engine functions that start work (grid creation, loading a
 * state, resolving an output file): in help mode it raises the help stop, so
 * --help never computes, also for a script that declares no parameters. */
void pfl_params_before_work(lua_State *L);
/* 1 when the error value at idx is the stop signal pf.parameters raises after
 * printing the listing in help mode. */
int pfl_params_is_help_stop(lua_State *L, int idx);
/* 1 once the script has declared its parameters. */
int pfl_params_declared(lua_State *L);
/* Pushes a table: name -> value as text ("18ms" as typed, or the default with
 * its unit), for every declared parameter; an empty table before the
 * declaration. */
void pfl_params_push_text(lua_State *L);

#endif
