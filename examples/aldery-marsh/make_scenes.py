"""Writes the demo scenes of tinct's invented scenario: two Sentinel-2-like L2A
acquisitions (14 June and 19 August 2026) over the imaginary Marsh of Aldery, a
wetland with reed beds, rice paddies and dry fields (UTM 32N). Each scene is a
12-band uint16 stack at 10 m (nodata 0) with a 20 m scene-classification mask
whose cloud (9) and shadow (3) patches tinct drops. Invented data for the demo only.

Also writes sites.csv: invented, dated larval-survey sites (breeding / non_breeding).

usage: make_scenes.py OUTPUT_FOLDER [SIZE]"""
import os
import sys

import numpy as np
from osgeo import gdal, osr
from scipy import ndimage

out = sys.argv[1]
size = int(sys.argv[2]) if len(sys.argv) > 2 else 768
os.makedirs(out, exist_ok=True)
rng = np.random.default_rng(20261201)
NAMES = ["B01", "B02", "B03", "B04", "B05", "B06", "B07", "B08", "B8A", "B09", "B11", "B12"]
# Reflectance per land cover and band, loosely like published spectra of each cover.
SPECTRA = {
    "water": [0.06, 0.05, 0.04, 0.03, 0.03, 0.02, 0.02, 0.02, 0.02, 0.01, 0.01, 0.01],
    "reeds": [0.04, 0.05, 0.08, 0.05, 0.12, 0.28, 0.33, 0.36, 0.37, 0.30, 0.18, 0.09],
    "paddy": [0.05, 0.06, 0.09, 0.07, 0.14, 0.25, 0.29, 0.31, 0.32, 0.26, 0.20, 0.12],
    "dry": [0.08, 0.10, 0.14, 0.18, 0.20, 0.22, 0.24, 0.26, 0.27, 0.25, 0.32, 0.26],
}
TABLE = np.array([SPECTRA[k] for k in ("water", "reeds", "paddy", "dry")])


def smooth(sigma):
    field = ndimage.gaussian_filter(rng.normal(size=(size, size)), sigma)
    return field / field.std()


def georeference(ds, pixel):
    ds.SetGeoTransform((612000.0, pixel, 0.0, 5041000.0, 0.0, -pixel))
    srs = osr.SpatialReference()
    srs.ImportFromEPSG(32632)
    ds.SetProjection(srs.ExportToWkt())


wetness = smooth(40)
fields = smooth(12)
sites = []
for date, flood in (("2026-06-14", 0.4), ("2026-08-19", -0.2)):
    wet = wetness + flood
    water = wet > 1.0
    reeds = (wet > 0.3) & ~water
    paddy = (fields > 0.6) & ~water & ~reeds
    cover = np.where(water, 0, np.where(reeds, 1, np.where(paddy, 2, 3)))
    texture = smooth(2)
    stack = os.path.join(out, f"aldery-{date}.tif")
    ds = gdal.GetDriverByName("GTiff").Create(stack, size, size, 12, gdal.GDT_UInt16,
                                              ["TILED=YES", "COMPRESS=DEFLATE"])
    georeference(ds, 10.0)
    ds.SetMetadataItem("ACQUISITION_DATE", date)
    for b in range(12):
        reflectance = TABLE[cover, b] * (1 + 0.06 * texture) + rng.normal(0, 0.003, (size, size))
        dn = np.clip(reflectance * 10000, 1, 65534).astype(np.uint16)
        dn[:4, :] = 0  # a strip of no data along the northern edge
        band = ds.GetRasterBand(b + 1)
        band.SetDescription(NAMES[b])
        band.SetNoDataValue(0)
        band.WriteArray(dn)
    ds = None
    # Scene classification at 20 m: vegetation 4, bare 5, water 6, one cloud (9) with its shadow (3).
    half = size // 2
    scl = np.where(cover[::2, ::2] == 0, 6, np.where(cover[::2, ::2] == 3, 5, 4)).astype(np.uint8)
    yy, xx = np.mgrid[0:half, 0:half]
    cloud = (yy - half * 0.3) ** 2 + (xx - half * 0.7) ** 2 < (half * 0.08) ** 2
    scl[cloud] = 9
    scl[np.roll(np.roll(cloud, 12, axis=0), -12, axis=1) & ~cloud] = 3
    ds = gdal.GetDriverByName("GTiff").Create(os.path.join(out, f"aldery-{date}-scl.tif"), half, half, 1,
                                              gdal.GDT_Byte)
    georeference(ds, 20.0)
    ds.GetRasterBand(1).WriteArray(scl)
    ds = None
    print("demo scene:", stack)
    # Invented larval-survey sites visited within a week of the acquisition: breeding
    # habitat where the survey found larvae (flooded reed beds and paddies), none on dry fields.
    site_rng = np.random.default_rng(len(sites) + 7)
    for _ in range(90):
        row, col = site_rng.integers(24, size - 24, 2)
        patch = cover[row - 3:row + 4, col - 3:col + 4]
        if patch.min() != patch.max() or patch[0, 0] == 0:
            continue  # mixed ground or open water: surveys sample the edges elsewhere
        habitat = "breeding" if patch[0, 0] in (1, 2) else "non_breeding"
        x, y = 612000.0 + (col + 0.5) * 10, 5041000.0 - (row + 0.5) * 10
        day = int(date[-2:]) + int(site_rng.integers(-5, 6))
        sites.append((f"AL-{len(sites):03d}", x, y, f"{date[:8]}{day:02d}", habitat))
with open(os.path.join(out, "sites.csv"), "w") as f:
    f.write("site,x,y,visited,habitat\n")
    for site in sites:
        f.write("%s,%.1f,%.1f,%s,%s\n" % site)
print("demo sites:", len(sites))
