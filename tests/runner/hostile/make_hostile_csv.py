"""make_hostile_csv.py FOLDER - writes hand-made hostile CSV sample files
for tests/runner/test_hostile_files.sh (plus one valid control file)."""
import math
import os
import sys

folder = sys.argv[1]

def write(name, data):
    mode = "wb" if isinstance(data, bytes) else "w"
    with open(os.path.join(folder, name), mode) as f:
        f.write(data)

# The control: 16 samples of a Gaussian on the test grid (2 um span).
xs = [(-8 + i) * 1.25e-7 for i in range(16)]
rows = [f"{x!r},{math.exp(-(x / 3e-7) ** 2)!r},0\n" for x in xs]
good = "x [m],re,im\n" + "".join(rows)
write("plain.csv", good)
# One line of 2 MiB: a reader without a line limit grows without bound.
write("long_line.csv", "x [m],re,im\n" + "1" * (2 << 20) + ",0,0\n")
# A header of 5000 columns.
write("many_columns.csv", ",".join(f"c{i}" for i in range(5000)) + "\n" + ",".join("0" * 5000) + "\n")
# Binary content: a NUL byte inside a data line.
write("nul.csv", b"x [m],re,im\n0,1\x00,0\n")
# 200000 honest rows (a few MB): fine by default, over a 4 MiB cap.
write("many_rows.csv", "x [m],re,im\n" + "".join(f"{i},1,0\n" for i in range(200000)))
# Non-finite samples, and a row with a missing field after 16 good ones.
write("nan.csv", "x [m],re,im\n" + "".join(rows[:3]) + "nan,1,0\n" + "".join(rows[4:]))
write("inf.csv", "x [m],re,im\n" + rows[0].replace(",0\n", ",inf\n") + "".join(rows[1:]))
write("wrong_columns.csv", good + "1,2\n")
