#!/usr/bin/env bash
# test_svg.sh - pictures named *.svg are SVG documents (vector, for papers):
# Python's xml.etree parses them, the root is an <svg> element in the W3C SVG
# namespace with the picture's size, the map holds its raster image; a *.png
# name still gives a PNG (signature, ISO/IEC 15948); reruns are byte-identical.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
runner=${PSIFLIGHT_RUNNER:-$here/../../build/psiflight}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
"$runner" run "$here/svg_writer.lua" --out "$tmp/a" --quiet
"$runner" run "$here/svg_writer.lua" --out "$tmp/b" --quiet
for f in cloud.svg line.svg line.png; do
  cmp "$tmp/a/$f" "$tmp/b/$f" || { echo "FAIL $f differs between reruns"; exit 1; }
done
echo "ok reruns write byte-identical SVG and PNG files"
/usr/bin/python3 - "$tmp/a" <<'PY'
import sys, xml.etree.ElementTree as ET
d = sys.argv[1]
def ok(c, label):
    if not c: print("FAIL", label); sys.exit(1)
    print("ok", label)
SVG = "{http://www.w3.org/2000/svg}"
for name, h in (("cloud.svg", None), ("line.svg", "560pt")):
    try:
        root = ET.parse(d + "/" + name).getroot()
    except ET.ParseError as e:
        ok(False, "%s is not XML: %s" % (name, e))
    ok(root.tag == SVG + "svg", "%s: root element is <svg> in the W3C SVG namespace [xml.etree]" % name)
    if h is None:  # a map's picture follows the map: at most 860 x 640, at least 480 wide
        wpt, hpt = float(root.get("width")[:-2]), float(root.get("height")[:-2])
        ok(480 <= wpt <= 860 and 150 <= hpt <= 640, "%s: picture size %s x %s follows the map" % (name, root.get("width"), root.get("height")))
    else:
        ok(root.get("width") == "860pt" and root.get("height") == h, "%s: picture size %s x %s" % (name, root.get("width"), root.get("height")))
ok(any(e.tag == SVG + "image" for e in ET.parse(d + "/cloud.svg").getroot().iter()), "map SVG holds its raster image")
ok(open(d + "/line.png", "rb").read(8) == b"\x89PNG\r\n\x1a\n", "a .png name still writes a PNG [PNG signature]")
PY
