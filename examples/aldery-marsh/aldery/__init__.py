"""The invented Marsh of Aldery: a generator of Sentinel-2-like scenes, an
orthophoto and dated field labels over an imaginary wetland district, for tinct's
demo and tests. Everything it writes is invented; see ../README.md."""
