"""The fixed facts of the invented scenario: where the district lies, its size,
the acquisition dates with their cloud cover, the orthophoto's date, CRS and its
known offset, and how many labels the field teams collected. Two sizes: the demo
(11.52 km square) and a small one for tests (1.92 km square)."""
from dataclasses import dataclass

EPSG = 32632                   # WGS 84 / UTM zone 32N
ORIGIN = (612000.0, 5041000.0)  # upper-left corner of the district (an arbitrary spot)
CELL = 5.0                     # metres: the invented ground is drawn on a 5 m grid
YEAR = 2026

# Acquisition date, cloud cover share, thin cirrus share, swath edge (no data in the
# western corner), sun elevation (degrees) for the cloud shadow offset.
@dataclass(frozen=True)
class Acquisition:
    date: str
    cloud: float
    cirrus: float
    swath_edge: bool
    sun_elevation: float


ACQUISITIONS = [
    Acquisition("2026-04-18", 0.22, 0.0, False, 52.0),   # spring flood, showers
    Acquisition("2026-05-23", 0.08, 0.25, False, 62.0),  # rice fields flooded
    Acquisition("2026-06-14", 0.04, 0.0, False, 65.0),   # the orthophoto's date
    Acquisition("2026-07-19", 0.12, 0.0, True, 63.0),    # summer, edge of the swath
    Acquisition("2026-08-23", 0.02, 0.0, False, 55.0),   # late-summer dry
]
SUN_AZIMUTH = 150.0  # degrees from north: mid-morning overpass (common practice)

ORTHO_DATE = "2026-06-14"
ORTHO_EPSG = 3035              # ETRS89 / LAEA Europe: another CRS than the scenes'
ORTHO_PIXEL = 5.0              # metres
# The orthophoto's georeferencing is off by this much: a feature on the ground at
# (x, y) appears in it at (x + dx, y + dy) in scene coordinates (metres, east and north).
ORTHO_OFFSET = (5.0, -5.0)


@dataclass(frozen=True)
class Size:
    name: str
    pixels: int            # scene width and height at 10 m (a multiple of 6 for the 60 m bands)
    villages: int
    habitat_sites: int     # trap sites; each is visited one to three times
    landcover_per_class: int


SIZES = {
    "demo": Size("demo", 1152, 6, 130, 32),
    "small": Size("small", 192, 1, 24, 4),
}

# Site visits and land-cover survey: the seasons they span (day of year).
VISIT_SEASON = (100, 243)      # 10 April to 31 August
LANDCOVER_SEASON = (135, 227)  # 15 May to 15 August
