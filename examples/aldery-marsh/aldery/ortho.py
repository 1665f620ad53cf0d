"""A colour orthophoto of the invented ground for one date, as an aerial survey
would deliver it: 5 m RGB in ETRS89 / LAEA Europe (not the scenes' UTM), covering
the middle of the district, cloud-free, with its own camera response, and
georeferenced with a small known error (scenario.ORTHO_OFFSET)."""
import numpy as np
from osgeo import osr

from . import rasters, scenario

GAIN = np.array([3.1, 3.0, 2.8], np.float32)  # red, green, blue: the camera's white balance
GAMMA = 1 / 2.2
INSET = 0.08  # share of the district left out on each side


def _transform(source, target, xs, ys):
    points = rasters.srs(source), rasters.srs(target)
    t = osr.CoordinateTransformation(*points)
    out = np.array(t.TransformPoints(np.column_stack([xs, ys]).tolist()))
    return out[:, 0], out[:, 1]


def _bilinear(image, rows, cols):
    """Samples image (bands, H, W) at fractional cell positions."""
    r0 = np.clip(np.floor(rows).astype(int), 0, image.shape[1] - 2)
    c0 = np.clip(np.floor(cols).astype(int), 0, image.shape[2] - 2)
    wr, wc = rows - r0, cols - c0
    return (image[:, r0, c0] * (1 - wr) * (1 - wc) + image[:, r0 + 1, c0] * wr * (1 - wc) +
            image[:, r0, c0 + 1] * (1 - wr) * wc + image[:, r0 + 1, c0 + 1] * wr * wc)


def grid(cells):
    """The orthophoto's geotransform and size: the district's middle in EPSG:3035."""
    x0, y0 = scenario.ORIGIN
    extent = cells * scenario.CELL
    lo, hi = INSET * extent, (1 - INSET) * extent
    xs, ys = _transform(scenario.EPSG, scenario.ORTHO_EPSG, [x0 + lo, x0 + hi, x0 + lo, x0 + hi],
                        [y0 - lo, y0 - lo, y0 - hi, y0 - hi])
    p = scenario.ORTHO_PIXEL
    left, top = np.ceil(max(xs[0], xs[2]) / p) * p, np.floor(min(ys[0], ys[1]) / p) * p
    right, bottom = np.floor(min(xs[1], xs[3]) / p) * p, np.ceil(max(ys[2], ys[3]) / p) * p
    return (left, p, 0.0, top, 0.0, -p), int((right - left) / p), int((top - bottom) / p)


def write(path, rgb_reflectance, rng, date):
    """rgb_reflectance: (3, H, W) ground reflectance of B04, B03, B02 on the 5 m grid."""
    geotransform, width, height = grid(rgb_reflectance.shape[1])
    # Scene coordinates of every orthophoto pixel centre: exact on a coarse lattice,
    # bilinear in between (the projection is smooth over a few hundred metres).
    step = 64
    rows = np.unique(np.append(np.arange(0, height, step), height - 1))
    cols = np.unique(np.append(np.arange(0, width, step), width - 1))
    lr, lc = np.meshgrid(rows, cols, indexing="ij")
    ux, uy = _transform(scenario.ORTHO_EPSG, scenario.EPSG, (geotransform[0] + (lc.ravel() + 0.5) * geotransform[1]),
                        (geotransform[3] + (lr.ravel() + 0.5) * geotransform[5]))
    lattice = np.stack([ux.reshape(lr.shape), uy.reshape(lr.shape)])
    all_rows, all_cols = np.arange(height), np.arange(width)
    along = np.stack([[np.interp(all_cols, cols, lattice[k, i]) for i in range(len(rows))] for k in range(2)])
    fr = np.interp(all_rows, rows, np.arange(len(rows)))
    i0 = np.minimum(np.floor(fr).astype(int), len(rows) - 2) if len(rows) > 1 else np.zeros(height, int)
    w = (fr - i0)[:, None]
    x = along[0, i0] * (1 - w) + along[0, np.minimum(i0 + 1, len(rows) - 1)] * w
    y = along[1, i0] * (1 - w) + along[1, np.minimum(i0 + 1, len(rows) - 1)] * w
    # The georeferencing error: what lies on the ground at p shows at p + offset.
    dx, dy = scenario.ORTHO_OFFSET
    x0, y0 = scenario.ORIGIN
    ground_cols = (x - dx - x0) / scenario.CELL - 0.5
    ground_rows = (y0 - (y - dy)) / scenario.CELL - 0.5
    reflectance = _bilinear(rgb_reflectance, ground_rows, ground_cols)
    values = 255 * np.clip(reflectance * GAIN[:, None, None], 0, 1) ** GAMMA + rng.normal(0, 1.5, reflectance.shape)
    image = np.clip(np.rint(values), 0, 255).astype(np.uint8)
    rasters.write(path, list(image), geotransform, scenario.ORTHO_EPSG, "uint8", rgb=True,
                  metadata={"ACQUISITION_DATE": date, "DESCRIPTION": "invented orthophoto of the Marsh of Aldery"})
    return {"width": width, "height": height, "geotransform": list(geotransform)}
