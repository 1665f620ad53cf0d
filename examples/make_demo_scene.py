"""Writes the demo scene of tinct's invented scenario: a 12-band, Sentinel-2-like
L2A stack over the imaginary Marsh of Aldery (UTM 32N), 10 m pixels, uint16 DN with
nodata 0. Water channels, reed beds, rice paddies and dry fields are drawn from
smooth random fields so that bands relate to each other as they do over real land.
Invented data for the demo only."""
import sys

import numpy as np
from osgeo import gdal, osr

path = sys.argv[1]
size = int(sys.argv[2]) if len(sys.argv) > 2 else 512
rng = np.random.default_rng(20261201)


def smooth_field(scale):
    noise = rng.normal(size=(size // scale + 2, size // scale + 2))
    up = np.kron(noise, np.ones((scale, scale)))[:size, :size]
    kernel = np.ones(scale) / scale
    up = np.apply_along_axis(lambda r: np.convolve(r, kernel, mode="same"), 1, up)
    return np.apply_along_axis(lambda c: np.convolve(c, kernel, mode="same"), 0, up)


wet = smooth_field(48)
veg = smooth_field(24)
water = wet > 0.35
reeds = (wet > 0.05) & ~water
paddy = (veg > 0.2) & ~water & ~reeds
# Reflectance per class and band (B01..B12 without B10), loosely like real spectra.
spectra = {
    "water": [0.06, 0.05, 0.04, 0.03, 0.03, 0.02, 0.02, 0.02, 0.02, 0.01, 0.01, 0.01],
    "reeds": [0.04, 0.05, 0.08, 0.05, 0.12, 0.28, 0.33, 0.36, 0.37, 0.30, 0.18, 0.09],
    "paddy": [0.05, 0.06, 0.09, 0.07, 0.14, 0.25, 0.29, 0.31, 0.32, 0.26, 0.20, 0.12],
    "dry": [0.08, 0.10, 0.14, 0.18, 0.20, 0.22, 0.24, 0.26, 0.27, 0.25, 0.32, 0.26],
}
classes = np.where(water, 0, np.where(reeds, 1, np.where(paddy, 2, 3)))
table = np.array([spectra[k] for k in ("water", "reeds", "paddy", "dry")])
drv = gdal.GetDriverByName("GTiff")
ds = drv.Create(path, size, size, 12, gdal.GDT_UInt16,
                ["TILED=YES", "COMPRESS=DEFLATE", "BLOCKXSIZE=256", "BLOCKYSIZE=256"])
ds.SetGeoTransform((612000.0, 10.0, 0.0, 5041000.0, 0.0, -10.0))
srs = osr.SpatialReference(); srs.ImportFromEPSG(32632); ds.SetProjection(srs.ExportToWkt())
ds.SetMetadataItem("ACQUISITION_DATE", "2026-06-14")
names = ["B01", "B02", "B03", "B04", "B05", "B06", "B07", "B08", "B8A", "B09", "B11", "B12"]
for b in range(12):
    refl = table[classes, b] * (1 + 0.08 * veg) + rng.normal(0, 0.004, (size, size))
    dn = np.clip(refl * 10000, 1, 65534).astype(np.uint16)
    dn[:6, :40] = 0  # a strip of no data along the scene edge
    band = ds.GetRasterBand(b + 1)
    band.SetDescription(names[b]); band.SetNoDataValue(0); band.WriteArray(dn)
ds = None
print("demo scene:", path)
