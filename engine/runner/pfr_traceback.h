/* pfr_traceback.h - the message handler that turns a Lua error into the text
 * the runner prints: the message, then the script positions that led to it. */
#ifndef PFR_TRACEBACK_H
#define PFR_TRACEBACK_H

#include <lua.h>

/* Marks where the traceback starts in the handled message. */
#define PFR_TRACEBACK_MARK "\nscript traceback:"

/* lua_pcall message handler.  Keeps non-string error values it recognises as
 * signals (the help stop) unchanged; otherwise returns the message followed
 * by one line per Lua frame (file:line and function), innermost first.
 * Frames of C functions, the engine internals, are left out. */
int pfr_traceback(lua_State *L);

#endif
