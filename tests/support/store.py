"""Reads a tinct chip store with numpy alone (memory maps), as FORMAT.md in
data_prep/chips describes it, so tests can compare its contents with GDAL and
numpy computations independently of tinct's own reader."""
import csv
import os

import numpy as np
import yaml
from osgeo import gdal, osr


class Store:
    def __init__(self, path):
        self.path = path
        with open(os.path.join(path, "manifest.yaml")) as f:
            self.manifest = yaml.safe_load(f)
        m = self.manifest
        self.count = int(m["chip_count"])
        self.size = int(m["chip_size"])
        self.band_names = [b["name"] for b in m["bands"]]
        storage = m["bands"][0]["storage"]
        dtype = np.dtype("<u2") if storage == "uint16" else np.dtype("<f4")
        shape = (self.count, len(self.band_names), self.size, self.size)
        self.bands = np.memmap(os.path.join(path, "bands.bin"), dtype=dtype, mode="r", shape=shape)
        self.valid = np.memmap(os.path.join(path, "valid.bin"), dtype=np.uint8, mode="r",
                               shape=(self.count, self.size, self.size))
        colour = os.path.join(path, "colour.bin")
        self.colour = (np.memmap(colour, dtype=np.uint8, mode="r", shape=(self.count, 3, self.size, self.size))
                       if os.path.exists(colour) else None)
        with open(os.path.join(path, "chips.csv"), newline="") as f:
            self.chips = list(csv.DictReader(f))


def grid_problems(store, raster_path):
    """How the store's CRS and pixel size differ from the raster's as GDAL reads them
    (an empty list when the manifest's crs and every scene's crs are GDAL's CRS, and
    pixel_size is GDAL's pixel size to 1e-6 of a pixel: the tolerance below which
    tinct takes a raster to lie on its grid and reads it without warping, so a file
    whose geotransform says 28.49999999927454 gives a 28.5 m store)."""
    ds = gdal.Open(raster_path)
    scene_crs = osr.SpatialReference()
    scene_crs.ImportFromWkt(ds.GetProjection())
    gt = ds.GetGeoTransform()
    problems = []
    for where, wkt in [("manifest crs", store.manifest["crs"])] + [
            (f"scene {s['id']} crs", s["crs"]) for s in store.manifest["scenes"]]:
        crs = osr.SpatialReference()
        if not wkt or crs.ImportFromWkt(wkt) != 0 or crs.IsSame(scene_crs) != 1:
            problems.append(f"{where} is not GDAL's CRS of {raster_path} ({scene_crs.GetName()})")
    pixel = float(store.manifest["pixel_size"])
    if not all(abs(pixel - abs(size)) <= 1e-6 * pixel for size in (gt[1], gt[5])):
        problems.append(f"pixel_size {pixel} differs from GDAL's geotransform {gt[1]}, {gt[5]}")
    return problems
