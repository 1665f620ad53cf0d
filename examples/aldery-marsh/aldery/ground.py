"""The invented ground of Aldery on a 5 m grid, fixed through the season: terrain
height, one land-cover class per cell, field parcels with their crops and dates,
villages and roads, and the hedges, ditches and farm tracks along parcel edges as
shares of a cell (so edges make mixed pixels). What changes with the date (water
level, growth) is in season.py."""
import numpy as np

from . import scenario
from .fields import smooth_field

CLASSES = ["open_water", "reed_marsh", "rice", "pasture", "cropland", "woodland", "settlement"]
OPEN_WATER, REED_MARSH, RICE, PASTURE, CROPLAND, WOODLAND, SETTLEMENT = range(7)
FARMLAND = (RICE, PASTURE, CROPLAND)
LAGOON_TOP, MARSH_TOP = -0.2, 0.5  # metres above the lagoon's datum

# Terrain quantiles -> heights (m): about 10 % lagoon, 14 % marsh, the rest farmland
# rising to woods on the higher ground in the north-west.
TERRAIN_QUANTILES = [0.0, 0.10, 0.24, 0.55, 0.85, 1.0]
TERRAIN_HEIGHTS = [-1.5, LAGOON_TOP, MARSH_TOP, 1.5, 3.0, 6.0]

# Edge features: share of parcel edges, half width in metres.
EDGE_KINDS = {"hedge": (0.22, 2.5), "ditch": (0.38, 1.5), "track": (0.06, 2.0)}
VILLAGE_CELLS = ["garden", "street", "roof_tile", "roof_grey"]


class Parcels:
    """Field parcels: strips across a rotated, gently warped frame, cut into
    fields of random length; distances of each cell to its four edges."""

    def __init__(self, rng, x, y, shape):
        angle = 0.32
        u = x * np.cos(angle) + y * np.sin(angle) + 25.0 * smooth_field(rng, shape, 150)
        v = -x * np.sin(angle) + y * np.cos(angle) + 25.0 * smooth_field(rng, shape, 150)
        u0, u1, v0, v1 = u.min() - 1, u.max() + 1, v.min() - 1, v.max() + 1
        widths = np.clip(rng.lognormal(np.log(120), 0.35, 400), 50, 300)
        edges_u = u0 + np.concatenate([[0], np.cumsum(widths)])
        edges_u = edges_u[: np.searchsorted(edges_u, u1) + 1]
        strips = len(edges_u) - 1
        lengths = np.clip(rng.lognormal(np.log(220), 0.45, (strips, 400)), 80, 600)
        starts = v0 - rng.uniform(0, 300, (strips, 1))
        edges_v = starts + np.concatenate([np.zeros((strips, 1)), np.cumsum(lengths, axis=1)], axis=1)
        per_strip = int(max(np.searchsorted(row, v1) for row in edges_v)) + 2
        edges_v = edges_v[:, :per_strip]
        span = (v1 - v0) + 10 * 600.0
        i = np.clip(np.searchsorted(edges_u, u, side="right") - 1, 0, strips - 1)
        flat = (edges_v + np.arange(strips)[:, None] * span).ravel()
        key = v + i * span
        jf = np.searchsorted(flat, key, side="right") - 1
        j = jf - i * per_strip
        self.id = (i * per_strip + j).astype(np.int32)
        self.count = strips * per_strip
        # Distances to the left, right, lower and upper edge, and each edge's id.
        self.distances = [u - edges_u[i], edges_u[i + 1] - u, key - flat[jf], flat[jf + 1] - key]
        n_u = len(edges_u)
        self.edge_ids = [i, i + 1, n_u + jf, n_u + jf + 1]
        self.edge_count = n_u + len(flat) + 1


def coverage(distance, half_width):
    """Share of a 5 m cell within `half_width` of a line at `distance` from its centre."""
    return np.clip((half_width - distance) / scenario.CELL + 0.5, 0, 1).astype(np.float32)


def quantile_heights(raw):
    levels = np.quantile(raw, TERRAIN_QUANTILES)
    return np.interp(raw, levels, TERRAIN_HEIGHTS).astype(np.float32)


