"""The ground of Aldery on one day of the year: the water level of lagoon and
marsh, the growth of reeds, rice, grass, crops and leaves, flooded and drained
fields, wet and dry ditches. For any set of 5 m cells it gives the surface
reflectance (a linear mix of the components in spectra.py, common practice), the
share of each cell under shallow standing water, and its vegetation cover."""
import numpy as np

from . import spectra
from .fields import ramp
from .ground import (CROPLAND, OPEN_WATER, PASTURE, REED_MARSH, RICE, SETTLEMENT, WOODLAND)

# Water level of lagoon and marsh (m above the datum) through the year: high after
# the spring rains, falling through the summer.
LEVEL_DAYS = [60, 110, 140, 165, 200, 235, 280]
LEVEL_METRES = [0.55, 0.50, 0.38, 0.22, 0.02, -0.12, -0.15]
SHALLOW = 0.8  # metres: deeper open water is not counted as breeding water


def water_level(t):
    return float(np.interp(t, LEVEL_DAYS, LEVEL_METRES))


def leaf_out(t):
    """Share of the full leaf cover of deciduous trees and hedges."""
    return 0.35 + 0.6 * float(ramp(t, 95, 130))


class Cells:
    """The static layers of the ground at the chosen cells (flat indices)."""

    def __init__(self, ground, idx):
        self.ground = ground
        for name in ("elevation", "tex_fine", "tex_mid", "tex_field", "turbidity", "algae", "hedge", "ditch",
                     "track", "road"):
            setattr(self, name, getattr(ground, name).ravel()[idx])
        self.parcel = ground.parcels.id.ravel()[idx]
        self.village_cell = ground.village_cell.ravel()[idx]

    def take(self, sel):
        part = Cells.__new__(Cells)
        for key, value in self.__dict__.items():
            part.__dict__[key] = value[sel] if isinstance(value, np.ndarray) else value
        return part

    def attribute(self, name):
        return self.ground.attributes[name][self.parcel]


def _water_mix(c, t, share):
    """Open water split into clear, turbid and algal water; algae grow in summer."""
    algal = np.clip(0.25 + 0.25 * c.algae, 0, 1) * (0.3 + 0.7 * ramp(t, 150, 215))
    turbid = np.clip(0.35 + 0.25 * c.turbidity, 0, 1) * (1 - algal)
    return {"water_algal": share * algal, "water_turbid": share * turbid,
            "water_clear": share * (1 - algal - turbid)}


def _add(fractions, more):
    for key, value in more.items():
        fractions[key] = fractions.get(key, 0) + value
    return fractions


def open_water(c, t):
    depth = water_level(t) - c.elevation
    exposed = depth <= 0
    bottom = np.where(exposed, 1.0, np.clip(1 - depth / 0.35, 0, 0.6))  # the bed shows through shallow water
    f = _water_mix(c, t, 1 - bottom)
    _add(f, {"wet_soil": bottom * np.where(exposed, 0.85, 1.0), "green": bottom * np.where(exposed, 0.15, 0.0)})
    pond = ((depth > 0) & (depth < SHALLOW)).astype(np.float32)
    return f, pond, np.where(exposed, 0.15, 0.0)


def reed_marsh(c, t):
    depth = water_level(t) - c.elevation
    pools = np.clip((c.tex_field + 1.3) / 0.4, 0, 1)  # open pools where the field texture is low
    density = np.clip(0.78 + 0.12 * c.tex_mid + 0.08 * c.tex_fine, 0, 1) * pools
    canopy = density * (0.7 + 0.25 * ramp(t, 100, 180))
    green = (0.12 + 0.8 * ramp(t, 105, 175)) * (1 - 0.25 * ramp(t, 225, 260))
    f = {"reed_green": canopy * green * 0.9, "reed_dead": canopy * (1 - green) * 0.9, "shade": canopy * 0.1}
    below = 1 - canopy
    wet, mud = depth > 0, depth > -0.4
    _add(f, _water_mix(c, t, below * wet))
    _add(f, {"wet_soil": below * (~wet & mud), "soil": below * ~mud})
    pond = (wet & (depth < SHALLOW)).astype(np.float32)
    return f, pond, canopy


