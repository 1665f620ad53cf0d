"""Reads a tinct chip store with numpy alone (memory maps), as FORMAT.md in
data_prep/chips describes it, so tests can compare its contents with GDAL and
numpy computations independently of tinct's own reader."""
import csv
import os

import numpy as np
import yaml


class Store:
    def __init__(self, path):
        self.path = path
        with open(os.path.join(path, "manifest.yaml")) as f:
            self.manifest = yaml.safe_load(f)
        m = self.manifest
        self.count = int(m["chip_count"])
        self.size = int(m["chip_size"])
        self.band_names = [b["name"] for b in m["bands"]]
        storage = m["bands"][0]["storage"]
        dtype = np.dtype("<u2") if storage == "uint16" else np.dtype("<f4")
        shape = (self.count, len(self.band_names), self.size, self.size)
        self.bands = np.memmap(os.path.join(path, "bands.bin"), dtype=dtype, mode="r", shape=shape)
        self.valid = np.memmap(os.path.join(path, "valid.bin"), dtype=np.uint8, mode="r",
                               shape=(self.count, self.size, self.size))
        colour = os.path.join(path, "colour.bin")
        self.colour = (np.memmap(colour, dtype=np.uint8, mode="r", shape=(self.count, 3, self.size, self.size))
                       if os.path.exists(colour) else None)
        with open(os.path.join(path, "chips.csv"), newline="") as f:
            self.chips = list(csv.DictReader(f))
