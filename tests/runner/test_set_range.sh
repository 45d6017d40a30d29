#!/usr/bin/env bash
# test_set_range.sh - a --set value that is finite as typed but leaves the
# range of a double once its unit is applied (1e308 km = 1e311 m -> inf,
# 1e-320 nm -> 0) is a usage error naming the declaration's script line,
# not an inf or 0 handed to the script.  Unit factors: SI prefixes (BIPM SI
# Brochure, 9th ed.); the range of a double: IEEE 754 binary64 (largest
# finite about 1.8e308, smallest normal about 2.2e-308).
source "$(dirname "$0")/lib.sh"
set -e
cat >"$work/len.lua" <<'LUA'
local pf = require "psiflight"
local p = pf.parameters{
  L = {default = 1, unit = "mm", help = "arm length"},
}
print(string.format("L=%.17g", p.L))
LUA
expect 2 "1e308km overflows once in metres" -- "$runner" run "$work/len.lua" --set L=1e308km
has "len.lua:2:" "the error names the declaring line"
has "'1e308km' is inf in SI units" "the error names the value and what it became"
expect 2 "1e-320nm underflows once in metres" -- "$runner" run "$work/len.lua" --set L=1e-320nm
has "'1e-320nm' is 0 in SI units" "the underflow is named too"
expect 0 "a large value that fits still passes" -- "$runner" run "$work/len.lua" --set L=1e300km
want=$(/usr/bin/python3 -c "print('%.17g' % (1e300 * 1e3))") # Debian's Python, binary64
has "L=$want" "1e300 km is 1e300 x 1e3 m (SI prefix k = 1e3)"
expect 0 "zero stays allowed" -- "$runner" run "$work/len.lua" --set L=0km
has "L=0" "0 km is 0 m"
done_checks
