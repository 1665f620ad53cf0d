"""Our rule for breeding habitat at a trap site (invented for the demo, not an
entomological standard): on the visit's date, at least MIN_AREA of shallow
standing water lies within REACH of the trap, counting only water with vegetation
(reeds, grass, crops, trees, ditch banks) within NEAR of it, since larvae shelter
at vegetated edges and not on open, wind-swept water."""
import numpy as np

from . import scenario, season
from .fields import fft_size

REACH = 50.0      # metres around the trap
NEAR = 10.0       # metres from water to vegetation
MIN_AREA = 100.0  # square metres of such water
VEG_MIN = 0.3     # share of a cell's cover that makes it vegetated


def _disc(radius_cells):
    r = int(np.floor(radius_cells))
    offsets = [(dr, dc) for dr in range(-r, r + 1) for dc in range(-r, r + 1) if dr * dr + dc * dc <= radius_cells ** 2]
    return offsets, r


def breeding_water(pond, veg):
    """Share of each cell (2-D arrays) that is shallow standing water near vegetation."""
    offsets, r = _disc(NEAR / scenario.CELL)
    vegetated = np.pad(veg > VEG_MIN, r)
    near = np.zeros(pond.shape, bool)
    h, w = pond.shape
    for dr, dc in offsets:
        near |= vegetated[r + dr:r + dr + h, r + dc:r + dc + w]
    return pond * near


def site_state(ground, x, y, day):
    """Area (m^2) of breeding water within REACH of map point (x, y) (metres from the
    district's corner, y negative southwards) on day `day`, and whether it is breeding."""
    cell = scenario.CELL
    col, row = x / cell - 0.5, -y / cell - 0.5
    half = int(np.ceil((REACH + NEAR) / cell)) + 1
    r0, c0 = int(round(row)) - half, int(round(col)) - half
    n = 2 * half + 1
    rows = np.clip(np.arange(r0, r0 + n), 0, ground.shape[0] - 1)
    cols = np.clip(np.arange(c0, c0 + n), 0, ground.shape[1] - 1)
    idx = (rows[:, None] * ground.shape[1] + cols[None, :]).ravel()
    _, pond, veg = season.surface(ground, idx, day)
    water = breeding_water(pond.reshape(n, n), veg.reshape(n, n))
    rr, cc = np.meshgrid(np.arange(r0, r0 + n), np.arange(c0, c0 + n), indexing="ij")
    within = np.hypot(rr - row, cc - col) * cell <= REACH
    area = float(water[within].sum() * cell * cell)
    return area, area >= MIN_AREA


def breeding_map(pond, veg):
    """The rule at every 5 m cell centre (2-D bool), by FFT convolution with the reach disc."""
    water = breeding_water(pond, veg)
    offsets, r = _disc(REACH / scenario.CELL)
    h, w = water.shape
    shape = (fft_size(h + 2 * r), fft_size(w + 2 * r))  # zero padding: no wrap-around
    kernel = np.zeros(shape, np.float32)
    for dr, dc in offsets:
        kernel[dr % shape[0], dc % shape[1]] = 1
    area = np.fft.irfft2(np.fft.rfft2(water, s=shape) * np.fft.rfft2(kernel), s=shape)[:h, :w]
    return area * scenario.CELL ** 2 >= MIN_AREA - 1e-3