def rice(c, t):
    flood, drain = c.attribute("rice_flood"), c.attribute("rice_drain")
    dry = c.attribute("rice_dry_seeded")
    emerge = np.where(dry, c.attribute("rice_sow") + 12, flood + 14)
    grow = ramp(t, emerge, emerge + 75) ** 1.3
    canopy = np.clip(0.92 * c.attribute("vigour") * grow * (1 + 0.08 * c.tex_mid + 0.05 * c.tex_fine), 0, 0.97)
    ripe = ramp(t, drain + 5, drain + 35)
    f = {"green": canopy * (1 - 0.75 * ripe), "straw": canopy * 0.75 * ripe}
    below = 1 - canopy
    flooded = (t >= flood) & (t < drain)
    algal = ramp(t, flood + 20, flood + 60) * 0.6
    _add(f, {"water_turbid": below * flooded * (1 - algal), "water_algal": below * flooded * algal})
    before = t < flood
    moist = np.where(before, np.where(dry, 0.3, 0.5), 0.7 - 0.4 * ramp(t, drain, drain + 25))
    _add(f, {"wet_soil": below * ~flooded * moist, "soil": below * ~flooded * (1 - moist)})
    return f, flooded.astype(np.float32), canopy


def pasture(c, t):
    level = water_level(t)
    green = c.attribute("vigour") * (0.88 - 0.40 * ramp(t, 185, 240))  # summer drought browns the sward
    mow = c.attribute("mow")
    cut = (t >= mow) & (t < mow + 40)
    green = np.where(cut, green * (0.35 + 0.65 * ramp(t, mow + 3, mow + 35)), green)
    cover = np.clip(0.93 + 0.05 * c.tex_fine, 0, 1)
    flood = np.clip((level - c.elevation) / 0.08, 0, 1)  # hollows below the water level flood
    seen = cover * (1 - 0.45 * flood)
    f = {"green": seen * green / 0.93, "straw": seen * (1 - green / 0.93)}
    below = 1 - seen
    wet = np.clip(0.8 - 0.6 * ramp(t, 130, 200) + 0.3 * (c.elevation < level + 0.3), 0, 1)
    _add(f, _water_mix(c, t, below * flood))
    _add(f, {"wet_soil": below * (1 - flood) * wet, "soil": below * (1 - flood) * (1 - wet)})
    return f, flood.astype(np.float32), cover


def cropland(c, t):
    crop, sow = c.attribute("crop"), c.attribute("sow")
    harvest = c.attribute("harvest")
    plough = harvest + c.attribute("plough")
    vigour = c.attribute("vigour") * (1 + 0.06 * c.tex_mid + 0.04 * c.tex_fine)
    # wheat: green in spring, ripe in June, stubble after harvest, some ploughed
    wheat_green = 0.85 * vigour * (1 - ramp(t, 160, 185))
    wheat_straw = np.where(t < harvest, 0.85 * ramp(t, 160, 185), 0.5 * (t < plough))
    # maize and soy: bare until sown, canopy closing about 75 days later
    row_green = np.minimum(0.95, vigour * ramp(t, sow + 10, sow + 80)) * (1 - 0.4 * ramp(t, 235, 260))
    fallow_green = np.clip(0.45 + 0.15 * c.tex_mid, 0, 1) * (1 - 0.4 * ramp(t, 190, 240))
    green = np.select([crop == 0, crop == 3], [wheat_green, fallow_green], row_green)
    straw = np.select([crop == 0, crop == 3], [wheat_straw, 0.2 * np.ones_like(green)], 0 * green)
    straw = np.minimum(straw, 1 - green)
    bare = 1 - green - straw
    light = c.attribute("soil_light")
    wet = 0.4 * (1 - ramp(t, 115, 140)) + 0.1
    f = {"green": green, "straw": straw, "wet_soil": bare * wet, "soil": bare * (1 - wet) * light,
         "shade": bare * (1 - wet) * (1 - light)}
    return f, np.zeros_like(green), green + straw


def woodland(c, t):
    level = water_level(t)
    gap = np.clip((-c.tex_fine - 1.0) / 0.3, 0, 1)  # canopy gaps show the grass below
    shade = np.clip(0.18 + 0.08 * c.tex_fine, 0.05, 0.35)
    leaf = leaf_out(t)
    crown = 1 - gap
    f = {"tree": crown * leaf * (1 - shade), "straw": crown * (1 - leaf) * (1 - shade) * 0.6,
         "soil": crown * (1 - leaf) * (1 - shade) * 0.4, "shade": crown * shade}
    # Wet woods: pools under the trees in spring, seen only through the gaps.
    pools = np.clip((level + 0.15 - c.elevation) / 0.1, 0, 1)
    _add(f, {"green": gap * (1 - pools) * 0.85, "soil": gap * (1 - pools) * 0.15})
    _add(f, _water_mix(c, t, gap * pools))
    return f, pools * 0.5, np.ones_like(gap)


