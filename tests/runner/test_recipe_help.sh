#!/usr/bin/env bash
# test_recipe_help.sh - `--help` of every bundled recipe (and of its example)
# lists each declared parameter with its help text; every example runs.
source "$(dirname "$0")/lib.sh"
set -e
cat >"$work/names.lua" <<'LUA'
local pf = require "psiflight"
local p = pf.parameters{recipe = {default = "", help = "bundled recipe name"}}
local r = require("psiflight.recipes." .. p.recipe)
local names = {}
for name, spec in pairs(r.parameters) do names[#names + 1] = name .. "\t" .. spec.help end
table.sort(names)
print(table.concat(names, "\n"))
LUA
declare -A example=([tof_image]=tof_image_harrowgate [talbot_scan]=talbot_linden [mach_zehnder]=mach_zehnder_quarry
                    [aperture_flight]=aperture_millbrook [arrival_time]=arrival_fenwick)
for r in tof_image talbot_scan mach_zehnder aperture_flight arrival_time; do
  "$runner" run "$work/names.lua" --set recipe=$r >"$work/$r.names"
  [ -s "$work/$r.names" ] || fail "$r declares no parameters"
  expect 0 "psiflight run recipe:$r --help" -- "$runner" run recipe:$r --help
  while IFS=$'\t' read -r name help; do
    echo "$out" | grep -q "^  $name .*$help" || fail "$r --help lacks '$name' with its help: $out"
  done <"$work/$r.names"
  ok "$r --help lists its $(wc -l <"$work/$r.names") parameters with their help"
  ex="$root/examples/recipes/${example[$r]}.lua"
  expect 0 "example ${example[$r]} --help" -- "$runner" run "$ex" --help
  while IFS=$'\t' read -r name help; do
    echo "$out" | grep -q "^  $name " || fail "${example[$r]} --help lacks '$name'"
  done <"$work/$r.names"
  ok "example ${example[$r]} lists the same parameters"
  # Into a fresh folder: the examples write files, which a rerun in out/ would refuse to replace.
  expect 0 "example ${example[$r]} runs" -- "$runner" run "$ex" --planning estimate --out "$work/out-$r"
  has "result " "example ${example[$r]} reports results"
done
expect 0 "psiflight recipe NAME is run recipe:NAME" -- "$runner" recipe talbot_scan --help
has "  period " "recipe command lists parameters"
done_checks
