#!/usr/bin/env bash
# test_sha256.sh - psiflight's own SHA-256 (FIPS 180-4) against Python's
# hashlib (Debian python3) on messages of every length around the 64-byte
# block and padding boundaries, and on a long message.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
runner=${PSIFLIGHT_RUNNER:-$here/../../build/psiflight}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
cat >"$tmp/digests.lua" <<'LUA'
local pf = require "psiflight"
local lengths = {}
for n = 0, 200 do lengths[#lengths + 1] = n end
for _, n in ipairs{1000, 4095, 65536 + 3, 1000000} do lengths[#lengths + 1] = n end
for _, n in ipairs(lengths) do
  local bytes = {}
  for i = 0, n - 1 do bytes[#bytes + 1] = string.char((i * 31 + 7) % 256) end
  print(n, pf.sha256(table.concat(bytes)))
end
LUA
"$runner" run "$tmp/digests.lua" >"$tmp/digests.txt"
/usr/bin/python3 - "$tmp/digests.txt" <<'PY'
import hashlib, sys
count = 0
for line in open(sys.argv[1]):
    n, got = line.split()
    n = int(n)
    msg = bytes((i * 31 + 7) % 256 for i in range(n))
    want = hashlib.sha256(msg).hexdigest()
    if got != want:
        print("FAIL length %d: psiflight %s, hashlib %s" % (n, got, want)); sys.exit(1)
    count += 1
print("ok SHA-256 of %d messages (0..200 bytes, 1000, 4095, 65539, 10^6) equals hashlib's [Python hashlib]" % count)
PY
