#!/usr/bin/python3
"""Reference for scripts/bench.sh: bilinear DEM samples with rasterio.

Reads "x y" points (the DEM's CRS), decodes only the DEM blocks that the
2x2 interpolation stencils touch (one windowed read per block), and
interpolates bilinearly between cell centres with numpy, clamping the
stencil at the raster's edges. Prints a summary on stderr; with -o writes
the elevations, one per line.

Usage: /usr/bin/python3 scripts/bench_rasterio.py [-o FILE] DEM POINTS
"""
import sys

import numpy as np
import rasterio
from rasterio.windows import Window


def main(argv):
    out = None
    if len(argv) > 1 and argv[1] == "-o":
        out = argv[2]
        argv = argv[:1] + argv[3:]
    dem_path, pts_path = argv[1], argv[2]
    pts = np.loadtxt(pts_path, ndmin=2)
    x, y = pts[:, 0], pts[:, 1]
    with rasterio.open(dem_path) as ds:
        t = ds.transform
        w, h = ds.width, ds.height
        bh, bw = ds.block_shapes[0]
        nodata = ds.nodata
        fc = (x - t.c) / t.a - 0.5
        fr = (y - t.f) / t.e - 0.5
        inside = (fc >= -0.5) & (fc <= w - 0.5) & (fr >= -0.5) & (fr <= h - 0.5)
        c0 = np.clip(np.floor(fc).astype(np.int64), 0, w - 2)
        r0 = np.clip(np.floor(fr).astype(np.int64), 0, h - 2)
        tx = np.clip(fc - c0, 0, 1)
        ty = np.clip(fr - r0, 0, 1)
        corners = [(c0, r0), (c0 + 1, r0), (c0, r0 + 1), (c0 + 1, r0 + 1)]
        vals = [np.full(len(x), np.nan) for _ in corners]
        blocks = {}
        for k, (cc, rr) in enumerate(corners):
            key = (rr // bh) * ((w + bw - 1) // bw) + cc // bw
            for b in np.unique(key[inside]):
                if b not in blocks:
                    by, bx = divmod(int(b), (w + bw - 1) // bw)
                    win = Window(bx * bw, by * bh, min(bw, w - bx * bw), min(bh, h - by * bh))
                    blocks[b] = (win, ds.read(1, window=win))
                win, arr = blocks[b]
                m = inside & (key == b)
                vals[k][m] = arr[rr[m] - win.row_off, cc[m] - win.col_off]
        if nodata is not None:
            for v in vals:
                v[v == nodata] = np.nan
        z00, z10, z01, z11 = vals
        z = (z00 * (1 - tx) + z10 * tx) * (1 - ty) + (z01 * (1 - tx) + z11 * tx) * ty
        z[~inside] = np.nan
    if out:
        np.savetxt(out, z, fmt="%.4f")
    print("bench_rasterio: %d points, %d blocks read, %d NaN" % (len(z), len(blocks), np.isnan(z).sum()), file=sys.stderr)


if __name__ == "__main__":
    main(sys.argv)