def settlement(c, t):
    kind = c.village_cell  # 0 garden, 1 street, 2 tile roof, 3 grey roof
    garden = (kind == 0).astype(np.float32)
    lawn = 0.5 + 0.15 * ramp(t, 100, 140) - 0.15 * ramp(t, 190, 235)
    f = {"green": garden * lawn * 0.75, "tree": garden * 0.25 * leaf_out(t),
         "soil": garden * (1 - lawn * 0.75 - 0.25 * leaf_out(t)),
         "asphalt": (kind == 1) * 0.85, "roof_tile": (kind == 2) * 0.88, "roof_grey": (kind == 3) * 0.88}
    _add(f, {"shade": (kind == 1) * 0.05 + (kind >= 2) * 0.12, "tree": (kind == 1) * 0.1})
    return f, np.zeros_like(garden), garden * (lawn * 0.75 + 0.25) + (kind == 1) * 0.1


BY_CLASS = {OPEN_WATER: open_water, REED_MARSH: reed_marsh, RICE: rice, PASTURE: pasture, CROPLAND: cropland,
            WOODLAND: woodland, SETTLEMENT: settlement}


def _edges(c, t, reflectance, pond, veg, rice_flooded):
    """Hedges, ditches, tracks and roads laid over the cells' own cover (only the
    cells that have any)."""
    total = c.hedge + c.ditch + c.track + c.road
    at = np.flatnonzero(total > 0)
    if len(at) == 0:
        return reflectance, pond, veg
    e = c.take(at)
    n = len(at)
    share = np.minimum(total[at], 1)
    scale = share / total[at]
    leaf = leaf_out(t)
    hedge = spectra.mix({"tree": 0.8 * leaf, "straw": 0.8 * (1 - leaf), "shade": 0.2}, 1)
    # Ditches about a metre deep hold water while the level is high, or while they feed a flooded paddy.
    wet = (e.elevation < water_level(t) + 1.2) | rice_flooded[at]
    bank = 0.45 * (1 - 0.3 * float(ramp(t, 200, 240)))
    ditch_wet = spectra.mix(_add(_water_mix(e, t, 0.55), {"green": bank, "straw": 0.45 - bank}), n)
    ditch_dry = spectra.mix({"wet_soil": 0.3, "green": 0.4, "straw": 0.3}, 1)
    ditch = np.where(wet[None, :], ditch_wet, ditch_dry)
    track = spectra.mix({"soil": 0.6, "straw": 0.2, "green": 0.2}, 1)
    road = spectra.mix({"asphalt": 0.9, "shade": 0.1}, 1)
    h, d, k, r = e.hedge * scale, e.ditch * scale, e.track * scale, e.road * scale
    reflectance[:, at] = reflectance[:, at] * (1 - share) + hedge * h + ditch * d + track * k + road * r
    pond[at] = pond[at] * (1 - share) + d * 0.55 * wet
    veg[at] = veg[at] * (1 - share) + h + d * 0.45 + k * 0.4
    return reflectance, pond, veg


def surface(ground, idx, t):
    """Reflectance (bands, n), shallow standing water share (n) and vegetation cover
    (n) of the cells `idx` (flat indices into the 5 m grid) on day of year `t`."""
    cls = ground.cls.ravel()[idx]
    order = np.argsort(cls, kind="stable")
    bounds = np.searchsorted(cls[order], np.arange(len(BY_CLASS) + 1))
    cells = Cells(ground, idx[order])
    n = len(idx)
    reflectance = np.zeros((len(spectra.BANDS), n), np.float32)
    pond = np.zeros(n, np.float32)
    veg = np.zeros(n, np.float32)
    rice_flooded = np.zeros(n, bool)
    for k, state in BY_CLASS.items():
        part = slice(bounds[k], bounds[k + 1])
        if part.start == part.stop:
            continue
        c = cells.take(part)
        fractions, pond[part], veg[part] = state(c, t)
        reflectance[:, part] = spectra.mix(fractions, part.stop - part.start)
        if k == RICE:
            rice_flooded[part] = (t >= c.attribute("rice_flood")) & (t < c.attribute("rice_drain"))
    reflectance, pond, veg = _edges(cells, t, reflectance, pond, veg, rice_flooded)
    back = np.empty_like(order)
    back[order] = np.arange(n)
    return reflectance[:, back], pond[back], veg[back]
