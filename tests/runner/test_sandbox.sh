#!/usr/bin/env bash
# test_sandbox.sh - the hostile recipe tries every escape; each is refused
# with the documented exit status (4 sandbox, 5 resource limit) and an error
# naming the operation and the script line; --trusted lifts the sandbox.
source "$(dirname "$0")/lib.sh"
set -e
rec="$work/recipe"; mkdir -p "$rec" "$work/out" "$work/outside_dir"
cp "$root/tests/runner/hostile/hostile.lua" "$rec/"
echo "secret" >"$work/secret.txt"
echo "return {}" >"$work/outside_module.lua"
ln -s "$work/secret.txt" "$rec/link_to_secret"
ln -s "$work/outside_dir" "$rec/link_to_outside_dir"
ln -s "$work/outside_module.lua" "$rec/linked_module.lua"
: >"$rec/evil.so"   # looks like a native module on package.cpath (./?.so)
cd "$rec"
run() { "$runner" run "$rec/hostile.lua" --out "$work/out" --overwrite --set out="$work/out" --set target="$work/secret.txt" "$@"; }

line_of() { grep -n "^  $1 = " "$rec/hostile.lua" | cut -d: -f1; }
for e in exec popen read_outside write_dotdot read_symlink write_symlink_dir loadlib c_module symlinked_module \
         binary_chunk dofile_outside loadfile_outside remove_outside getenv sethook wisdom \
         engine_write_outside engine_read_outside engine_h5_outside move_output; do
  expect 4 "sandbox refuses $e" -- run --set escape="$e"
  has "hostile.lua:$(line_of "$e"):" "$e: the error names the script line"
done
has "pf.setup{output_dir" "the refusal names the operation"
expect 4 "os.execute refusal" -- run --set escape=exec
has "os.execute is not allowed in the sandbox" "names os.execute"
expect 4 "reading a symlink out" -- run --set escape=read_symlink
has "resolves to $work/secret.txt" "says where the link leads"
[ ! -e "$work/escaped.txt" ] && [ ! -e "$work/outside_dir/planted.txt" ] && [ ! -e "$work/secret.txt.csv" ] \
  && [ ! -e "$work/secret.txt.h5" ] && ok "nothing was written outside"
[ -e "$work/secret.txt" ] && ok "the outside file was not removed"
expect 5 "unbounded Lua allocation hits the heap cap" -- run --set escape=allocate --memory-cap 64MiB
has "memory limit" "says it is the memory limit"
expect 5 "engine allocation beyond the engine cap" -- run --set escape=engine_allocate --memory-cap 64MiB
expect 5 "endless loop stopped by the time limit" -- run --set escape=loop --time-limit 0.5s
has "time limit of 0.5 s reached while running $rec/hostile.lua:$(line_of loop)" "names the time limit and the line"
expect 5 "a loop inside a coroutine is stopped too" -- run --set escape=loop_in_coroutine --time-limit 0.3s
expect 5 "a loop that catches the time-limit error is stopped by the alarm" -- run --set escape=loop_catching --time-limit 0.3s
has "kept running" "says the script caught the error"
expect 0 "writing into the output folder is allowed" -- run --set escape=write_output
[ "$(cat "$work/out/result.txt")" = "fine" ] && ok "the output file was written"
expect 0 "reading the script's own folder is allowed" -- run --set escape=read_own_folder
echo "calibration 42" >"$work/data.txt"
expect 0 "reading a --data file is allowed" -- "$runner" run "$rec/hostile.lua" --data "$work/data.txt" \
  --set escape=read_data --set target="$work/data.txt"
has "data: calibration 42" "the data file was read"
expect 4 "--data is read-only" -- "$runner" run "$rec/hostile.lua" --data "$work/data.txt" \
  --set escape=write_target --set target="$work/data.txt"
[ "$(cat "$work/data.txt")" = "calibration 42" ] && ok "the data file is unchanged"
expect 0 "--trusted lifts the sandbox (reading outside)" -- run --trusted --set escape=read_outside
expect 0 "--trusted lifts the sandbox (running a program)" -- run --trusted --set escape=exec
done_checks
