#!/usr/bin/env bash
# test_messages.sh - messages that used to print "(null)": `psiflight recipe`
# with options but no recipe name, and parameter choices that are not
# strings.  Each must be a clear error naming what is wrong (and, for a
# script, the script line), never "(null)".
source "$(dirname "$0")/lib.sh"
set -e
expect 2 "recipe options without a recipe name are a usage error" -- "$runner" recipe --seed 1
has "needs a recipe NAME" "says the recipe name is missing"
case "$out$err" in *"(null)"*) fail "prints (null)";; esac
ok "no (null) in the message"

cat >"$work/choices.lua" <<'LUA'
local pf = require "psiflight"
local p = pf.parameters{
  mode = {default = "fast", help = "how to scan", choices = {"fast", {"nested"}, "slow"}},
}
LUA
for flag in --help ""; do
  expect 1 "a table among the choices is refused at declaration ${flag:-(run)}" -- "$runner" run "$work/choices.lua" $flag
  has "choices.lua:2: parameters: 'mode': choices[2] must be a string, got table" "names the line, the entry and its type"
  case "$out$err" in *"(null)"*) fail "prints (null)";; esac
  ok "no (null) in the output"
done
cat >"$work/empty.lua" <<'LUA'
local pf = require "psiflight"
local p = pf.parameters{ mode = {default = "fast", help = "how to scan", choices = {}} }
LUA
expect 1 "an empty choices list is refused" -- "$runner" run "$work/empty.lua"
has "choices is an empty list" "says the list is empty"

# A mistyped runner option names the option it resembles; a sweep-only
# option given to run says where it belongs; a far-off word gets no guess.
expect 2 "a mistyped runner option is a usage error" -- "$runner" run "$work/empty.lua" --overwite
has "unknown option '--overwite' for run (did you mean '--overwrite'?)" "suggests --overwrite"
expect 2 "a mistyped sweep option is a usage error" -- "$runner" sweep "$work/empty.lua" --out "$work/sw" --rerum
has "(did you mean '--rerun'?)" "suggests --rerun for sweep"
expect 2 "a sweep option given to run is a usage error" -- "$runner" run "$work/empty.lua" --vary a=1,2
has "'--vary' is an option of psiflight sweep, not of run" "says --vary belongs to sweep"
expect 2 "an unrelated option is a usage error" -- "$runner" run "$work/empty.lua" --zzzzzzzz
has "unknown option '--zzzzzzzz' for run (see psiflight --help)" "no suggestion for an unrelated word"
done_checks
