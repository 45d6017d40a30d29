/* fuzz_parameters.c - libFuzzer harness for declared parameters: the
 * declaration table a script gives pf.parameters, read together with the
 * runner's --set overrides (pfl_params.c), in normal and --help mode.
 *
 * A Lua table cannot come from bytes directly, so this adapter decodes the
 * input into one.  Byte 0: bit 0 = help mode.  Then lines:
 *   set NAME=VALUE            one --set override, as the runner passes it
 *   NAME|key=value|key=value  one declaration entry {key = value, ...}
 * A value is a list {a,b,...} of strings, true/false, a Lua number when Lua
 * reads it as one (integer or float), otherwise a string.  The key "-" makes
 * the entry a plain value instead of a table (a malformed declaration). */
#include "fuzz_util.h"
#include "pfl_params.h"

#define MAX_SETS 32

static void push_value(lua_State *L, const char *v)
{
    size_t n = strlen(v);
    if (n >= 2 && v[0] == '{' && v[n - 1] == '}') {
        lua_newtable(L);
        char *items = strndup(v + 1, n - 2);
        lua_Integer k = 0;
        for (char *s = items, *comma; s; s = comma ? comma + 1 : NULL) {
            comma = strchr(s, ',');
            if (comma) *comma = 0;
            lua_pushstring(L, s);
            lua_rawseti(L, -2, ++k);
        }
        free(items);
    } else if (strcmp(v, "true") == 0 || strcmp(v, "false") == 0) {
        lua_pushboolean(L, v[0] == 't');
    } else if (lua_stringtonumber(L, v) == 0) {
        lua_pushstring(L, v);
    }
}

/* Builds the declaration table from the non-"set" lines; pushes it. */
static void push_declaration(lua_State *L, char *text)
{
    lua_newtable(L);
    for (char *line = text, *nl; line; line = nl ? nl + 1 : NULL) {
        nl = strchr(line, '\n');
        if (nl) *nl = 0;
        if (strncmp(line, "set ", 4) == 0) continue;
        char *bar = strchr(line, '|');
        if (bar) *bar = 0;
        lua_pushstring(L, line); /* the parameter's name */
        lua_newtable(L);
        for (char *field = bar ? bar + 1 : NULL, *next; field; field = next) {
            next = strchr(field, '|');
            if (next) *next++ = 0;
            char *eq = strchr(field, '=');
            if (!eq) continue;
            *eq = 0;
            if (strcmp(field, "-") == 0) {
                lua_pop(L, 1);
                push_value(L, eq + 1);
                break;
            }
            push_value(L, eq + 1);
            lua_setfield(L, -2, field);
        }
        lua_settable(L, -3);
    }
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size < 1) return 0;
    int help = data[0] & 1;
    char *text = fuzz_text(data + 1, size - 1);
    char *copy = strdup(text);
    char *sets[MAX_SETS];
    int nsets = 0;
    for (char *line = copy, *nl; line && nsets < MAX_SETS; line = nl ? nl + 1 : NULL) {
        nl = strchr(line, '\n');
        if (nl) *nl = 0;
        if (strncmp(line, "set ", 4) == 0) sets[nsets++] = line + 4;
    }
    lua_State *L = fuzz_lua();
    pfl_params_configure(L, nsets, sets, help, "fuzz-input");
    lua_getglobal(L, "pf");
    lua_getfield(L, -1, "parameters");
    push_declaration(L, text);
    int rc = lua_pcall(L, 1, 1, 0);
    if (rc == LUA_OK) {
        /* Declared: every value has its text, and a second call is refused. */
        if (!pfl_params_declared(L)) abort();
        pfl_params_push_text(L);
        lua_pop(L, 2);
        lua_getfield(L, -1, "parameters");
        lua_newtable(L);
        if (lua_pcall(L, 1, 1, 0) == LUA_OK) abort();
    } else if (help && !pfl_params_is_help_stop(L, -1) && lua_type(L, -1) != LUA_TSTRING) {
        abort(); /* errors are messages, except the help stop signal */
    }
    lua_close(L);
    free(copy);
    free(text);
    return 0;
}
