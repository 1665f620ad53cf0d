"""Small real GeoTIFFs for tinct's integration and reference tests, written with
Debian's GDAL bindings: textured fields (so phase correlation and resampling have
something to see), with nodata, any type, CRS and pixel size."""
import numpy as np
from osgeo import gdal, osr

GDAL_TYPES = {"uint8": gdal.GDT_Byte, "uint16": gdal.GDT_UInt16, "float32": gdal.GDT_Float32}


def texture(height, width, seed, scale=6.0):
    """Smooth random texture in [0, 1] (sum of Gaussian-filtered noise at two scales)."""
    from scipy import ndimage
    rng = np.random.default_rng(seed)
    fine = ndimage.gaussian_filter(rng.normal(size=(height, width)), scale / 3)
    coarse = ndimage.gaussian_filter(rng.normal(size=(height, width)), scale * 2)
    field = fine / fine.std() + 2 * coarse / coarse.std()
    return (field - field.min()) / (field.max() - field.min())


def write(path, bands, origin=(500000.0, 5300000.0), pixel=10.0, epsg=32632, nodata=None,
          dtype="uint16", names=None, tiled=False, metadata=None):
    """Writes `bands` (list of 2-D arrays) as one GeoTIFF; returns the path."""
    height, width = bands[0].shape
    options = ["TILED=YES", "COMPRESS=DEFLATE"] if tiled else []
    ds = gdal.GetDriverByName("GTiff").Create(str(path), width, height, len(bands), GDAL_TYPES[dtype], options)
    ds.SetGeoTransform((origin[0], pixel, 0.0, origin[1], 0.0, -pixel))
    if epsg:
        srs = osr.SpatialReference()
        srs.ImportFromEPSG(epsg)
        ds.SetProjection(srs.ExportToWkt())
    for i, values in enumerate(bands):
        band = ds.GetRasterBand(i + 1)
        if nodata is not None:
            band.SetNoDataValue(nodata)
        if names:
            band.SetDescription(names[i])
        band.WriteArray(values)
    for key, value in (metadata or {}).items():
        ds.SetMetadataItem(key, value)
    ds = None
    return str(path)


# Test sensors: (name, centre nm, width nm) at 10 m; DN scale 0.0001, nodata 0.
VISIBLE_NIR_SWIR = [("blue", 490, 65), ("green", 560, 35), ("red", 665, 30), ("nir", 842, 115),
                    ("swir", 1610, 90)]


def write_profile(folder, name, bands=VISIBLE_NIR_SWIR):
    """A sensor profile file `name`.yaml for tests; returns its file name."""
    rows = "\n".join(f"  - {{name: {b}, centre_nm: {c}, width_nm: {w}, resolution: 10}}" for b, c, w in bands)
    import os
    with open(os.path.join(folder, f"{name}.yaml"), "w") as f:
        f.write(f"config: sensor\nname: {name}\nreference_resolution: 10\nnodata: 0\nscale: 0.0001\nbands:\n{rows}\n")
    return f"{name}.yaml"


class Checks:
    """Counts checks and prints the closing line ctest logs: 'N passed, M failed'."""

    def __init__(self):
        self.passed = 0
        self.failed = 0

    def check(self, condition, message):
        if condition:
            self.passed += 1
        else:
            self.failed += 1
            print("FAIL:", message)

    def finish(self):
        print(f"{self.passed} passed, {self.failed} failed")
        raise SystemExit(1 if self.failed else 0)
