/* pfr_modules.h - where `require` finds modules in a run. */
#ifndef PFR_MODULES_H
#define PFR_MODULES_H

#include <lua.h>
#include "pfr_recipes.h"

/* Environment variable listing extra module folders, ':'-separated. */
#define PFR_MODULE_PATH_ENV "PSIFLIGHT_RECIPE_PATH"
/* Prefix of the bundled recipes' module names: psiflight.recipes.NAME. */
#define PFR_RECIPE_PREFIX "psiflight.recipes."

/* Installs the module searchers: preloaded modules, then NAME.lua or
 * NAME/init.lua (dots become folders) in script_dir (NULL: none) and in each
 * folder of $PSIFLIGHT_RECIPE_PATH, then the bundled recipe library.  Only
 * Lua source text is loaded in the sandbox, and a file whose resolved path
 * leaves its folder (a symbolic link out) is refused there.  Sandboxed runs get no other
 * searcher; trusted runs keep Lua's package.path/cpath searchers after ours. */
void pfr_modules_install(lua_State *L, const char *script_dir, int sandboxed);
/* SHA-256 (hex) of a module's source as the manifest records it: a file
 * path, or "bundled:recipes/NAME.lua" for a bundled recipe.  -1 when it
 * cannot be read (or names no bundled recipe). */
int pfr_module_digest(const char *source, char hex[65]);
/* The bundled recipe of that name (without prefix), or NULL. */
const pfr_bundled_recipe *pfr_recipe_find(const char *name);

#endif
