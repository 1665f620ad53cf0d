"""What a Sentinel-2 L2A product would make of the invented ground on one date:
haze, clouds and their shadows, thin cirrus, the swath edge, each band averaged to
its native 10, 20 or 60 m pixels, noise, DN = reflectance x 10000 + 1000 (processing
baseline 04.00 and later), and a 20 m scene classification with the codes of ESA's
Level-2A product (0 no data ... 11 snow; from memory)."""
import numpy as np

from . import scenario, spectra
from .fields import block_any, block_mean, smooth_field

BOA_OFFSET = 1000     # DN of zero reflectance from processing baseline 04.00 (from memory)
QUANTIFICATION = 10000
NODATA = 0
CLOUD_HEIGHT = 1200.0  # metres


def shadow_shift(acquisition):
    """Cells (rows south, cols east) from a cloud's shadow to the cloud: the sun
    stands in the south-east, so shadows fall to the north-west."""
    reach = CLOUD_HEIGHT / np.tan(np.radians(acquisition.sun_elevation)) / scenario.CELL
    azimuth = np.radians(scenario.SUN_AZIMUTH)
    return int(round(-np.cos(azimuth) * reach)), int(round(np.sin(azimuth) * reach))


def sky(rng, shape, acquisition):
    """Cloud opacity, cloud-shadow strength and cirrus opacity on the 5 m grid."""
    dr, dc = shadow_shift(acquisition)
    padded = (shape[0] + abs(dr), shape[1] + abs(dc))
    billows = (0.6 * smooth_field(rng, padded, 110) + 0.3 * smooth_field(rng, padded, 30) +
               0.1 * smooth_field(rng, padded, 8))
    if acquisition.cloud > 0:
        threshold = np.quantile(billows, 1 - acquisition.cloud)
        opacity = np.clip((billows - threshold) / 0.35, 0, 1) ** 0.8
    else:
        opacity = np.zeros(padded, np.float32)
    cloud = opacity[:shape[0], :shape[1]]
    shadow = opacity[dr:dr + shape[0], dc:dc + shape[1]] * (1 - cloud)
    cirrus = np.zeros(shape, np.float32)
    if acquisition.cirrus > 0:
        veil = smooth_field(rng, shape, 200)
        cirrus = 0.12 * np.clip((veil - np.quantile(veil, 1 - acquisition.cirrus)) / 0.5, 0, 1)
    return cloud.astype(np.float32), shadow.astype(np.float32), cirrus.astype(np.float32)


def outside_swath(shape, acquisition):
    """The western corner lies outside the swath on some dates."""
    if not acquisition.swath_edge:
        return np.zeros(shape, bool)
    rows, cols = np.indices(shape)
    return cols + 0.8 * rows < 0.22 * shape[1]


def observe(rng, reflectance, acquisition):
    """Adds haze, cloud and shadow to the ground reflectance (bands, H, W) on the
    5 m grid, in place; returns the sky layers for the classification band."""
    shape = reflectance.shape[1:]
    haze = np.clip(0.5 + 0.5 * smooth_field(rng, shape, 400), 0, None) * rng.uniform(0.004, 0.012)
    cloud, shadow, cirrus = sky(rng, shape, acquisition)
    veil = np.clip(cloud + cirrus, 0, 1)
    for b in range(len(spectra.BANDS)):
        band = reflectance[b]
        band += spectra.HAZE[b] * haze
        band *= 1 - shadow * (1 - spectra.SHADOW_LEFT[b])
        band *= 1 - veil
        band += veil * spectra.CLOUD[b]
    return cloud, shadow, cirrus


def band_dn(rng, reflectance, band, outside):
    """One band at its native resolution as DN (uint16), with noise and no data."""
    factor = spectra.RESOLUTION[band] // int(scenario.CELL)
    b = spectra.BANDS.index(band)
    values = block_mean(reflectance[b], factor)
    values = values + rng.normal(0, spectra.NOISE[b], values.shape)
    dn = np.clip(np.rint(values * QUANTIFICATION + BOA_OFFSET), 1, 65534).astype(np.uint16)
    dn[block_any(outside, factor)] = NODATA
    return dn


def classification(reflectance, cloud, shadow, cirrus, outside):
    """A 20 m scene-classification band as the L2A processor might draw it, from
    what it sees: clouds by opacity (the mask misses thin cloud edges), shadows,
    then vegetation, water, dark and bare pixels by simple spectral tests."""
    at20 = lambda layer: block_mean(layer, 4)  # noqa: E731
    blue, green, red, nir, swir = (at20(reflectance[spectra.BANDS.index(b)]) for b in ("B02", "B03", "B04", "B8A", "B11"))
    ndvi = (nir - red) / np.maximum(nir + red, 1e-6)
    ndwi = (green - nir) / np.maximum(green + nir, 1e-6)
    opacity, shade, veil = at20(cloud), at20(shadow), at20(cirrus)
    scl = np.full(ndvi.shape, 5, np.uint8)                      # not vegetated
    scl[(ndvi > 0.25) & (ndvi <= 0.35)] = 7                     # unclassified
    scl[ndvi > 0.35] = 4                                        # vegetation
    scl[((blue + green + red) / 3 < 0.03) & (ndwi <= 0)] = 2    # dark area
    scl[(ndwi > 0.05) | ((nir < 0.05) & (swir < 0.05))] = 6     # water
    scl[shade > 0.3] = 3                                        # cloud shadow
    scl[veil > 0.06] = 10                                       # thin cirrus
    scl[opacity > 0.2] = 8                                      # cloud, medium probability
    scl[opacity > 0.5] = 9                                      # cloud, high probability
    scl[block_any(outside, 4)] = 0                              # no data
    return scl
