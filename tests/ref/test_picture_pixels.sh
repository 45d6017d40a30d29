#!/usr/bin/env bash
# test_picture_pixels.sh - what the pictures show, read from their pixels
# (tests/ref/png_pixels.py decodes PNG with zlib + struct after the PNG
# specification, ISO/IEC 15948): carpets are drawn smooth (a 12-frame
# carpet shows a gradient, not 12 bands), a clipped colour scale is marked
# beside and above the colour bar, marks draw a line across the carpet, a
# map's picture follows its panel (no blank band above the title, a tall
# cloud gets a narrow picture at equal aspect), an 80 um x 3.4 mm grid is
# not drawn as a sliver, a falling cloud's carpet draws its lab parabola; *.pdf names write PDF documents (header and
# end-of-file marker of ISO 32000-1) without a creation date, and reruns are
# byte-identical.  Scenes: tests/ref/picture_scenes.lua.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
runner=${PSIFLIGHT_RUNNER:-$here/../../build/psiflight}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
"$runner" run "$here/picture_scenes.lua" --out "$tmp/a" --quiet >/dev/null
"$runner" run "$here/picture_scenes.lua" --out "$tmp/b" --quiet >/dev/null
for f in "$tmp"/a/*.png "$tmp"/a/*.pdf; do
  cmp "$f" "$tmp/b/$(basename "$f")" || { echo "FAIL $(basename "$f") differs between reruns"; exit 1; }
done
echo "ok reruns write byte-identical PNG and PDF pictures"
# A falling carpet of a cloud that reaches its grid's edge warns once (the
# flown copy's guard), not once per frame from the sub-cell shifts that place
# each frame in the lab window.
cat >"$tmp/edge.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local g = pf.grid{points = 128, span = 12e-6}
local w = pf.gaussian(g, {mass = "87Rb", width = 1e-6})
w:fly(1e-3, {acceleration = -9.80665})
pf.picture_carpet("edge.png", w, {duration = 20e-3, frames = 50, acceleration = -9.80665})
LUA
"$runner" run "$tmp/edge.lua" --out "$tmp/edge" >/dev/null 2>"$tmp/edge.err"
n=$(grep -c "grid guard" "$tmp/edge.err" || true)
[ "$n" -eq 1 ] || { echo "FAIL falling carpet at the grid edge: $n guard warnings (want 1)"; cat "$tmp/edge.err" | head -3; exit 1; }
echo "ok falling carpet at the grid edge: one guard warning for 50 frames"
PYTHONPATH="$here" /usr/bin/python3 - "$tmp/a" <<'PY'
import sys
from png_pixels import decode, pixel, is_white
d = sys.argv[1]
def ok(c, label):
    if not c: print("FAIL", label); sys.exit(1)
    print("ok", label)

def runs(w, rows, y, minlen=20):
    """Runs of non-white pixels along row y at least minlen long: (x0, x1)."""
    out, x = [], 0
    while x < w:
        if is_white(pixel(rows, x, y)): x += 1; continue
        x0 = x
        while x < w and not is_white(pixel(rows, x, y)): x += 1
        if x - x0 >= minlen: out.append((x0, x - 1))
    return out

def vertical(rows, h, x, y):
    """Top and bottom of the non-white run through (x, y) along column x."""
    t = y
    while t > 0 and not is_white(pixel(rows, x, t - 1)): t -= 1
    b = y
    while b < h - 1 and not is_white(pixel(rows, x, b + 1)): b += 1
    return t, b

def panel_and_bar(name, y=None):
    w, h, rows = decode(d + "/" + name)
    # A row through the dark outskirts of each scene (away from a bright core
    # that would split the run); the panel's edges there are black, so the
    # frame and any tick mark on it (dark grey) are trimmed off.
    y = int(0.3 * h) if y is None else y
    r = runs(w, rows, y)
    ok(len(r) >= 2, "%s: map panel and colour bar found along row %d" % (name, y))
    (x0, x1), (b0, b1) = r[0], r[-1]
    black = [x for x in range(x0, x1 + 1) if max(pixel(rows, x, y)) < 25]
    x0, x1 = black[0], black[-1]
    # The panel's top and bottom along a column a tenth in (the frame's
    # ticks sit outside it); the cloud's bright core is not there.
    t, b = vertical(rows, h, x0 + (x1 - x0) // 10, y)
    return w, h, rows, (x0, t, x1, b), (b0, b1)

# 1. Smooth carpet: 12 frames over ~530 pixel rows.
w, h, rows, (x0, t, x1, b), _ = panel_and_bar("carpet_12.png")
col = (x0 + x1) // 2
colours = set(pixel(rows, col, y) for y in range(t + 2, b - 1))
ok(len(colours) > 60, "12-frame carpet drawn smooth: %d distinct colours down one column (blocky: ~12)" % len(colours))

# 2. Clipped colour scale: a note right of the colour bar, and a cap on it.
def rightmost_ink(w, h, rows):
    for x in range(w - 1, -1, -1):
        if any(not is_white(pixel(rows, x, y)) for y in range(h)): return x
    return -1
wc, hc, rc, pc, (cb0, cb1) = panel_and_bar("carpet_clip.png")
wn, hn, rn, pn, (nb0, nb1) = panel_and_bar("carpet_noclip.png")
ink_c, ink_n = rightmost_ink(wc, hc, rc), rightmost_ink(wn, hn, rn)
ok(ink_c >= ink_n + 12, "clipped carpet: a note beside the colour bar's label (ink to column %d, unclipped %d)" % (ink_c, ink_n))
def cap_ink(rows, bar, top):
    return sum(not is_white(pixel(rows, x, y)) for x in range(bar[0] + 2, bar[1] - 1) for y in range(top - 14, top - 3))
top_c, top_n = pc[1], pn[1] # the colour bar's top is the panel's (its own top colour is white)
ok(cap_ink(rc, (cb0, cb1), top_c) > 5 and cap_ink(rn, (nb0, nb1), top_n) == 0,
   "clipped carpet: an arrow head caps the colour bar; none when nothing is clipped")

# 3. A mark half-way: a light dashed line across the dark side of the panel.
def light_on_row(name, frac):
    w, h, rows, (x0, t, x1, b), _ = panel_and_bar(name)
    y = round(b - frac * (b - t))
    return max(sum(min(pixel(rows, x, yy)) > 200 for x in range(x0 + (x1 - x0) // 20, x0 + (x1 - x0) // 4)) for yy in range(y - 2, y + 3))
lm, lp = light_on_row("carpet_mark.png", 0.5), light_on_row("carpet_plain.png", 0.5)
ok(lm > 20 and lp == 0, "mark at half the duration: %d light pixels on its row in the dark part (none without)" % lm)

# 4. A wide cloud: the picture's height follows the map, no blank band.
w, h, rows, (x0, t, x1, b), _ = panel_and_bar("map_wide.png", None)
first = next(y for y in range(h) if any(not is_white(pixel(rows, x, y)) for x in range(w)))
last = next(y for y in range(h - 1, -1, -1) if any(not is_white(pixel(rows, x, y)) for x in range(w)))
ok(w == 860 and h < 560, "wide cloud: picture %d x %d, lower than the default 640" % (w, h))
ok(first <= 30 and t <= 60, "no blank band above the title: first ink at row %d, panel top at %d" % (first, t))
ok(h - last <= 30, "no blank band below the axis label: last ink %d rows above the bottom" % (h - 1 - last))
ok(abs((b - t) / (x1 - x0) - 0.5) < 0.03, "wide cloud: equal aspect kept (panel %d x %d, grid 160 x 80 um)" % (x1 - x0, b - t))

# 5. A tall cloud: the picture's width follows the map.
w, h, rows, (x0, t, x1, b), _ = panel_and_bar("map_tall.png")
ok(w < 700 and abs((b - t) / (x1 - x0) - 3) < 0.1, "tall cloud: picture %d wide, panel %d x %d at equal aspect (grid 60 x 180 um)" % (w, x1 - x0, b - t))

# 6. 80 um x 3.4 mm: not a sliver.
w, h, rows, (x0, t, x1, b), _ = panel_and_bar("map_sliver.png")
ok(x1 - x0 >= 400 and b - t >= 300, "80 um x 3.4 mm grid: panel %d x %d pixels, not a sliver" % (x1 - x0, b - t))

# 7. Line plots.
def near(p, c, t=40): return all(abs(p[i] - c[i]) < t for i in range(3))
def count_colour(name, c):
    w, h, rows = decode(d + "/" + name)
    return sum(near(pixel(rows, x, y), c) for y in range(h) for x in range(w))
second = (200, 70, 40)  # the second series' colour (pf_picture.c palette)
nc, na = count_colour("lines_coincide.png", second), count_colour("lines_apart.png", second)
ok(nc > 1.5 * na, "a dashed curve on an equal solid one gets markers: %d pixels of its colour against %d when apart" % (nc, na))
def frame_rows(name):
    """First rows of the horizontal frame lines (80 % of the panel width dark)."""
    w, h, rows = decode(d + "/" + name)
    x0, x1 = int(0.11 * w) + 2, int(0.95 * w) - 2
    dark = [y for y in range(h) if sum(max(pixel(rows, x, y)) < 120 for x in range(x0, x1)) > 0.8 * (x1 - x0)]
    return [y for i, y in enumerate(dark) if i == 0 or dark[i - 1] != y - 1]
fr, fp = frame_rows("lines_residual.png"), frame_rows("lines_plain.png")
ok(len(fr) == 4 and len(fp) == 2, "residual = {result, formula}: a second panel under the plot (frame lines at rows %s; without: %s)" % (fr, fp))
w, h, rows = decode(d + "/lines_flat.png")
top, bottom = frame_rows("lines_flat.png")
blue = next(y for y in range(h) if any(near(pixel(rows, x, y), (30, 80, 170)) for x in range(int(0.12 * w), int(0.6 * w))))
ok(blue - top >= 0.15 * (bottom - top), "a curve across the whole top leaves room for the legend: highest curve %d px under the frame (panel %d px)" % (blue - top, bottom - top))

# 8. A cloud falling in its frame, drawn on one lab window: along the row of
# time t the brightest column sits at the lab centre -g (t0 + t)^2 / 2
# (Newton; common practice; g_n = 9.80665 m/s^2, CODATA), placed on the x
# axis that runs over the window picture_scenes.lua prints, within 3 pixels.
w, h, rows, (x0, t, x1, b), _ = panel_and_bar("carpet_fall.png", None)
L, R, gn, t0, T = -8.006573125e-05, 1.869604375e-05, 9.80665, 0.5e-3, 3e-3
for u in (0.05, 0.5, 0.95):
    y = round(b - u * (b - t))
    bright = max(range(x0 + 2, x1 - 1), key=lambda x: sum(pixel(rows, x, y)))
    want = x0 + (-0.5 * gn * (t0 + u * T) ** 2 - L) / (R - L) * (x1 - x0)
    ok(abs(bright - want) <= 3, "falling carpet at t = %.2f T: ridge at pixel %d, lab centre -g t^2/2 at %.1f" % (u, bright, want))

# 9. PDF documents.
for name in ("carpet.pdf", "lines.pdf"):
    data = open(d + "/" + name, "rb").read()
    ok(data.startswith(b"%PDF-") and data.rstrip().endswith(b"%%EOF"), "%s: PDF header and end-of-file marker [ISO 32000-1]" % name)
    ok(b"/CreationDate" not in data, "%s: no creation date embedded" % name)
PY
