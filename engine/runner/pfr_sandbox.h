/* pfr_sandbox.h - the standard Lua libraries as a run sees them: complete for
 * --trusted scripts, restricted by default (docs/sharing-recipes.md). */
#ifndef PFR_SANDBOX_H
#define PFR_SANDBOX_H

#include <stddef.h>
#include <lua.h>

/* Opens the standard libraries into L.  When sandboxed: program execution,
 * native code, environment and locale access are replaced by functions that
 * raise a sandbox error naming the operation; file functions (io.open,
 * io.lines, io.input, io.output, os.remove, os.rename, loadfile, dofile) check
 * their path against the state's file policy (pfl_files_check); io.open,
 * io.input and io.output then open the resolved, link-free path with O_NOFOLLOW; load
 * accepts text chunks only; debug keeps only traceback and getinfo. */
void pfr_sandbox_open_libs(lua_State *L, int sandboxed);
/* In the sandbox, pf.setup may not move the wisdom file or the output folder
 * and may not raise the engine memory cap above engine_cap.  Wraps the setup
 * function of the module table at mod. */
void pfr_sandbox_guard_setup(lua_State *L, int mod, size_t engine_cap);

/* Registry field holding package.cpath as it was before the sandbox. */
#define PFR_SANDBOX_CPATH_KEY "psiflight.sandbox.cpath"
/* Last searcher of a sandboxed run: a module that exists only as native code
 * on the original package.cpath raises a sandbox error naming the file. */
int pfr_sandbox_native_searcher(lua_State *L);

#endif
