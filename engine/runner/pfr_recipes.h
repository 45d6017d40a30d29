/* pfr_recipes.h - the bundled recipe library: every engine/recipes/NAME.lua, compiled
 * into the runner by scripts/embed-recipes.sh (a generated C file). */
#ifndef PFR_RECIPES_H
#define PFR_RECIPES_H

#include <stddef.h>

typedef struct pfr_bundled_recipe {
    const char *name;             /* file name without .lua: "tof_image" */
    const unsigned char *source;  /* Lua source text, NUL-terminated */
    size_t length;                /* bytes, without the NUL */
} pfr_bundled_recipe;

/* Table generated at build time, ended by an entry with name NULL. */
extern const pfr_bundled_recipe pfr_bundled_recipes[];

#endif
