"""Reference values for tinct's colour module, written into $TINCT_TEST_DATA.

lab_reference.csv: 2000 random sRGB colours (numpy default_rng, seed 0) and scikit-image's
rgb2lab (0.19, D65 2 degree). percentile_reference.csv: random uint8, uint16 and float64
arrays, stored value by value so the C++ side rebuilds them, and np.percentile (default
"linear" method) of each. Run with Debian's /usr/bin/python3 (numpy 1.24, skimage 0.19)."""
import os

import numpy as np
import skimage
from skimage.color import rgb2lab

PERCENTS = [0, 2, 5, 25, 33.3, 50, 75, 95, 98, 99.9, 100]


def write_lab(path, rng):
    rgb = rng.random((2000, 3))
    lab = rgb2lab(rgb.reshape(-1, 1, 3)).reshape(-1, 3)
    with open(path, "w") as out:
        out.write("r,g,b,L,a,b_star\n")
        for c, l in zip(rgb, lab):
            out.write(",".join(repr(float(v)) for v in (*c, *l)) + "\n")


def percentile_arrays(rng):
    return [
        ("byte_1", "uint8", rng.integers(0, 256, 1, dtype=np.uint8)),
        ("byte_2", "uint8", rng.integers(0, 256, 2, dtype=np.uint8)),
        ("byte_7", "uint8", rng.integers(0, 256, 7, dtype=np.uint8)),
        ("byte_1000", "uint8", rng.integers(0, 256, 1000, dtype=np.uint8)),
        ("byte_ties", "uint8", rng.integers(0, 10, 5001, dtype=np.uint8)),
        ("byte_50000", "uint8", rng.integers(0, 256, 50000, dtype=np.uint8)),
        ("uint16_full", "uint16", rng.integers(0, 65536, 1000, dtype=np.uint16)),
        ("uint16_reflectance", "uint16", rng.integers(0, 12000, 20001, dtype=np.uint16)),
        ("uint16_skewed", "uint16",
         np.minimum(rng.gamma(2.0, 800.0, 9999), 65535).astype(np.uint16)),
        ("float_unit", "float64", rng.random(3000)),
    ]


def write_percentiles(path, rng):
    with open(path, "w") as out:
        out.write("kind,array,dtype,key,value\n")
        for name, dtype, values in percentile_arrays(rng):
            assert values.dtype == np.dtype(dtype)
            for i, v in enumerate(values):
                out.write(f"value,{name},{dtype},{i},{v.item()!r}\n")
            for p in PERCENTS:
                out.write(f"percentile,{name},{dtype},{p!r},{float(np.percentile(values, p))!r}\n")


def main():
    folder = os.environ["TINCT_TEST_DATA"]
    os.makedirs(folder, exist_ok=True)
    print(f"numpy {np.__version__}, scikit-image {skimage.__version__}")
    write_lab(os.path.join(folder, "lab_reference.csv"), np.random.default_rng(0))
    write_percentiles(os.path.join(folder, "percentile_reference.csv"), np.random.default_rng(1))
    print(f"wrote lab_reference.csv and percentile_reference.csv into {folder}")


if __name__ == "__main__":
    main()
