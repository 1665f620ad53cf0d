"""Writing the generator's GeoTIFFs with GDAL: single-band files on the scene's
grid at any pixel size, and RGB images in any CRS. Tiled, DEFLATE-compressed."""
from osgeo import gdal, osr

from . import scenario

gdal.UseExceptions()
TYPES = {"uint8": gdal.GDT_Byte, "uint16": gdal.GDT_UInt16}


def srs(epsg):
    ref = osr.SpatialReference()
    ref.ImportFromEPSG(epsg)
    ref.SetAxisMappingStrategy(osr.OAMS_TRADITIONAL_GIS_ORDER)
    return ref


def write(path, bands, geotransform, epsg, dtype, nodata=None, names=None, metadata=None, rgb=False):
    height, width = bands[0].shape
    options = ["TILED=YES", "COMPRESS=DEFLATE", "PREDICTOR=2", "ZLEVEL=1"] + (["PHOTOMETRIC=RGB"] if rgb else [])
    ds = gdal.GetDriverByName("GTiff").Create(str(path), width, height, len(bands), TYPES[dtype], options)
    ds.SetGeoTransform(geotransform)
    ds.SetProjection(srs(epsg).ExportToWkt())
    for key, value in (metadata or {}).items():
        ds.SetMetadataItem(key, str(value))
    for i, values in enumerate(bands):
        band = ds.GetRasterBand(i + 1)
        if nodata is not None:
            band.SetNoDataValue(nodata)
        if names:
            band.SetDescription(names[i])
        band.WriteArray(values)
    ds = None


def scene_geotransform(pixel):
    x0, y0 = scenario.ORIGIN
    return (x0, float(pixel), 0.0, y0, 0.0, -float(pixel))
