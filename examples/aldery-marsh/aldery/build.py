"""Writes the whole invented scenario into a folder (OUT.partial/, renamed when
complete): per date a folder of 12 band files at their native resolutions and a
scene-classification file, the orthophoto, the two label files, the answer key
(truth/) and generated.json, which lists what was written."""
import json
import os
import shutil
import time

import numpy as np

from . import habitat_rule, ortho, rasters, scenario, season, sensor, sites, spectra
from .fields import block_mean, day_of_year
from .ground import CLASSES, Ground

STRIP = 96  # 5 m rows rendered at a time (bounded memory, cache-friendly gathers)
VERSION = 1


def render(ground, day):
    """Ground reflectance (bands, H, W), shallow water share and vegetation cover on the 5 m grid."""
    h, w = ground.shape
    reflectance = np.empty((len(spectra.BANDS), h, w), np.float32)
    pond = np.empty((h, w), np.float32)
    veg = np.empty((h, w), np.float32)
    for r in range(0, h, STRIP):
        rows = slice(r, min(h, r + STRIP))
        idx = np.arange(rows.start * w, rows.stop * w)
        refl, p, v = season.surface(ground, idx, day)
        reflectance[:, rows] = refl.reshape(len(spectra.BANDS), -1, w)
        pond[rows], veg[rows] = p.reshape(-1, w), v.reshape(-1, w)
    return reflectance, pond, veg


def write_scene(folder, rng, reflectance, acquisition):
    """The 12 bands as DN at native resolution and the SCL band; returns cloud and no-data shares."""
    os.makedirs(folder)
    outside = sensor.outside_swath(reflectance.shape[1:], acquisition)
    cloud, shadow, cirrus = sensor.observe(rng, reflectance, acquisition)
    metadata = {"ACQUISITION_DATE": acquisition.date, "QUANTIFICATION_VALUE": sensor.QUANTIFICATION,
                "BOA_ADD_OFFSET": -sensor.BOA_OFFSET, "DESCRIPTION": "invented Sentinel-2-like L2A band"}
    for band in spectra.BANDS:
        dn = sensor.band_dn(rng, reflectance, band, outside)
        rasters.write(os.path.join(folder, f"{band}.tif"), [dn], rasters.scene_geotransform(spectra.RESOLUTION[band]),
                      scenario.EPSG, "uint16", nodata=sensor.NODATA, names=[band], metadata=metadata)
    scl = sensor.classification(reflectance, cloud, shadow, cirrus, outside)
    rasters.write(os.path.join(folder, "SCL.tif"), [scl], rasters.scene_geotransform(20), scenario.EPSG, "uint8",
                  names=["SCL"], metadata={"ACQUISITION_DATE": acquisition.date})
    counts = np.bincount(scl.ravel(), minlength=12) / scl.size
    return {"scl_shares": {str(k): round(float(v), 4) for k, v in enumerate(counts) if v > 0},
            "cloud_share": round(float((cloud > 0.2).mean()), 4), "nodata_share": round(float(outside.mean()), 4)}


def landcover_truth(ground):
    """The most common class of each 10 m pixel's four cells (ties: the lower code), coded 1..7."""
    h, w = ground.shape
    counts = np.stack([block_mean((ground.cls == k).astype(np.float32), 2) for k in range(len(CLASSES))])
    return (np.argmax(counts, axis=0) + 1).astype(np.uint8)


