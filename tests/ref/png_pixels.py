# png_pixels.py - reads the pixels of a PNG file with Python's standard zlib
# and struct only, following the PNG specification (ISO/IEC 15948, W3C PNG
# 2nd edition: chunks, zlib stream, the five scanline filters with the Paeth
# predictor), for 8-bit RGB and RGBA images (what cairo writes).  Also finds
# the panels of a psiflight picture: the wide runs of non-white columns.
import struct, zlib

def decode(path):
    """Returns (width, height, rows): rows[y] is a bytes object of RGB triples."""
    data = open(path, "rb").read()
    assert data[:8] == b"\x89PNG\r\n\x1a\n", "not a PNG"
    pos, idat = 8, b""
    while pos < len(data):
        n, kind = struct.unpack(">I4s", data[pos:pos + 8])
        body = data[pos + 8:pos + 8 + n]
        if kind == b"IHDR":
            w, h, depth, colour = struct.unpack(">IIBB", body[:10])
            interlace = body[12]
        elif kind == b"IDAT":
            idat += body
        pos += 12 + n
    assert depth == 8 and colour in (2, 6) and interlace == 0, "only 8-bit RGB/RGBA, not interlaced"
    bpp = 3 if colour == 2 else 4
    raw = zlib.decompress(idat)
    stride = w * bpp
    prev = bytearray(stride)
    rows = []
    for y in range(h):
        f = raw[y * (stride + 1)]
        line = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        if f == 1:
            for i in range(bpp, stride): line[i] = (line[i] + line[i - bpp]) & 255
        elif f == 2:
            for i in range(stride): line[i] = (line[i] + prev[i]) & 255
        elif f == 3:
            for i in range(stride):
                a = line[i - bpp] if i >= bpp else 0
                line[i] = (line[i] + ((a + prev[i]) >> 1)) & 255
        elif f == 4:
            for i in range(stride):
                a = line[i - bpp] if i >= bpp else 0
                b = prev[i]
                c = prev[i - bpp] if i >= bpp else 0
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                pr = a if pa <= pb and pa <= pc else (b if pb <= pc else c)
                line[i] = (line[i] + pr) & 255
        else:
            assert f == 0, "bad filter %d" % f
        prev = line
        if bpp == 4:  # cairo's white background is opaque; drop alpha
            line = bytearray(b for i, b in enumerate(line) if i % 4 != 3)
        rows.append(bytes(line))
    return w, h, rows

def pixel(rows, x, y):
    r = rows[y]
    return r[3 * x], r[3 * x + 1], r[3 * x + 2]

def is_white(p):
    return p[0] > 245 and p[1] > 245 and p[2] > 245

def panels(w, h, rows):
    """Rectangles (left, top, right, bottom; inclusive) of the colour images:
    runs of at least 20 columns whose middle row segment is not white, grown
    up and down while the run's middle column stays non-white."""
    found = []
    for y in (h // 2,):
        x = 0
        while x < w:
            if is_white(pixel(rows, x, y)):
                x += 1
                continue
            x0 = x
            while x < w and not is_white(pixel(rows, x, y)): x += 1
            if x - x0 >= 20:
                xm = (x0 + x) // 2
                t = y
                while t > 0 and not is_white(pixel(rows, xm, t - 1)): t -= 1
                b = y
                while b < h - 1 and not is_white(pixel(rows, xm, b + 1)): b += 1
                found.append((x0, t, x - 1, b))
    return found
