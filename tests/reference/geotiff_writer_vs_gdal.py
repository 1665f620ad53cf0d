"""tinct's GeoTIFF writer (data_prep/raster/geotiff_writer) read back by GDAL
itself: `gdalinfo -json` (Debian gdal-bin 3.6) must show the CRS, geotransform,
band descriptions, colour table, nodata, overviews and metadata items that were
asked for, the pixels read back by GDAL's Python bindings must equal the values
written (exactly, NaN where NaN was written), and the file must pass GDAL's COG
validator (osgeo_utils.samples.validate_cloud_optimized_geotiff.validate, shipped
by Debian's python3-gdal, with full_check=True). Rows are written in blocks that
do not line up with the tiles. Bad specs and an unfinished writer leave nothing."""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
import yaml
from osgeo import gdal, osr
from osgeo_utils.samples.validate_cloud_optimized_geotiff import validate

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks  # noqa: E402

TOOL = sys.argv[1]
checks = Checks()
gdal.UseExceptions()

NUMPY_TYPES = {"uint8": np.uint8, "int16": np.int16, "uint16": np.uint16, "float32": np.float32}
GDAL_NAMES = {"uint8": "Byte", "int16": "Int16", "uint16": "UInt16", "float32": "Float32"}


def wkt_of(epsg):
    srs = osr.SpatialReference()
    srs.ImportFromEPSG(epsg)
    return srs.ExportToWkt()


def run_tool(work, name, spec, values):
    raw = os.path.join(work, name + ".raw")
    values.astype(values.dtype.newbyteorder("<")).tofile(raw)
    spec = dict(spec, values=raw, output=os.path.join(work, name + ".tif"))
    spec_file = os.path.join(work, name + ".yaml")
    with open(spec_file, "w") as f:
        yaml.safe_dump(spec, f)
    return subprocess.run([TOOL, spec_file], capture_output=True, text=True), spec["output"]


def check_file(label, path, spec, values):
    info = json.loads(subprocess.run(["gdalinfo", "-json", path], check=True, capture_output=True,
                                     text=True).stdout)
    written = osr.SpatialReference()
    written.ImportFromWkt(info["coordinateSystem"]["wkt"])
    asked = osr.SpatialReference()
    asked.ImportFromWkt(spec["crs_wkt"])
    checks.check(written.IsSame(asked) == 1, f"{label}: gdalinfo's CRS is the one asked for")
    checks.check(info["geoTransform"] == spec["geotransform"],
                 f"{label}: geotransform {info['geoTransform']} == {spec['geotransform']}")
    checks.check(info["size"] == [spec["width"], spec["height"]], f"{label}: size {info['size']}")
    structure = info["metadata"].get("IMAGE_STRUCTURE", {})
    checks.check(structure.get("LAYOUT") == "COG", f"{label}: gdalinfo reports LAYOUT=COG: {structure}")
    checks.check(structure.get("COMPRESSION") == spec.get("compression", "DEFLATE"),
                 f"{label}: compression {structure}")
    for key, value in spec.get("metadata", {}).items():
        checks.check(info["metadata"].get("", {}).get(key) == value, f"{label}: dataset metadata {key}")
    bands = info["bands"]
    checks.check(len(bands) == len(spec["bands"]), f"{label}: {len(bands)} bands")
    block = spec["block_size"]
    for i, (band, asked_band) in enumerate(zip(bands, spec["bands"])):
        where = f"{label} band {i + 1}"
        checks.check(band["type"] == GDAL_NAMES[spec["type"]], f"{where}: type {band['type']}")
        checks.check(band["block"] == [block, block], f"{where}: tiles {band['block']}")
        checks.check(band.get("description") == asked_band["description"], f"{where}: description")
        for key, value in asked_band.get("metadata", {}).items():
            checks.check(band.get("metadata", {}).get("", {}).get(key) == value, f"{where}: metadata {key}")
        nodata = band.get("noDataValue")
        if "nodata" not in spec:
            checks.check(nodata is None, f"{where}: no nodata")
        elif np.isnan(spec["nodata"]):
            checks.check(nodata == "NaN", f"{where}: nodata NaN, got {nodata}")
        else:
            checks.check(nodata == spec["nodata"], f"{where}: nodata {nodata} == {spec['nodata']}")
        # GDAL's COG driver (OVERVIEWS=AUTO) halves the size until one tile holds it; the
        # rounding of odd sizes is GDAL's, so each level may differ from size / 2^k by one pixel.
        overviews = [o["size"] for o in band.get("overviews", [])]
        levels, largest = 0, max(spec["width"], spec["height"])
        while largest > block:
            largest = (largest + 1) // 2
            levels += 1
        halves = all(abs(size[d] - [spec["width"], spec["height"]][d] / 2 ** (k + 1)) <= 1
                     for k, size in enumerate(overviews) for d in (0, 1))
        checks.check(len(overviews) == levels > 0 and halves, f"{where}: {levels} overviews by halving: {overviews}")
    table = spec.get("colour_table", [])
    if table:
        entries = bands[0].get("colorTable", {}).get("entries", [])
        opaque = [entry + [255] for entry in table]  # a GeoTIFF palette has no alpha
        checks.check(entries[:len(table)] == opaque, f"{label}: colour table {entries[:len(table)]} == {opaque}")
        checks.check(bands[0]["colorInterpretation"] == "Palette", f"{label}: band 1 is paletted")

    ds = gdal.Open(path)
    read = ds.ReadAsArray()
    read = read.reshape(values.shape)
    same = np.array_equal(read, values, equal_nan=True) if read.dtype.kind == "f" else np.array_equal(read, values)
    checks.check(read.dtype == values.dtype and same, f"{label}: pixels read back exactly")
    warnings, errors, _ = validate(ds, check_tiled=True, full_check=True)
    checks.check(not errors, f"{label}: GDAL's COG validator: {errors} {warnings}")
    ds = None