def segment_distance(x, y, a, b):
    (ax, ay), (bx, by) = a, b
    dx, dy = bx - ax, by - ay
    t = np.clip(((x - ax) * dx + (y - ay) * dy) / (dx * dx + dy * dy), 0, 1)
    return np.hypot(x - ax - t * dx, y - ay - t * dy)


class Ground:
    def __init__(self, size, seed):
        rng = np.random.default_rng(seed)
        self.size = size
        n = size.pixels * 2  # 5 m cells
        self.shape = (n, n)
        cols, rows = np.meshgrid(np.arange(n, dtype=np.float32), np.arange(n, dtype=np.float32))
        # Metres east and north of the district's upper-left corner (cell centres).
        self.x = (cols + 0.5) * scenario.CELL
        self.y = -(rows + 0.5) * scenario.CELL
        extent = n * scenario.CELL
        # Height: a slope down to the south-east, hills and hollows at 2 km and 400 m,
        # and a micro-relief at about 30 m that makes pools, islands and wet hollows.
        slope = 1.4 * (1 - self.x / extent) + 1.4 * (1 + self.y / extent)
        raw = slope + smooth_field(rng, self.shape, 400) + 0.35 * smooth_field(rng, self.shape, 80)
        self.terrain = quantile_heights(raw)
        self.elevation = self.terrain + 0.12 * smooth_field(rng, self.shape, 6)
        # Textures that vary within a cover: canopy (7.5 m), patches (40 m), fields (150 m), water (500 m).
        self.tex_fine = smooth_field(rng, self.shape, 1.5)
        self.tex_mid = smooth_field(rng, self.shape, 8)
        self.tex_field = smooth_field(rng, self.shape, 30)
        self.turbidity = smooth_field(rng, self.shape, 100)
        self.algae = smooth_field(rng, self.shape, 60)
        self.cls = np.full(self.shape, CROPLAND, np.uint8)
        self._classes(rng)
        self._overlays(rng)
        self.attributes = self._parcel_attributes(rng)

    def _classes(self, rng):
        e = self.elevation
        self.parcels = Parcels(rng, self.x, self.y, self.shape)
        mean_height = (np.bincount(self.parcels.id.ravel(), self.terrain.ravel(), self.parcels.count) /
                       np.maximum(np.bincount(self.parcels.id.ravel(), minlength=self.parcels.count), 1))
        # Land use per parcel, by its mean height: rice low down, woods high up.
        draw = rng.uniform(size=self.parcels.count)
        use = np.where(mean_height < 1.2,
                       np.select([draw < 0.55, draw < 0.85], [RICE, PASTURE], CROPLAND),
                       np.where(mean_height < 2.5,
                                np.select([draw < 0.15, draw < 0.40, draw < 0.95], [RICE, PASTURE, CROPLAND],
                                          WOODLAND),
                                np.select([draw < 0.20, draw < 0.70], [PASTURE, CROPLAND], WOODLAND)))
        self.parcel_use = use.astype(np.uint8)
        self.cls[:] = self.parcel_use[self.parcels.id]
        forest = (smooth_field(rng, self.shape, 120) > 1.0) & (self.terrain > 1.8)
        self.cls[forest] = WOODLAND
        self.village, self.village_cell, centres = self._villages(rng)
        self.cls[self.village] = SETTLEMENT
        self.cls[e < MARSH_TOP] = REED_MARSH
        self.cls[e < LAGOON_TOP] = OPEN_WATER
        self.road = self._roads(centres)

    def _villages(self, rng):
        count = self.size.villages
        candidates = np.flatnonzero(((self.terrain > 1.2) & (self.terrain < 4.0)).ravel())
        centres = []
        for _ in range(2000):
            if len(centres) == count or len(candidates) == 0:
                break
            c = candidates[rng.integers(len(candidates))]
            x, y = self.x.flat[c], self.y.flat[c]
            if all(np.hypot(x - a, y - b) > 1800 for a, b in centres):
                centres.append((x, y))
        mask = np.zeros(self.shape, bool)
        cell = np.zeros(self.shape, np.uint8)
        wobble = smooth_field(rng, self.shape, 30)
        half = 420 * 1.25 / scenario.CELL
        for x0, y0 in centres:
            radius = rng.uniform(220, 420)
            c0, r0 = x0 / scenario.CELL, -y0 / scenario.CELL
            box = (slice(max(0, int(r0 - half)), int(r0 + half) + 1), slice(max(0, int(c0 - half)), int(c0 + half) + 1))
            x, y = self.x[box] - x0, self.y[box] - y0
            inside = np.hypot(x, y) < radius * (1 + 0.2 * wobble[box])
            angle = rng.uniform(0, np.pi / 2)
            u = x * np.cos(angle) + y * np.sin(angle) + 1000
            v = -x * np.sin(angle) + y * np.cos(angle) + 1000
            bi, bj = np.floor(u / 25).astype(np.int64), np.floor(v / 25).astype(np.int64)
            pu, pv = u - 25 * bi, v - 25 * bj
            plot = ((bi * 73856093) ^ (bj * 19349663) ^ int(rng.integers(1 << 30))) % 1000 / 1000.0
            street = ((bi % 4 == 0) & (pu < 7)) | ((bj % 3 == 0) & (pv < 7))
            building = (pu >= 5) & (pu < 18) & (pv >= 6) & (pv < 19) & (plot < 0.75) & ~street
            kind = np.where(street, 1, np.where(building, np.where(plot < 0.45, 2, 3), 0))
            cell[box][inside] = kind[inside]
            mask[box] |= inside
        return mask, cell, centres

    def _roads(self, centres):
        road = np.zeros(self.shape, np.float32)
        for a, b in zip(centres, centres[1:]):
            road = np.maximum(road, coverage(segment_distance(self.x, self.y, a, b), 3.5))
        road[self.cls == OPEN_WATER] = 0
        return road

    def _overlays(self, rng):
        """Hedges, ditches and tracks on parcel edges of farmland (no ditches uphill)."""
        p = self.parcels
        draw = rng.uniform(size=p.edge_count)
        kinds, lower = {}, 0.0
        for name, (share, _) in EDGE_KINDS.items():
            kinds[name] = (draw >= lower) & (draw < lower + share)
            lower += share
        farm = np.isin(self.cls, FARMLAND)
        for name, (_, half) in EDGE_KINDS.items():
            share = np.zeros(self.shape, np.float32)
            for distance, edge in zip(p.distances, p.edge_ids):
                share = np.maximum(share, np.where(kinds[name][edge], coverage(distance, half), 0))
            share[~farm] = 0
            setattr(self, name, share)
        self.ditch[self.terrain > 2.5] = 0
        total = self.hedge + self.ditch + self.track
        over = total > 1
        for name in EDGE_KINDS:
            getattr(self, name)[over] /= total[over]
        del p.distances, p.edge_ids  # only needed here (about 300 MB at the demo's size)

    def _parcel_attributes(self, rng):
        """Crops and their dates (day of year) per parcel."""
        n = self.parcels.count
        u = lambda low, high: rng.uniform(low, high, n).astype(np.float32)  # noqa: E731
        dry_seeded = rng.uniform(size=n) < 0.3
        crop = rng.choice(4, n, p=[0.4, 0.35, 0.15, 0.1])  # wheat, maize, soy, fallow
        return {
            "vigour": u(0.8, 1.05),
            "soil_light": u(0.8, 1.0),
            "rice_dry_seeded": dry_seeded,
            "rice_sow": u(118, 132),
            "rice_flood": np.where(dry_seeded, u(150, 162), u(105, 128)),
            "rice_drain": u(218, 236),
            "mow": np.where(rng.uniform(size=n) < 0.65, u(150, 180), 9999.0).astype(np.float32),
            "crop": crop,
            "sow": np.where(crop == 1, u(105, 125), u(125, 145)),
            "harvest": u(183, 200),
            "plough": np.where(rng.uniform(size=n) < 0.5, u(10, 40), 9999.0).astype(np.float32),
        }

    def class_shares(self):
        counts = np.bincount(self.cls.ravel(), minlength=len(CLASSES))
        return {name: float(c) / self.cls.size for name, c in zip(CLASSES, counts)}
