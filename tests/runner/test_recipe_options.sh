#!/usr/bin/env bash
# test_recipe_options.sh - every bundled recipe (as `psiflight recipe` lists
# them, so a new one cannot be missed) checks the parameter table its run()
# is given with the engine's one options checker: a misspelt parameter is an
# error naming the recipe, the key, the closest parameter and the calling
# line, before any work starts.  The wording is the project's own rule
# (docs/lua-api.md, "Options tables").
source "$(dirname "$0")/lib.sh"
set -e
cat >"$work/typo.lua" <<'LUA'
local pf = require "psiflight"
local p = pf.parameters{recipe = {default = "", help = "bundled recipe name"}}
local r = require("psiflight.recipes." .. p.recipe)
local names = {}
for name in pairs(r.parameters) do names[#names + 1] = name end
table.sort(names)
local longest = names[1]
for _, n in ipairs(names) do if #n > #longest then longest = n end end
print("typo of " .. longest)
local typo = {[longest:sub(1, -2)] = 1}
r.run(typo)
LUA
names=$("$runner" recipe | awk '/^  [a-z_]+ /{print $1}')
[ -n "$names" ] || fail "psiflight recipe lists no recipes"
for r in $names; do
  expect 1 "$r.run refuses a misspelt parameter" -- "$runner" run "$work/typo.lua" --set recipe=$r
  key=$(echo "$out" | sed -n 's/^typo of //p')
  has "typo.lua:11: $r.run: unknown option '${key%?}' (did you mean '$key'?)" "$r: the error names the line, the recipe, the key and the suggestion"
done
done_checks
