#!/usr/bin/env bash
# test_binary_script.sh - a precompiled main script is refused by the sandbox
# with its own exit status (4, docs/runner.md), decided from the file's
# content (Lua's binary signature, ESC 'Lua') rather than from the wording of
# Lua's error message; --trusted runs it.  No physics, no outside reference.
source "$(dirname "$0")/lib.sh"
set -e
cat >"$work/make.lua" <<LUA
local code = string.dump(load("print('precompiled ran')"))
for _, name in ipairs{"plain.luac", "shebang.luac"} do
  local f = assert(io.open("$work/" .. name, "wb"))
  if name == "shebang.luac" then f:write("#!/usr/bin/env psiflight\n") end
  f:write(code)
  f:close()
end
LUA
expect 0 "precompiled scripts written" -- "$runner" run "$work/make.lua" --trusted
expect 4 "the sandbox refuses a precompiled script" -- "$runner" run "$work/plain.luac"
has "binary" "the message says why"
expect 4 "also after a first '#' line" -- "$runner" run "$work/shebang.luac"
expect 0 "--trusted runs it" -- "$runner" run "$work/plain.luac" --trusted
has "precompiled ran" "the chunk ran"
printf 'local x = = 1\n' >"$work/syntax.lua"
expect 1 "a syntax error stays a script error" -- "$runner" run "$work/syntax.lua"
done_checks