def build(out, size, seed, log=print):
    start = time.time()
    partial = out.rstrip("/") + ".partial"
    shutil.rmtree(partial, ignore_errors=True)
    os.makedirs(os.path.join(partial, "truth"))
    ground = Ground(size, seed)
    log(f"ground: {ground.shape[1]} x {ground.shape[0]} cells of 5 m, classes " +
        ", ".join(f"{k} {v:.1%}" for k, v in ground.class_shares().items()))
    rng = np.random.default_rng(seed + 1)
    summary = {"version": VERSION, "size": size.name, "seed": seed, "epsg": scenario.EPSG, "scenes": [],
               "invented": "every raster, label and place in this folder is invented for tinct's demo"}
    legend = ",".join(f"{k + 1}:{name}" for k, name in enumerate(CLASSES))
    rasters.write(os.path.join(partial, "truth", "landcover.tif"), [landcover_truth(ground)],
                  rasters.scene_geotransform(10), scenario.EPSG, "uint8", nodata=0, names=["landcover"],
                  metadata={"CLASSES": legend})
    for acquisition in scenario.ACQUISITIONS:
        day = day_of_year(acquisition.date)
        reflectance, pond, veg = render(ground, day)
        if acquisition.date == scenario.ORTHO_DATE:
            rgb = reflectance[[spectra.BANDS.index(b) for b in ("B04", "B03", "B02")]].copy()
            summary["ortho"] = ortho.write(os.path.join(partial, f"ortho-{acquisition.date}.tif"), rgb, rng,
                                           acquisition.date)
            # The shift as tinct pair reports it: pixels of the 10 m grid, right and down.
            summary["ortho"].update(epsg=scenario.ORTHO_EPSG, offset_m_east_north=list(scenario.ORTHO_OFFSET),
                                    shift_px_right_down=[scenario.ORTHO_OFFSET[0] / 10, -scenario.ORTHO_OFFSET[1] / 10])
        breeding = block_mean(habitat_rule.breeding_map(pond, veg).astype(np.float32), 2) >= 0.5
        rasters.write(os.path.join(partial, "truth", f"breeding-{acquisition.date}.tif"), [breeding.astype(np.uint8)],
                      rasters.scene_geotransform(10), scenario.EPSG, "uint8", names=["breeding"],
                      metadata={"ACQUISITION_DATE": acquisition.date})
        scene = write_scene(os.path.join(partial, acquisition.date), rng, reflectance, acquisition)
        scene.update(date=acquisition.date, breeding_share=round(float(breeding.mean()), 4))
        summary["scenes"].append(scene)
        log(f"scene {acquisition.date}: cloud {scene['cloud_share']:.1%}, no data {scene['nodata_share']:.1%}, "
            f"breeding ground (rule) {scene['breeding_share']:.1%}")
    visits = sites.habitat_visits(ground, rng, size)
    points = sites.landcover_points(ground, rng, size)
    sites.write_geojson(os.path.join(partial, "sites-habitat.geojson"), visits, ["site", "visit", "date", "habitat"],
                        "habitat")
    sites.write_geojson(os.path.join(partial, "sites-landcover.geojson"), points, ["point", "date", "cover"],
                        "landcover")
    x0, y0 = scenario.ORIGIN
    for row in visits + points:
        row["easting"], row["northing"] = x0 + row["x"], y0 + row["y"]
    sites.write_csv(os.path.join(partial, "truth", "habitat-visits.csv"), visits,
                    ["site", "visit", "date", "habitat", "rule", "water_m2", "easting", "northing"])
    sites.write_csv(os.path.join(partial, "truth", "landcover-points.csv"), points,
                    ["point", "date", "cover", "truth", "easting", "northing"])
    summary["habitat"] = {"sites": len({v["site"] for v in visits}), "visits": len(visits),
                          "recorded": _count(visits, "habitat"), "rule": _count(visits, "rule"),
                          "flipped": sum(v["habitat"] != v["rule"] for v in visits)}
    summary["landcover"] = {"points": len(points), "recorded": _count(points, "cover"),
                            "misnamed": sum(p["cover"] != p["truth"] for p in points)}
    summary["class_shares"] = {k: round(v, 4) for k, v in ground.class_shares().items()}
    summary["seconds"] = round(time.time() - start, 1)
    with open(os.path.join(partial, "generated.json"), "w") as f:
        json.dump(summary, f, indent=1)
    shutil.rmtree(out, ignore_errors=True)
    os.rename(partial, out)
    log(f"habitat visits {summary['habitat']}; land-cover points {summary['landcover']}")
    return summary


def _count(rows, key):
    values = [r[key] for r in rows]
    return {v: values.count(v) for v in sorted(set(values))}
