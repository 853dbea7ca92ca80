# An original abstract mark for Ambit: an arch (a voice's span) over a
# disc, with dots at its two ends (the lowest and highest note).
import math, struct, zlib
N = 1024
S = 4  # supersampling per axis
def inside(x, y):
    cx = cy = N / 2
    r = math.hypot(x - cx, y - cy)
    if r > N * 0.47:
        return None
    # arch: ring of radius 0.27N around (cx, cy+0.1N), upper half only
    ax, ay = cx, cy + N * 0.10
    ra = math.hypot(x - ax, y - ay)
    if y <= ay and abs(ra - N * 0.27) <= N * 0.045:
        return (255, 255, 255)
    for ex in (ax - N * 0.27, ax + N * 0.27):
        if math.hypot(x - ex, y - ay) <= N * 0.075:
            return (255, 196, 61)
    return (22, 94, 110)
rows = []
for j in range(N):
    row = bytearray([0])
    for i in range(N):
        acc = [0, 0, 0, 0]
        for sj in range(S):
            for si in range(S):
                c = inside(i + (si + 0.5) / S, j + (sj + 0.5) / S)
                if c:
                    acc[0] += c[0]; acc[1] += c[1]; acc[2] += c[2]; acc[3] += 255
        n = S * S
        a = acc[3] / n
        if a:
            row += bytes([round(acc[0] / (acc[3] / 255)), round(acc[1] / (acc[3] / 255)), round(acc[2] / (acc[3] / 255)), round(a)])
        else:
            row += bytes(4)
    rows.append(bytes(row))
raw = b"".join(rows)
def chunk(t, d):
    return struct.pack(">I", len(d)) + t + d + struct.pack(">I", zlib.crc32(t + d) & 0xffffffff)
png = b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", struct.pack(">IIBBBBB", N, N, 8, 6, 0, 0, 0)) + chunk(b"IDAT", zlib.compress(raw, 9)) + chunk(b"IEND", b"")
open("ambit-icon.png", "wb").write(png)