def base_spec(kind, bands, width=300, height=200, block=64):
    return {"width": width, "height": height, "type": kind, "bands": bands, "crs_wkt": wkt_of(32632),
            "geotransform": [500000.0, 20.0, 0.0, 5300000.0, 0.0, -20.0], "block_size": block,
            "rows_per_write": 37}


def leftovers(work, name):
    return [n for n in os.listdir(work) if name in n and not n.endswith((".raw", ".yaml"))]


with tempfile.TemporaryDirectory() as work:
    rows, cols = np.mgrid[0:200, 0:300]

    # A class map: uint8, a colour table on band 1, nodata where there is no data.
    classes = ((rows // 9 + cols // 13) % 4).astype(np.uint8)
    classes[150:, 250:] = 255
    spec = base_spec("uint8", [{"description": "class", "metadata": {"CLASSES": "water,reed,dry,urban"}}])
    spec.update(nodata=255.0, colour_table=[[0, 0, 255], [0, 160, 0], [210, 180, 60], [128, 128, 128]],
                metadata={"TINCT_PRODUCT": "class map", "TINCT_RUN": "runs/aldery-finetune"},
                overview_resampling="MODE")
    run, path = run_tool(work, "classes", spec, classes[None])
    checks.check(run.returncode == 0, f"class map written: {run.stderr}")
    if run.returncode == 0:
        check_file("uint8 class map", path, spec, classes[None])

    # Class probabilities: float32, three bands, NaN as nodata, averaged overviews.
    probabilities = np.stack([np.sin(rows / 17.0) ** 2, np.cos(cols / 23.0) ** 2,
                              (rows * cols % 1000) / 999.0]).astype(np.float32)
    probabilities[:, :5, :] = np.nan
    spec = base_spec("float32", [{"description": f"p({name})", "metadata": {"CLASS": name}}
                                 for name in ("water", "reed", "dry")])
    spec.update(nodata=float("nan"), overview_resampling="AVERAGE", metadata={"TINCT_PRODUCT": "probabilities"})
    run, path = run_tool(work, "probabilities", spec, probabilities)
    checks.check(run.returncode == 0, f"probabilities written: {run.stderr}")
    if run.returncode == 0:
        check_file("float32 probabilities", path, spec, probabilities)

    # Signed and unsigned 16-bit bands, LZW, a larger tile than the raster needs.
    signed = ((rows - 100) * (cols - 150)).clip(-32000, 32000).astype(np.int16)[None]
    spec = base_spec("int16", [{"description": "difference"}], block=128)
    spec.update(nodata=-32768.0, compression="LZW")
    run, path = run_tool(work, "signed", spec, signed)
    checks.check(run.returncode == 0, f"int16 written: {run.stderr}")
    if run.returncode == 0:
        check_file("int16", path, spec, signed)
    counts = np.stack([rows * 300 + cols, 65535 - rows]).astype(np.uint16)
    spec = base_spec("uint16", [{"description": "count"}, {"description": "rank"}])
    spec.update(colour_table=[[0, 0, 0], [255, 255, 255]])
    run, path = run_tool(work, "counts", spec, counts)
    checks.check(run.returncode == 0, f"uint16 written: {run.stderr}")
    if run.returncode == 0:
        check_file("uint16", path, spec, counts)

    # Bad specs are refused (exit 2, the field named) before any file is made.
    bad = base_spec("float32", [{"description": "x"}])
    bad["colour_table"] = [[0, 0, 0]]
    run, _ = run_tool(work, "bad-table", bad, np.zeros((1, 200, 300), np.float32))
    checks.check(run.returncode == 2 and "a colour table needs uint8 or uint16 values" in run.stderr,
                 f"colour table on float32 refused: {run.returncode} {run.stderr}")
    bad = base_spec("uint8", [{"description": "x"}], block=100)
    run, _ = run_tool(work, "bad-block", bad, np.zeros((1, 200, 300), np.uint8))
    checks.check(run.returncode == 2 and "block_size must be a power of two" in run.stderr,
                 f"block size 100 refused: {run.stderr}")
    bad = base_spec("uint8", [{"description": "x"}])
    bad["nodata"] = 300.0
    run, _ = run_tool(work, "bad-nodata", bad, np.zeros((1, 200, 300), np.uint8))
    checks.check(run.returncode == 2 and "nodata 300" in run.stderr, f"nodata 300 on uint8 refused: {run.stderr}")
    for name in ("bad-table", "bad-block", "bad-nodata"):
        checks.check(not leftovers(work, name), f"{name}: nothing written: {leftovers(work, name)}")

    # A writer destroyed before finish() removes its temporaries and writes no target.
    spec = base_spec("uint8", [{"description": "x"}])
    spec["skip_finish"] = True
    run, _ = run_tool(work, "unfinished", spec, classes[None])
    checks.check(run.returncode == 0 and not leftovers(work, "unfinished"),
                 f"an unfinished writer leaves nothing: {leftovers(work, 'unfinished')} {run.stderr}")

checks.finish()
