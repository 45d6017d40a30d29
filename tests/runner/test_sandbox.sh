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
# Links shipped in the output folder: to a file outside that does not exist
# yet (a shell start-up file, say), to a folder outside, a chain of two, and
# one that stays inside (allowed).
mkdir -p "$work/home"
ln -s "$work/home/.startup_rc" "$work/out/dangling.txt"
ln -s "$work/home/planted.csv" "$work/out/dangling.csv"
ln -s "$work/outside_dir" "$work/out/linkdir"
ln -s chain2 "$work/out/chain1"
ln -s "$work/home/chain_target" "$work/out/chain2"
echo "inside ok" >"$work/out/inner.txt"
ln -s inner.txt "$work/out/inner_link"
cp "$rec/hostile.lua" "$work/hostile.orig"
for e in exec popen read_outside write_dotdot read_symlink write_symlink_dir loadlib c_module symlinked_module \
         binary_chunk dofile_outside loadfile_outside remove_outside getenv sethook wisdom \
         engine_write_outside engine_read_outside engine_h5_outside move_output \
         dangling_link_write dangling_link_engine link_dir_engine link_chain_write link_as_written \
         io_output_dangling io_input_link rewrite_own_recipe remove_own_file; do
  expect 4 "sandbox refuses $e" -- run --set escape="$e"
  has "hostile.lua:$(line_of "$e"):" "$e: the error names the script line"
done
expect 4 "moving the output folder" -- run --set escape=move_output
has "pf.setup{output_dir" "the refusal names the operation"
expect 4 "os.execute refusal" -- run --set escape=exec
has "os.execute is not allowed in the sandbox" "names os.execute"
expect 4 "reading a symlink out" -- run --set escape=read_symlink
has "the symbolic link '$rec/link_to_secret' leads outside" "names the link that leads out"
# Refusals name the path as the script wrote it, never where it resolves to.
expect 4 "a relative path through a link" -- run --set escape=link_as_written
has "sandbox refused to read 'link_to_secret': the symbolic link 'link_to_secret' leads outside" \
  "the message shows the path as written"
case "$err" in *"$work/secret.txt"*) fail "the refusal reveals the link's absolute target";; esac
ok "the refusal does not reveal the absolute target"
expect 4 "a dangling link in the output folder" -- run --set escape=dangling_link_write
has "the symbolic link '$work/out/dangling.txt' leads outside" "names the dangling link"
expect 4 "a link chain" -- run --set escape=link_chain_write
has "the symbolic link '$work/out/chain1' leads outside" "names the first link of the chain"
expect 4 "the script folder is read-only" -- run --set escape=rewrite_own_recipe
has "into a read-only folder" "says the folder is read-only"
if cmp -s "$rec/hostile.lua" "$work/hostile.orig" && [ -e "$rec/hostile.lua" ]; then ok "the recipe file is unchanged"; else fail "the recipe file is unchanged"; fi
if [ ! -e "$work/escaped.txt" ] && [ ! -e "$work/outside_dir/planted.txt" ] && [ ! -e "$work/secret.txt.csv" ] \
  && [ ! -e "$work/secret.txt.h5" ]; then ok "nothing was written outside"; else fail "nothing was written outside"; fi
if [ ! -e "$work/home/.startup_rc" ] && [ ! -e "$work/home/planted.csv" ] && [ ! -e "$work/home/chain_target" ] \
  && [ ! -e "$work/outside_dir/sub" ]; then ok "no dangling link target and no folder was created outside"; else fail "no dangling link target and no folder was created outside"; fi
if [ -e "$work/secret.txt" ]; then ok "the outside file was not removed"; else fail "the outside file was not removed"; fi
expect 0 "a link that stays inside the output folder may be read" -- run --set escape=read_inner_link
has "inner: inside ok" "read through the inside link"
# A link swapped by another program while the script writes: each write
# lands in the output folder or is refused (O_NOFOLLOW on the checked path);
# the file outside never changes.
echo "untouched" >"$work/home/swap_target"
/usr/bin/python3 - "$work/out/swap.txt" "$work/home/swap_target" "$work/swap.stop" <<'PY' &
import os, sys, time
name, target, stop = sys.argv[1:4]
end = time.time() + 30
while time.time() < end and not os.path.exists(stop):
    # swap between a link to the outside file and a plain file, as fast as
    # the system allows, so some opens land between the check and the open
    try: os.unlink(name + ".l")
    except FileNotFoundError: pass
    os.symlink(target, name + ".l"); os.replace(name + ".l", name)
    open(name + ".f", "w").close(); os.replace(name + ".f", name)
PY
swapper=$!
set +e; run --set escape=swapped_link >"$work/.stdout" 2>"$work/.stderr"; set -e
touch "$work/swap.stop"; wait $swapper
if [ "$(cat "$work/home/swap_target")" = "untouched" ]; then ok "a swapped link never led a write outside ($(cat "$work/.stdout"))"; else fail "a swapped link never led a write outside ($(cat "$work/.stdout"))"; fi
expect 5 "unbounded Lua allocation hits the heap cap" -- run --set escape=allocate --memory-cap 64MiB
has "memory limit" "says it is the memory limit"
expect 5 "engine allocation beyond the engine cap" -- run --set escape=engine_allocate --memory-cap 64MiB
expect 5 "endless loop stopped by the time limit" -- run --set escape=loop --time-limit 0.5s
has "time limit of 0.5 s reached while running $rec/hostile.lua:$(line_of loop)" "names the time limit and the line"
expect 5 "a loop inside a coroutine is stopped too" -- run --set escape=loop_in_coroutine --time-limit 0.3s
# The time limit stops a run like an interrupt: pcall, coroutines and error
# handlers cannot swallow it, the manifest says why, nothing half-written stays.
for e in loop_catching loop_catching_in_coroutine handler_loop partial_then_loop; do
  rm -rf "$work/tl"
  expect 5 "time limit stops $e" -- "$runner" run "$rec/hostile.lua" --out "$work/tl" --set escape=$e --time-limit 0.3s
  has "time limit of 0.3 s reached while running $rec/hostile.lua:" "$e: names the limit and the line"
  case "$err" in *"without its manifest"*|*"kept running"*) fail "$e: needed a fallback: $err";; esac
  if grep -q '"error":.*"time limit of 0.3 s reached"' "$work/tl/manifest.json"; then ok "$e: the manifest says why"; else fail "$e: the manifest says why"; fi
  if ls -A "$work/tl" | grep -q partial; then fail "$e: a partial file stayed"; fi
  ok "$e: no partial file"
done
expect 0 "writing into the output folder is allowed" -- run --set escape=write_output
if [ "$(cat "$work/out/result.txt")" = "fine" ]; then ok "the output file was written"; else fail "the output file was written"; fi
expect 0 "reading the script's own folder is allowed" -- run --set escape=read_own_folder
echo "calibration 42" >"$work/data.txt"
expect 0 "reading a --data file is allowed" -- "$runner" run "$rec/hostile.lua" --data "$work/data.txt" \
  --set escape=read_data --set target="$work/data.txt"
has "data: calibration 42" "the data file was read"
expect 4 "--data is read-only" -- "$runner" run "$rec/hostile.lua" --data "$work/data.txt" \
  --set escape=write_target --set target="$work/data.txt"
if [ "$(cat "$work/data.txt")" = "calibration 42" ]; then ok "the data file is unchanged"; else fail "the data file is unchanged"; fi
expect 0 "--trusted lifts the sandbox (reading outside)" -- run --trusted --set escape=read_outside
expect 0 "--trusted lifts the sandbox (running a program)" -- run --trusted --set escape=exec
done_checks
