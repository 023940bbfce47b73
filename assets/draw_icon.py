# Draws Lamina's window icon: a twice-looping orbit crossing a cut, with its return points.
import math, struct, zlib, sys

N = 128
img = [[(0.0, 0.0, 0.0, 0.0) for _ in range(N)] for _ in range(N)]

def blend(x, y, colour, alpha):
    if 0 <= x < N and 0 <= y < N and alpha > 0:
        r, g, b, a = img[y][x]
        cr, cg, cb = colour
        out_a = alpha + a * (1 - alpha)
        if out_a == 0:
            return
        mix = lambda c, d: (c * alpha + d * a * (1 - alpha)) / out_a
        img[y][x] = (mix(cr, r), mix(cg, g), mix(cb, b), out_a)

def clamp(v):
    return max(0.0, min(1.0, v))

# rounded square background
R = 22.0
for y in range(N):
    for x in range(N):
        px, py = x + 0.5, y + 0.5
        qx = max(abs(px - N / 2) - (N / 2 - 4 - R), 0.0)
        qy = max(abs(py - N / 2) - (N / 2 - 4 - R), 0.0)
        d = math.hypot(qx, qy) - R
        blend(x, y, (18, 24, 36), clamp(0.5 - d))

# the cut: a soft vertical band
cut_x = 70.0
for y in range(14, N - 14):
    for x in range(N):
        d = abs(x + 0.5 - cut_x)
        blend(x, y, (236, 150, 70), 0.32 * clamp(2.5 - d))

# the orbit: two loops of different size, drawn as overlapping soft dots
def orbit(theta):
    swell = 1.0 + 0.28 * math.cos(theta / 2.0)
    x = 62.0 + 38.0 * swell * math.cos(theta) + 4.0 * math.sin(2 * theta)
    y = 64.0 + 30.0 * swell * math.sin(theta)
    return x, y

def splat(cx, cy, radius, colour, strength):
    r = int(radius + 2)
    for y in range(int(cy) - r, int(cy) + r + 1):
        for x in range(int(cx) - r, int(cx) + r + 1):
            d = math.hypot(x + 0.5 - cx, y + 0.5 - cy)
            blend(x, y, colour, strength * clamp(radius + 0.5 - d))

steps = 2400
for k in range(steps):
    x, y = orbit(4 * math.pi * k / steps)
    splat(x, y, 1.6, (150, 200, 235), 0.35)

# the return points: where the orbit crosses the cut
crossings = []
prev = orbit(0.0)
for k in range(1, 20001):
    t = 4 * math.pi * k / 20000
    cur = orbit(t)
    if (prev[0] - cut_x) * (cur[0] - cut_x) < 0:
        crossings.append(cur)
    prev = cur
for x, y in crossings:
    splat(cut_x, y, 6.0, (18, 24, 36), 1.0)
    splat(cut_x, y, 4.6, (250, 212, 120), 1.0)

def png(path):
    raw = b"".join(
        b"\x00" + b"".join(
            struct.pack("BBBB", *[int(round(c)) for c in p[:3]], int(round(255 * p[3])))
            for p in row
        )
        for row in img
    )
    def chunk(kind, data):
        c = struct.pack(">I", len(data)) + kind + data
        return c + struct.pack(">I", zlib.crc32(kind + data) & 0xFFFFFFFF)
    with open(path, "wb") as f:
        f.write(b"\x89PNG\r\n\x1a\n")
        f.write(chunk(b"IHDR", struct.pack(">IIBBBBB", N, N, 8, 6, 0, 0, 0)))
        f.write(chunk(b"IDAT", zlib.compress(raw, 9)))
        f.write(chunk(b"IEND", b""))

png(sys.argv[1])
print(len(crossings), "return points")
